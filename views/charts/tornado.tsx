/**
 * tornado — how much each uncertain input, moved alone over its stated range while the others hold
 * their values, changes a figure (one-at-a-time sensitivity, drawn as the usual tornado chart).
 *
 * One row per input, widest swing on top. Each panel is one figure (expected voids; die loss): its
 * x axis is the change from the as-is figure, the as-is line at zero, the spec limit (when the
 * panel's figure has one) as a dashed line. Per row, two segments from the as-is line: the figure
 * with the input at the low end of its range (solid) and at the high end (hatched), so the chart
 * keeps its meaning in greyscale. Where the call would change inside the range (the flip point),
 * a diamond sits on the row at the figure the flip happens at; the row's words say at which input
 * value. The numbers themselves are in each segment's tooltip and in the table beside the chart.
 *
 * Row labels come from the engine (input names, units): hono/jsx escapes them; they are fitted to
 * the label column (whole in the row's tooltip).
 */
import { scaleLinear } from 'd3-scale';
import {
  ChartSvg,
  FONT_PX,
  fitText,
  fmtNum,
  Legend,
  LINE_BOX_PX,
  linearTicks,
  NoData,
  r,
  SeriesPattern,
  safeId,
  textWidth,
  X_AXIS_DEPTH,
  XAxis,
} from './svg.tsx';

/** One figure's values for one input row. */
export interface TornadoValues {
  /** The figure with the input at the low end of its range. */
  low: number;
  /** The figure with the input at the high end of its range. */
  high: number;
  /** The figure at which the call changes, when that happens inside the range (else null). */
  flipAt: number | null;
}

/** One uncertain input. */
export interface TornadoRow {
  key: string;
  /** The input's name ("interface energy"). */
  label: string;
  /** Its range in words ("0.6 – 1.8 J/m²"). */
  rangeLabel: string;
  /** Where the call changes, in words ("call changes at 0.74 J/m²"), or null: not inside the range. */
  flipLabel: string | null;
  /** One entry per panel, in the panels' order. */
  values: TornadoValues[];
}

/** One figure: one panel of the chart. */
export interface TornadoPanel {
  /** The figure's name ("expected voids", "dies lost"). */
  name: string;
  /** The figure as is (every input at its stated value). */
  asIs: number;
  /** The spec's limit on this figure, when it has one (drawn where it falls inside the axis). */
  limit?: { value: number; label: string } | null;
  /** How a figure is written (default 3 significant figures). */
  format?: (v: number) => string;
}

export interface TornadoInput {
  title: string;
  panels: TornadoPanel[];
  rows: TornadoRow[];
  id?: string;
  width?: number;
}

const LOW_STYLE = { colour: '#1f6f8b', pattern: 'solid' as const };
const HIGH_STYLE = { colour: '#c98a12', pattern: 'hatch' as const };
const FLIP_COLOUR = '#b3261e';
const ROW_H = 38;
const BAR_H = 14;
const PANEL_GAP = 48;
/** Room above the plot for two lines of words (the as-is figure; the spec limit). */
const TOP = 44;
const SIDE = 14;
/** Room right of the last panel: half of its last tick label ("+1000") and a little air. */
const RIGHT = 30;

/** The swing of a row in a panel: the larger distance of its two ends from the as-is figure. */
export function swing(v: TornadoValues, asIs: number): number {
  const d = Math.max(Math.abs(v.low - asIs), Math.abs(v.high - asIs));
  return Number.isFinite(d) ? d : 0;
}

/** Rows widest swing first (in the first panel; ties by the second panel, then by name). */
export function tornadoOrder(rows: TornadoRow[], panels: TornadoPanel[]): TornadoRow[] {
  const key = (row: TornadoRow, p: number) =>
    panels[p] && row.values[p] ? swing(row.values[p]!, panels[p]!.asIs) : 0;
  return [...rows].sort(
    (a, b) => key(b, 0) - key(a, 0) || key(b, 1) - key(a, 1) || a.label.localeCompare(b.label),
  );
}

function signed(v: number, format: (v: number) => string): string {
  if (v === 0 || !Number.isFinite(v)) return format(v);
  return v > 0 ? `+${format(v)}` : `−${format(-v)}`;
}

/** A text's x so that it stays inside [x0, x1] when anchored in the middle at x. */
function clampMiddle(x: number, s: string, x0: number, x1: number): number {
  const half = textWidth(s) / 2 + 1;
  return Math.min(Math.max(x, x0 + half), x1 - half);
}

export function tornado(input: TornadoInput) {
  const id = safeId(input.id ?? `tornado-${input.title}`);
  const panels = input.panels;
  const rows = tornadoOrder(input.rows, panels);
  const width = input.width ?? 220 + 270 * Math.max(1, panels.length);
  // The label column: 30 % of the width, between 210 and 340 px (the rest for the panels).
  const LABEL_COL = Math.round(Math.min(340, Math.max(210, 0.3 * width)));
  const plotTop = TOP;
  const plotH = Math.max(1, rows.length) * ROW_H;
  const plotBottom = plotTop + plotH;
  const legendTop = plotBottom + X_AXIS_DEPTH + 8;
  const legendEntries = [
    {
      label: 'input at the low end of its range',
      swatch: <rect width="14" height="10" fill={LOW_STYLE.colour} stroke="#18202e" stroke-width="0.6" />,
    },
    {
      label: 'input at the high end of its range',
      swatch: <rect width="14" height="10" fill={`url(#${id}-high)`} stroke="#18202e" stroke-width="0.6" />,
    },
    {
      label: 'as is (every input at its value)',
      swatch: <line x1="7" x2="7" y1="-1" y2="11" stroke="#18202e" stroke-width="1.6" />,
    },
    {
      label: 'spec limit',
      swatch: (
        <line x1="7" x2="7" y1="-1" y2="11" stroke="#5d6472" stroke-width="1.4" stroke-dasharray="3 2" />
      ),
    },
    {
      label: 'flip point: the call changes here',
      swatch: <polygon points="7,0 12,5 7,10 2,5" fill="#fff" stroke={FLIP_COLOUR} stroke-width="1.6" />,
    },
  ];
  // Legend in as many columns as fit the width, each as wide as its widest entry.
  const entryW = Math.max(...legendEntries.map((e) => 18 + textWidth(e.label))) + 16;
  const legendCols = Math.max(1, Math.min(legendEntries.length, Math.floor((width - 2 * SIDE) / entryW)));
  const legendRows = Math.ceil(legendEntries.length / legendCols);
  const height = legendTop + legendRows * 16 + 8;

  const panelW = (width - LABEL_COL - RIGHT - PANEL_GAP * (panels.length - 1)) / Math.max(1, panels.length);
  const rowY = (i: number) => plotTop + i * ROW_H;

  const desc = rows.length
    ? `Change in ${panels.map((p) => p.name).join(' and ')} when each input moves alone over its range, widest first: ` +
      rows
        .map(
          (row) =>
            `${row.label} (${row.rangeLabel}): ` +
            panels
              .map((p, k) => {
                const v = row.values[k];
                const f = p.format ?? ((x: number) => fmtNum(x));
                return v
                  ? `${p.name} ${signed(v.low - p.asIs, f)} at the low end, ${signed(v.high - p.asIs, f)} at the high end`
                  : `${p.name} not computed`;
              })
              .join('; ') +
            (row.flipLabel ? `; ${row.flipLabel}` : '; the call does not change inside the range'),
        )
        .join('. ') +
      '.'
    : 'No uncertain input to vary.';

  return (
    <ChartSvg kind="tornado" id={id} width={width} height={height} title={input.title} desc={desc}>
      <defs>
        <SeriesPattern id={`${id}-high`} style={HIGH_STYLE} />
      </defs>
      <g class="vc-tornado-rows">
        {rows.map((row, i) => {
          const y = rowY(i);
          const second = row.flipLabel ?? 'call unchanged inside the range';
          return (
            <g class="vc-tornado-row-label" data-key={row.key}>
              <title>{`${row.label}: ${row.rangeLabel}; ${second}`}</title>
              {i % 2 === 1 ? (
                <rect
                  class="vc-tornado-band"
                  x={SIDE - 4}
                  y={y}
                  width={width - 2 * SIDE + 8}
                  height={ROW_H}
                  fill="#f6f5f1"
                />
              ) : null}
              <text x={SIDE} y={r(y + 14)} font-weight="600">
                {fitText(row.label, LABEL_COL - SIDE - 10, FONT_PX, true)}
              </text>
              <text x={SIDE} y={r(y + 14 + LINE_BOX_PX + 1)} fill={row.flipLabel ? FLIP_COLOUR : undefined}>
                {fitText(`${row.rangeLabel} · ${second}`, LABEL_COL - SIDE - 10)}
              </text>
            </g>
          );
        })}
      </g>
      {panels.map((p, k) => {
        const x0 = LABEL_COL + k * (panelW + PANEL_GAP);
        const x1 = x0 + panelW;
        const format = p.format ?? ((v: number) => fmtNum(v));
        const deltas = rows.flatMap((row) => {
          const v = row.values[k];
          return v ? [v.low - p.asIs, v.high - p.asIs] : [];
        });
        const limitDelta = p.limit && Number.isFinite(p.limit.value) ? p.limit.value - p.asIs : null;
        const finite = deltas.filter(Number.isFinite);
        let lo = Math.min(0, ...finite);
        let hi = Math.max(0, ...finite);
        // The limit joins the axis when it is near the bars (within their span again), so the
        // distance to it can be read; a far-off limit is named above the plot instead.
        const span = hi - lo || 1;
        if (limitDelta !== null && limitDelta >= lo - span && limitDelta <= hi + span) {
          lo = Math.min(lo, limitDelta);
          hi = Math.max(hi, limitDelta);
        }
        if (lo === hi) {
          lo -= 1;
          hi += 1;
        }
        const x = scaleLinear().domain([lo, hi]).nice(4).range([x0, x1]);
        const [dlo, dhi] = x.domain() as [number, number];
        const zero = x(0);
        const ticks = linearTicks(x.ticks(4), x, (v) => signed(v, (t) => fmtNum(t)));
        const limitIn = limitDelta !== null && limitDelta >= dlo && limitDelta <= dhi;
        const asIsText = `as is: ${format(p.asIs)} ${p.name}`;
        const limitText = p.limit
          ? limitIn
            ? `${p.limit.label}: ${format(p.limit.value)}`
            : `${p.limit.label} ${format(p.limit.value)}: off this axis`
          : null;
        return (
          <g class="vc-tornado-panel" data-panel={p.name}>
            <text
              class="vc-tornado-asis"
              x={r(clampMiddle(zero, fitText(asIsText, panelW), x0, x1))}
              y={14}
              text-anchor="middle"
            >
              {fitText(asIsText, panelW)}
            </text>
            {limitText ? (
              <text
                class="vc-tornado-limit-label"
                x={r(
                  limitIn
                    ? clampMiddle(x(limitDelta!), fitText(limitText, panelW), x0, x1)
                    : clampMiddle((x0 + x1) / 2, fitText(limitText, panelW), x0, x1),
                )}
                y={14 + LINE_BOX_PX + 2}
                text-anchor="middle"
                fill="#5d6472"
              >
                {fitText(limitText, panelW)}
              </text>
            ) : null}
            <XAxis
              ticks={ticks}
              y={plotBottom}
              x0={x0}
              x1={x1}
              label={`change in ${p.name}`}
              grid={plotTop}
            />
            {rows.length === 0 ? <NoData x={(x0 + x1) / 2} y={plotTop + plotH / 2} text="no inputs" /> : null}
            <g class="vc-marks">
              {rows.map((row, i) => {
                const v = row.values[k];
                if (!v) return null;
                const cy = rowY(i) + ROW_H / 2;
                const seg = (value: number, end: 'low' | 'high') => {
                  const xv = x(value - p.asIs);
                  const a = Math.min(zero, xv);
                  const w = Math.abs(xv - zero);
                  return (
                    <rect
                      class={`vc-mark vc-tornado-bar vc-tornado-${end}`}
                      data-key={row.key}
                      data-end={end}
                      data-value={value}
                      x={r(a)}
                      y={r(cy - BAR_H / 2)}
                      width={r(Math.max(w, 0.5))}
                      height={BAR_H}
                      fill={end === 'low' ? LOW_STYLE.colour : `url(#${id}-high)`}
                      stroke="#18202e"
                      stroke-width="0.6"
                    >
                      <title>{`${row.label} at the ${end} end of ${row.rangeLabel}: ${format(value)} ${p.name} (${signed(value - p.asIs, format)})`}</title>
                    </rect>
                  );
                };
                // The longer segment behind, so both show when they lie on the same side.
                const ends: ['low' | 'high', number][] = [
                  ['low', v.low],
                  ['high', v.high],
                ];
                ends.sort((e1, e2) => Math.abs(e2[1] - p.asIs) - Math.abs(e1[1] - p.asIs));
                const flipIn =
                  v.flipAt !== null &&
                  Number.isFinite(v.flipAt) &&
                  v.flipAt - p.asIs >= dlo &&
                  v.flipAt - p.asIs <= dhi;
                return (
                  <g class="vc-tornado-row" data-key={row.key}>
                    {ends.map(([end, value]) => (Number.isFinite(value) ? seg(value, end) : null))}
                    {flipIn ? (
                      <polygon
                        class="vc-tornado-flip"
                        data-key={row.key}
                        data-value={v.flipAt!}
                        points={`${r(x(v.flipAt! - p.asIs))},${r(cy - 8)} ${r(x(v.flipAt! - p.asIs) + 6)},${r(cy)} ${r(x(v.flipAt! - p.asIs))},${r(cy + 8)} ${r(x(v.flipAt! - p.asIs) - 6)},${r(cy)}`}
                        fill="#fff"
                        stroke={FLIP_COLOUR}
                        stroke-width="1.8"
                      >
                        <title>{`${row.flipLabel ?? 'the call changes'} (${format(v.flipAt!)} ${p.name})`}</title>
                      </polygon>
                    ) : null}
                  </g>
                );
              })}
            </g>
            {limitIn ? (
              <line
                class="vc-tornado-limit"
                x1={r(x(limitDelta!))}
                x2={r(x(limitDelta!))}
                y1={plotTop - 4}
                y2={plotBottom}
                stroke="#5d6472"
                stroke-width="1.4"
                stroke-dasharray="3 2"
              />
            ) : null}
            <line
              class="vc-tornado-asis-line"
              x1={r(zero)}
              x2={r(zero)}
              y1={plotTop - 4}
              y2={plotBottom}
              stroke="#18202e"
              stroke-width="1.6"
            />
          </g>
        );
      })}
      <Legend x={SIDE} y={legendTop} columns={legendCols} columnWidth={entryW} entries={legendEntries} />
    </ChartSvg>
  );
}
