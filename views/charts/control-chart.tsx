/**
 * controlChart — a control chart for particle counts at one location and channel: one point per
 * subgroup (a sample or a period's samples), the centre line, the upper and lower control limits
 * (a step line: for a u or u′ chart they vary with each subgroup's air volume), the alert and action
 * levels, and the points a rule flagged, each marked with the rule's own shape and short mark.
 *
 * Chart kinds (NIST/SEMATECH e-Handbook of Statistical Methods, §6.3.3; Laney 2002, Quality
 * Engineering 14(4)): c — counts per subgroup of equal size, limits c̄ ± 3√c̄; u — counts per unit
 * volume, limits ū ± 3√(ū/nᵢ); u′ — Laney's u chart for overdispersed counts, limits
 * ū ± 3·σ_z·√(ū/nᵢ). The chart draws the limits it is given; it computes none.
 *
 * Lines are told apart by dash pattern and name as well as colour (greyscale print): centre solid,
 * control limits dotted, alert dashed, action dash-dot. Each flagging rule has a shape (triangle,
 * square, diamond, cross, inverted triangle, star) and its mark beside the point where there is room;
 * every point carries a <title> naming the rules that flagged it, and the legend names every rule.
 * A pure function of its input, returning SVG.
 */
import { scaleLinear, scaleUtc } from 'd3-scale';
import type { Child } from 'hono/jsx';
import { RuleMarker, RULE_SHAPES as SHAPES } from './rule-marker.tsx';
import {
  ASCENT_EM,
  ChartSvg,
  DESCENT_EM,
  FONT_PX,
  fitText,
  fmtNum,
  fmtUtcTick,
  innerBox,
  Legend,
  linearTicks,
  NoData,
  r,
  safeId,
  textWidth,
  X_AXIS_DEPTH,
  XAxis,
  YAxis,
  yAxisDepth,
} from './svg.tsx';
import { levelLabelGroups, spreadBaselines } from './trend.tsx';

export type ControlChartKind = 'c' | 'u' | 'u-prime';

export interface ControlChartRule {
  /** The rule's id in the data (e.g. "action-point"). */
  code: string;
  /** A short mark drawn beside a flagged point (one to three characters, e.g. "A"). */
  mark: string;
  /** The rule in words, for the legend (e.g. "one point above action"). */
  label: string;
}

export interface ControlChartPoint {
  /** Subgroup start, ms since the epoch (UTC). */
  tMs: number;
  /** The plotted statistic (count for a c chart, count per unit volume for u and u′); null: none usable. */
  value: number | null;
  /** This subgroup's control limits (null where the chart has none). */
  ucl: number | null;
  lcl: number | null;
  /** Codes of the rules that flagged this point (see `rules`). */
  flags: string[];
}

export interface ControlChartInput {
  title: string;
  kind: ControlChartKind;
  /** The y axis title, e.g. "particles ≥ 0.5 µm per m³". */
  yLabel: string;
  xLabel?: string;
  centre: number | null;
  points: ControlChartPoint[];
  alert?: number | null;
  action?: number | null;
  /** Every rule the points may name, in the order their shapes are assigned. */
  rules: ControlChartRule[];
  /** Said in place of the points when there are none. */
  emptyText?: string;
  id?: string;
  width?: number;
  height?: number;
}

/** The words for a chart kind, for the description and legend. */
export const CONTROL_CHART_KIND_NAMES: Record<ControlChartKind, string> = {
  c: 'c chart (counts)',
  u: 'u chart (counts per volume)',
  'u-prime': 'Laney u′ chart (overdispersed counts per volume)',
};

const LINES = {
  centre: { colour: '#1f6f8b', dash: undefined, w: 1.6 },
  limit: { colour: '#5d6472', dash: '2 3', w: 1.4 },
  alert: { colour: '#a8660b', dash: '6 4', w: 1.4 },
  action: { colour: '#b3261e', dash: '8 3 2 3', w: 1.6 },
} as const;

const LABEL_GAP = 5;
const CENTRE_BASELINE_PX = ((ASCENT_EM - DESCENT_EM) / 2) * FONT_PX;
const LEGEND_ROW = 16;
/** Above this many points, ordinary points are drawn as the line alone (flagged points keep their marker). */
const MAX_POINT_MARKS = 400;

export function controlChart(input: ControlChartInput) {
  const id = safeId(input.id ?? `cc-${input.title}`);
  const width = input.width ?? 760;
  const pts = input.points.filter((p) => Number.isFinite(p.tMs)).sort((a, b) => a.tMs - b.tMs);
  const values = pts.flatMap((p) => (p.value !== null && Number.isFinite(p.value) ? [p.value] : []));
  const shapeOf = new Map(input.rules.map((rule, i) => [rule.code, SHAPES[i % SHAPES.length]!]));
  const ruleOf = new Map(input.rules.map((rule) => [rule.code, rule]));
  const finite = (v: number | null | undefined): v is number => typeof v === 'number' && Number.isFinite(v);

  // The y range holds every point, limit and level.
  const top = Math.max(
    1e-12,
    ...values,
    ...pts.flatMap((p) => (finite(p.ucl) ? [p.ucl] : [])),
    finite(input.centre) ? input.centre : 0,
    finite(input.alert) ? input.alert : 0,
    finite(input.action) ? input.action : 0,
  );
  const y = scaleLinear()
    .domain([0, top * 1.08])
    .nice();
  const yTickValues = y.ticks(5);
  const yTicks0 = linearTicks(
    yTickValues,
    () => 0,
    (v) => fmtNum(v),
  );

  // Labels at the right end of the lines: centre, control limits (their last values), levels.
  const last = [...pts].reverse();
  const lastUcl = last.find((p) => finite(p.ucl))?.ucl ?? null;
  const lastLcl = last.find((p) => finite(p.lcl) && (p.lcl as number) > 0)?.lcl ?? null;
  const lineLabels = levelLabelGroups([
    ...(finite(input.centre)
      ? [{ kind: 'centre', value: input.centre, label: 'centre', colour: LINES.centre.colour }]
      : []),
    ...(finite(lastUcl) ? [{ kind: 'ucl', value: lastUcl, label: 'UCL', colour: LINES.limit.colour }] : []),
    ...(finite(lastLcl) ? [{ kind: 'lcl', value: lastLcl, label: 'LCL', colour: LINES.limit.colour }] : []),
    ...(finite(input.alert)
      ? [{ kind: 'alert', value: input.alert, label: 'alert', colour: LINES.alert.colour }]
      : []),
    ...(finite(input.action)
      ? [{ kind: 'action', value: input.action, label: 'action', colour: LINES.action.colour }]
      : []),
  ]);
  const rightDepth = Math.ceil(LABEL_GAP + Math.max(0, ...lineLabels.map((l) => textWidth(l.text))) + 4);

  // The legend: the lines, then every rule with its shape and mark.
  const legendEntries: { label: string; swatch: Child }[] = [
    {
      label: 'subgroup',
      swatch: <circle cx={7} cy={6} r="2.6" fill="#18202e" />,
    },
    ...(finite(input.centre)
      ? [
          {
            label: 'centre line',
            swatch: <line x1={0} x2={14} y1={6} y2={6} stroke={LINES.centre.colour} stroke-width="1.6" />,
          },
        ]
      : []),
    ...(pts.some((p) => finite(p.ucl))
      ? [
          {
            label: input.kind === 'c' ? 'control limits' : 'control limits (per volume)',
            swatch: (
              <line
                x1={0}
                x2={14}
                y1={6}
                y2={6}
                stroke={LINES.limit.colour}
                stroke-width="1.4"
                stroke-dasharray="2 3"
              />
            ),
          },
        ]
      : []),
    ...(finite(input.alert)
      ? [
          {
            label: 'alert level',
            swatch: (
              <line
                x1={0}
                x2={14}
                y1={6}
                y2={6}
                stroke={LINES.alert.colour}
                stroke-width="1.4"
                stroke-dasharray="6 4"
              />
            ),
          },
        ]
      : []),
    ...(finite(input.action)
      ? [
          {
            label: 'action level',
            swatch: (
              <line
                x1={0}
                x2={14}
                y1={6}
                y2={6}
                stroke={LINES.action.colour}
                stroke-width="1.6"
                stroke-dasharray="8 3 2 3"
              />
            ),
          },
        ]
      : []),
    ...input.rules.map((rule) => ({
      label: `${rule.mark}: ${rule.label}`,
      swatch: <RuleMarker shape={shapeOf.get(rule.code)!} x={7} y={6} cls="vc-flag-swatch" />,
    })),
  ];
  const plotLeft = Math.max(48, yAxisDepth(yTicks0, input.yLabel));
  const columns = Math.max(1, Math.min(3, Math.floor((width - plotLeft - 8) / 210)));
  const columnWidth = (width - plotLeft - 8) / columns;
  const legendRows = Math.ceil(legendEntries.length / columns);
  const plotHeight = 200;
  const margin = {
    top: 14,
    right: Math.max(16, rightDepth),
    bottom: X_AXIS_DEPTH + 10 + legendRows * LEGEND_ROW,
    left: plotLeft,
  };
  const height = input.height ?? margin.top + plotHeight + margin.bottom;
  const box = innerBox({ width, height, margin });
  y.range([box.y1, box.y0]);

  const t0 = pts.length ? pts[0]!.tMs : 0;
  const t1 = pts.length ? pts[pts.length - 1]!.tMs : 3_600_000;
  const pad = Math.max((t1 - t0) * 0.02, 60_000);
  const x = scaleUtc()
    .domain([new Date(t0 - pad), new Date(t1 + pad)])
    .range([box.x0, box.x1]);
  const span = t1 - t0 + 2 * pad;
  // As many time ticks as their labels leave room for (a gap of 8 px between neighbours).
  let xTicks: { at: number; label: string }[] = [];
  for (const n of [6, 5, 4, 3, 2]) {
    xTicks = x.ticks(n).map((d) => ({ at: r(x(d)), label: fmtUtcTick(d.getTime(), span) }));
    const fits = xTicks.every(
      (t, i) =>
        i === 0 || t.at - xTicks[i - 1]!.at >= (textWidth(t.label) + textWidth(xTicks[i - 1]!.label)) / 2 + 8,
    );
    if (fits) break;
  }
  const yTicks = linearTicks(
    yTickValues,
    (v) => y(v),
    (v) => fmtNum(v),
  );
  const yTop = y.domain()[1]!;
  const yc = (v: number) => r(y(Math.min(Math.max(v, 0), yTop)));

  // The points' line, broken where a subgroup has no usable value.
  const path: string[] = [];
  let pen = false;
  for (const p of pts) {
    if (!finite(p.value)) {
      pen = false;
      continue;
    }
    path.push(`${pen ? 'L' : 'M'}${r(x(p.tMs))},${yc(p.value)}`);
    pen = true;
  }
  // A step line through each subgroup's limit: the limit holds from halfway before to halfway after.
  // Runs of subgroups with the same limit (equal volumes) are drawn as one segment.
  const stepPath = (pick: (p: ControlChartPoint) => number | null): string => {
    const segs: { left: number; right: number; y: number }[] = [];
    let on = false;
    pts.forEach((p, i) => {
      const v = pick(p);
      if (!finite(v)) {
        on = false;
        return;
      }
      const left = i > 0 ? (x(pts[i - 1]!.tMs) + x(p.tMs)) / 2 : x(p.tMs);
      const right = i < pts.length - 1 ? (x(p.tMs) + x(pts[i + 1]!.tMs)) / 2 : x(p.tMs);
      const y = yc(v);
      const last = segs[segs.length - 1];
      if (on && last && last.y === y) last.right = right;
      else segs.push({ left, right, y, ...(on ? {} : { move: true }) });
      on = true;
    });
    return segs.map((g) => `${'move' in g ? 'M' : 'L'}${r(g.left)},${g.y} L${r(g.right)},${g.y}`).join(' ');
  };
  const uclPath = stepPath((p) => p.ucl);
  const lclPath = stepPath((p) => (finite(p.lcl) && p.lcl > 0 ? p.lcl : null));

  // Marks beside flagged points, where they fit inside the plot and clear every mark placed before.
  const placed: { x0: number; x1: number; y0: number; y1: number }[] = [];
  const flagged = pts.filter((p) => finite(p.value) && p.flags.length > 0);
  const marks: { x: number; y: number; text: string }[] = [];
  for (const p of flagged) {
    const text = p.flags.map((f) => ruleOf.get(f)?.mark ?? f).join(' ');
    const w = textWidth(text, FONT_PX, true);
    const cx = x(p.tMs);
    const base = y(p.value as number) - 9;
    const b = {
      x0: cx - w / 2,
      x1: cx + w / 2,
      y0: base - ASCENT_EM * FONT_PX,
      y1: base + DESCENT_EM * FONT_PX,
    };
    if (b.x0 < box.x0 || b.x1 > box.x1 || b.y0 < 0 || b.y1 > box.y1) continue;
    if (placed.some((q) => b.x0 < q.x1 + 1 && b.x1 > q.x0 - 1 && b.y0 < q.y1 && b.y1 > q.y0)) continue;
    placed.push(b);
    marks.push({ x: cx, y: base, text });
  }

  const labelBaselines = spreadBaselines(
    lineLabels.map((l) => y(Math.min(l.value, yTop)) + CENTRE_BASELINE_PX),
    ASCENT_EM * FONT_PX + 1,
    box.y1 + CENTRE_BASELINE_PX,
  );
  const flaggedCount = flagged.length;
  const when = (ms: number) => `${new Date(ms).toISOString().slice(0, 16).replace('T', ' ')} UTC`;
  const desc =
    values.length === 0
      ? `${CONTROL_CHART_KIND_NAMES[input.kind]}: ${input.emptyText ?? 'no subgroup'}.`
      : `${CONTROL_CHART_KIND_NAMES[input.kind]}, ${pts.length} subgroups from ${when(t0)} to ${when(t1)}` +
        (finite(input.centre) ? `, centre ${fmtNum(input.centre)}` : '') +
        (finite(input.alert) ? `, alert ${fmtNum(input.alert)}` : '') +
        (finite(input.action) ? `, action ${fmtNum(input.action)}` : '') +
        `; ${flaggedCount} flagged.`;
  const pointTitle = (p: ControlChartPoint) =>
    `${when(p.tMs)}: ${fmtNum(p.value as number)}` +
    (finite(p.ucl) ? ` (UCL ${fmtNum(p.ucl)})` : '') +
    (p.flags.length ? ` — ${p.flags.map((f) => ruleOf.get(f)?.label ?? f).join('; ')}` : '');
  const drawPlain = pts.length <= MAX_POINT_MARKS;

  return (
    <ChartSvg kind="control-chart" id={id} width={width} height={height} title={input.title} desc={desc}>
      <YAxis ticks={yTicks} x={box.x0} y0={box.y0} y1={box.y1} label={input.yLabel} grid={box.x1} />
      <XAxis
        ticks={xTicks}
        y={box.y1}
        x0={box.x0}
        x1={box.x1}
        label={input.xLabel ?? 'subgroup start (UTC)'}
      />
      {values.length === 0 ? (
        <NoData x={(box.x0 + box.x1) / 2} y={(box.y0 + box.y1) / 2} text={input.emptyText ?? 'no subgroup'} />
      ) : null}
      <g class="vc-lines">
        {finite(input.centre) ? (
          <line
            class="vc-centre"
            x1={box.x0}
            x2={box.x1}
            y1={yc(input.centre)}
            y2={yc(input.centre)}
            stroke={LINES.centre.colour}
            stroke-width="1.6"
          />
        ) : null}
        {uclPath ? (
          <path
            class="vc-ucl"
            d={uclPath}
            fill="none"
            stroke={LINES.limit.colour}
            stroke-width="1.4"
            stroke-dasharray="2 3"
          />
        ) : null}
        {lclPath ? (
          <path
            class="vc-lcl"
            d={lclPath}
            fill="none"
            stroke={LINES.limit.colour}
            stroke-width="1.4"
            stroke-dasharray="2 3"
          />
        ) : null}
        {finite(input.alert) ? (
          <line
            class="vc-alert"
            x1={box.x0}
            x2={box.x1}
            y1={yc(input.alert)}
            y2={yc(input.alert)}
            stroke={LINES.alert.colour}
            stroke-width="1.4"
            stroke-dasharray="6 4"
          />
        ) : null}
        {finite(input.action) ? (
          <line
            class="vc-action"
            x1={box.x0}
            x2={box.x1}
            y1={yc(input.action)}
            y2={yc(input.action)}
            stroke={LINES.action.colour}
            stroke-width="1.6"
            stroke-dasharray="8 3 2 3"
          />
        ) : null}
        {lineLabels.map((l, i) => (
          <text
            class="vc-level-label"
            data-level={l.kinds.join(' ')}
            x={r(box.x1 + LABEL_GAP)}
            y={r(labelBaselines[i]!)}
            fill={l.colour}
          >
            {l.text}
          </text>
        ))}
      </g>
      <g class="vc-marks">
        {path.length ? (
          <path class="vc-series" d={path.join(' ')} fill="none" stroke="#18202e" stroke-width="1" />
        ) : null}
        {pts.map((p) => {
          if (!finite(p.value)) return null;
          const cx = r(x(p.tMs));
          const cy = yc(p.value);
          if (p.flags.length > 0)
            return (
              <RuleMarker shape={shapeOf.get(p.flags[0]!) ?? 'star'} x={cx} y={cy}>
                <title>{pointTitle(p)}</title>
              </RuleMarker>
            );
          return drawPlain ? (
            <circle class="vc-point" cx={cx} cy={cy} r="2.6" fill="#18202e">
              <title>{pointTitle(p)}</title>
            </circle>
          ) : null;
        })}
        {marks.map((m) => (
          <text class="vc-flag-mark" x={r(m.x)} y={r(m.y)} text-anchor="middle" font-weight="600">
            {m.text}
          </text>
        ))}
      </g>
      <Legend
        x={box.x0}
        y={box.y1 + X_AXIS_DEPTH + 6}
        columns={columns}
        columnWidth={columnWidth}
        rowHeight={LEGEND_ROW}
        entries={legendEntries.map((e) => ({ ...e, label: fitText(e.label, columnWidth - 24) }))}
      />
    </ChartSvg>
  );
}
