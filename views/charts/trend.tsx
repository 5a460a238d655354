/**
 * trend — an airborne particle concentration per counter channel over time, with the alert and
 * action levels and the ISO 14644-1 class limit as horizontal lines.
 *
 * Lines are told apart by dash pattern and name, not colour alone: alert dashed, action
 * dash-dot, class limit solid and heavy. Samples above the action level are drawn as filled
 * triangles, above the alert level as open diamonds, others as small dots. Missing data stays
 * missing: where consecutive samples are further apart than the gap threshold (default three
 * times the median sampling interval), the line breaks and the gap is shaded and labelled.
 * A sample with a null value (a flagged or rejected sample) also breaks the line.
 */
import { scaleLinear, scaleLog, scaleUtc } from 'd3-scale';
import { area, line } from 'd3-shape';
import {
  ASCENT_EM,
  ChartSvg,
  DESCENT_EM,
  FONT_PX,
  fmtConc,
  fmtNum,
  fmtPow10,
  fmtUtcTick,
  innerBox,
  LINE_BOX_PX,
  linearTicks,
  logTicks,
  NoData,
  r,
  safeId,
  textWidth,
  X_AXIS_DEPTH,
  XAxis,
  YAxis,
  yAxisDepth,
} from './svg.tsx';

export interface TrendPoint {
  /** Sample start, ms since the epoch (UTC). */
  tMs: number;
  /** Concentration in the chart's unit; null for a sample without a usable value. */
  value: number | null;
}

export interface TrendInput {
  title: string;
  /** The channel, e.g. "≥ 0.5 µm". */
  channelLabel: string;
  /** The concentration unit shown, e.g. "particles/m³". */
  unit: string;
  points: TrendPoint[];
  alert?: number | null;
  action?: number | null;
  classLimit?: { value: number; label: string } | null;
  /** Gap threshold in ms; default 3 × the median interval between samples. */
  gapMs?: number;
  fromMs?: number;
  toMs?: number;
  yScale?: 'linear' | 'log' | 'auto';
  /**
   * Above this many samples the line is drawn through bucket means with a min–max band (one
   * bucket per pixel column group), and only samples above the alert level keep their own mark.
   */
  maxPoints?: number;
  id?: string;
  width?: number;
  height?: number;
}

export interface TrendSegmentation {
  segments: TrendPoint[][];
  gaps: { fromMs: number; toMs: number }[];
  gapMs: number;
}

/** Splits samples into runs without gaps (the lines) and the gaps between them. */
export function segmentTrend(points: TrendPoint[], gapMs?: number): TrendSegmentation {
  const pts = points.filter((p) => Number.isFinite(p.tMs)).sort((a, b) => a.tMs - b.tMs);
  const dts: number[] = [];
  for (let i = 1; i < pts.length; i++) dts.push(pts[i]!.tMs - pts[i - 1]!.tMs);
  const sorted = [...dts].sort((a, b) => a - b);
  const median = sorted.length ? sorted[Math.floor((sorted.length - 1) / 2)]! : 0;
  const gap = gapMs ?? (median > 0 ? 3 * median : Number.POSITIVE_INFINITY);
  const segments: TrendPoint[][] = [];
  const gaps: { fromMs: number; toMs: number }[] = [];
  let cur: TrendPoint[] = [];
  let lastGood: TrendPoint | null = null;
  for (const p of pts) {
    const usable = p.value !== null && Number.isFinite(p.value);
    if (!usable) {
      if (cur.length) segments.push(cur);
      cur = [];
      continue;
    }
    if (lastGood && p.tMs - lastGood.tMs > gap) {
      if (cur.length) segments.push(cur);
      cur = [];
      gaps.push({ fromMs: lastGood.tMs, toMs: p.tMs });
    }
    cur.push(p);
    lastGood = p;
  }
  if (cur.length) segments.push(cur);
  return { segments, gaps, gapMs: gap };
}

export interface TrendBucket {
  tMs: number;
  mean: number;
  min: number;
  max: number;
  n: number;
}

/**
 * Groups a run of samples into at most `buckets` equal time slices of [t0, t1]: each slice's mean
 * time, mean, minimum and maximum value. Display only: what a chart column can show.
 */
export function bucketTrend(points: TrendPoint[], t0: number, t1: number, buckets: number): TrendBucket[] {
  const width = Math.max((t1 - t0) / Math.max(1, buckets), 1);
  const out: TrendBucket[] = [];
  let cur: { k: number; st: number; sv: number; min: number; max: number; n: number } | null = null;
  const flush = () => {
    if (cur) out.push({ tMs: cur.st / cur.n, mean: cur.sv / cur.n, min: cur.min, max: cur.max, n: cur.n });
  };
  for (const p of points) {
    const v = p.value as number;
    const k = Math.floor((p.tMs - t0) / width);
    if (!cur || cur.k !== k) {
      flush();
      cur = { k, st: 0, sv: 0, min: v, max: v, n: 0 };
    }
    cur.st += p.tMs;
    cur.sv += v;
    cur.min = Math.min(cur.min, v);
    cur.max = Math.max(cur.max, v);
    cur.n++;
  }
  flush();
  return out;
}

export function trend(input: TrendInput) {
  const id = safeId(input.id ?? `tr-${input.title}`);
  const width = input.width ?? 640;
  const height = input.height ?? 280;
  const { segments, gaps } = segmentTrend(input.points, input.gapMs);
  const values = segments.flat().map((p) => p.value as number);
  const times = input.points.map((p) => p.tMs).filter(Number.isFinite);
  const t0 = input.fromMs ?? (times.length ? Math.min(...times) : Date.UTC(2000, 0, 1));
  const t1 = input.toMs ?? (times.length ? Math.max(...times) : t0 + 86_400_000);
  const span = Math.max(t1 - t0, 60_000);
  const levels = [
    input.alert != null
      ? { kind: 'alert', value: input.alert, label: 'alert', dash: '6 4', colour: '#a8660b', w: 1.4 }
      : null,
    input.action != null
      ? { kind: 'action', value: input.action, label: 'action', dash: '8 3 2 3', colour: '#b3261e', w: 1.6 }
      : null,
    input.classLimit
      ? {
          kind: 'class-limit',
          value: input.classLimit.value,
          label: input.classLimit.label,
          dash: null,
          colour: '#18202e',
          w: 2.4,
        }
      : null,
  ].filter((l): l is NonNullable<typeof l> => l !== null && Number.isFinite(l.value) && l.value > 0);
  // Levels at the same value share one label ("action = ISO 5 limit 3520"), so equal levels never
  // print on top of each other; the label takes the colour of the most severe of them.
  const levelLabels = levelLabelGroups(levels);
  const vmax = Math.max(0, ...values, ...levels.map((l) => l.value));
  const positives = values.filter((v) => v > 0);
  const vminPos = positives.length ? Math.min(...positives) : vmax / 100;
  const wantLog =
    input.yScale === 'log' ||
    (input.yScale !== 'linear' &&
      vmax > 0 &&
      (vmax / Math.max(Math.max(0, ...values), 1e-300) > 30 || vmax / vminPos > 300));
  // The y scale's domain and tick values do not depend on pixels: take them first, so the margins
  // can make room for the widest tick label and the level labels.
  const isLog = wantLog && vmax > 0;
  let floorV = 0;
  let yDomain: [number, number];
  if (isLog) {
    const top = 10 ** Math.ceil(Math.log10(vmax * 1.05));
    floorV = Math.min(10 ** Math.floor(Math.log10(Math.max(vminPos, top * 1e-6))), top / 10);
    yDomain = [floorV, top];
  } else {
    const d = scaleLinear()
      .domain([0, vmax > 0 ? vmax * 1.08 : 1])
      .nice(5)
      .domain();
    yDomain = [d[0]!, d[1]!];
  }
  const yScaleFor = (range: [number, number]) => {
    if (isLog) {
      const y = scaleLog().domain(yDomain).range(range).clamp(true);
      return { yOf: (v: number) => y(Math.max(v, floorV)), ticks: logTicks(yDomain, y, fmtPow10) };
    }
    const y = scaleLinear().domain(yDomain).range(range);
    return { yOf: (v: number) => y(v), ticks: linearTicks(y.ticks(5), y, (v) => fmtNum(v)) };
  };
  const yLabel = `${input.channelLabel} (${input.unit})`;
  const frame = {
    width,
    height,
    margin: {
      top: 14,
      right: Math.ceil(
        Math.max(24, LEVEL_LABEL_GAP + Math.max(0, ...levelLabels.map((g) => textWidth(g.text))) + 2),
      ),
      bottom: X_AXIS_DEPTH + 6,
      left: Math.max(40, yAxisDepth(yScaleFor([1, 0]).ticks, yLabel)),
    },
  };
  const box = innerBox(frame);
  const x = scaleUtc()
    .domain([new Date(t0), new Date(t0 + span)])
    .range([box.x0, box.x1]);
  const { yOf, ticks: yTicks } = yScaleFor([box.y1, box.y0]);
  const path = line<TrendPoint>()
    .x((p) => x(new Date(p.tMs)))
    .y((p) => yOf(p.value as number));
  const classify = (v: number) =>
    input.action != null && v > input.action
      ? 'action'
      : input.alert != null && v > input.alert
        ? 'alert'
        : 'ok';
  const pts = segments.flat();
  const nAction = pts.filter((p) => classify(p.value as number) === 'action').length;
  const nAlert = pts.filter((p) => classify(p.value as number) === 'alert').length;
  const maxPoints = input.maxPoints ?? 720;
  const dense = pts.length > maxPoints;
  const columns = Math.max(1, Math.floor((box.x1 - box.x0) / 2));
  const bucketed = dense ? segments.map((sg) => bucketTrend(sg, t0, t0 + span, columns)) : [];
  const band = area<TrendBucket>()
    .x((b) => x(new Date(b.tMs)))
    .y0((b) => yOf(b.min))
    .y1((b) => yOf(b.max));
  const meanLine = line<TrendBucket>()
    .x((b) => x(new Date(b.tMs)))
    .y((b) => yOf(b.mean));
  // In a dense chart only the samples above a level keep their own mark (action ones always).
  const marked = dense
    ? pts.filter((p) => {
        const c = classify(p.value as number);
        return c === 'action' || (c === 'alert' && nAlert <= 400);
      })
    : pts;
  // Level labels at the right end, centred on their line where they can be and spread apart
  // where two lie within a line of text, kept between the chart's top and the x axis's labels.
  const labelBaselines = spreadBaselines(
    levelLabels.map((g) => yOf(g.value) + CENTRE_BASELINE_PX),
    ASCENT_EM * FONT_PX + 1,
    box.y1 + CENTRE_BASELINE_PX,
  );
  const xticks = x.ticks(6).map((d) => ({ at: x(d), label: fmtUtcTick(d.getTime(), span) }));
  const desc =
    `${input.channelLabel} concentration in ${input.unit}, ${pts.length} sample${pts.length === 1 ? '' : 's'}, ` +
    `${nAction} above the action level, ${nAlert} between alert and action, ${gaps.length} gap${gaps.length === 1 ? '' : 's'} in the data` +
    (wantLog ? `; log scale, values below ${fmtNum(floorV)} drawn on the floor` : '') +
    (dense ? `; ${pts.length} samples drawn as the mean with the min–max band per time slice` : '') +
    '. Times in UTC.';
  return (
    <ChartSvg kind="trend" id={id} width={width} height={height} title={input.title} desc={desc}>
      <defs>
        <clipPath id={`${id}-plot`}>
          <rect x={box.x0} y={box.y0 - 4} width={box.x1 - box.x0} height={box.y1 - box.y0 + 8} />
        </clipPath>
      </defs>
      <g class="vc-gaps">
        {gaps.map((g) => {
          const a = x(new Date(g.fromMs));
          const b = x(new Date(g.toMs));
          return (
            <g
              class="vc-gap"
              data-from={new Date(g.fromMs).toISOString()}
              data-to={new Date(g.toMs).toISOString()}
            >
              <rect
                x={r(a)}
                y={box.y0}
                width={r(Math.max(b - a, 1))}
                height={box.y1 - box.y0}
                fill="#f0eee8"
              />
              {b - a > textWidth('no data') + 6 ? (
                <text x={r((a + b) / 2)} y={box.y0 + 12} text-anchor="middle" font-style="italic">
                  no data
                </text>
              ) : null}
            </g>
          );
        })}
      </g>
      <YAxis ticks={yTicks} x={box.x0} y0={box.y0} y1={box.y1} label={yLabel} grid={box.x1} />
      <XAxis ticks={xticks} y={box.y1} x0={box.x0} x1={box.x1} label="sample start (UTC)" />
      <g class="vc-levels">
        {levels.map((l) => {
          const gi = levelLabels.findIndex((g) => g.kinds[0] === l.kind);
          const g = levelLabels[gi];
          return (
            <g class={`vc-level vc-level-${l.kind}`} data-level={l.kind} data-value={l.value}>
              <line
                x1={box.x0}
                x2={box.x1}
                y1={r(yOf(l.value))}
                y2={r(yOf(l.value))}
                stroke={l.colour}
                stroke-width={l.w}
                stroke-dasharray={l.dash ?? undefined}
              />
              {g ? (
                <text
                  class="vc-level-label"
                  data-levels={g.kinds.join(' ')}
                  x={box.x1 + LEVEL_LABEL_GAP}
                  y={r(labelBaselines[gi]!)}
                  fill={g.colour}
                >
                  {g.text}
                </text>
              ) : null}
            </g>
          );
        })}
      </g>
      {pts.length === 0 ? (
        <NoData x={(box.x0 + box.x1) / 2} y={(box.y0 + box.y1) / 2} text="no samples in this window" />
      ) : null}
      <g class="vc-marks" clip-path={`url(#${id}-plot)`}>
        {dense
          ? bucketed.map((b) => (
              <g class="vc-trend-dense">
                <path
                  class="vc-trend-band"
                  d={band(b) ?? ''}
                  fill="#1f6f8b"
                  fill-opacity="0.22"
                  stroke="none"
                />
                <path
                  class="vc-trend-line"
                  d={meanLine(b) ?? ''}
                  fill="none"
                  stroke="#1f6f8b"
                  stroke-width="1.2"
                />
              </g>
            ))
          : segments.map((s) => (
              <path class="vc-trend-line" d={path(s) ?? ''} fill="none" stroke="#1f6f8b" stroke-width="1.3" />
            ))}
        {marked.map((p) => {
          const px = r(x(new Date(p.tMs)));
          const py = r(yOf(p.value as number));
          const c = classify(p.value as number);
          const tip = (
            <title>{`${new Date(p.tMs).toISOString().slice(0, 16)}Z: ${fmtNum(p.value as number)} ${input.unit}${c === 'ok' ? '' : ` (above ${c})`}`}</title>
          );
          if (c === 'action')
            return (
              <path
                class="vc-mark vc-point vc-point-action"
                d={`M${px},${r(py - 5)} l4.5,8 h-9 Z`}
                fill="#b3261e"
                stroke="#18202e"
                stroke-width="0.6"
              >
                {tip}
              </path>
            );
          if (c === 'alert')
            return (
              <path
                class="vc-mark vc-point vc-point-alert"
                d={`M${px},${r(py - 4.5)} l4,4.5 l-4,4.5 l-4,-4.5 Z`}
                fill="#fff"
                stroke="#a8660b"
                stroke-width="1.4"
              >
                {tip}
              </path>
            );
          return (
            <circle class="vc-mark vc-point" cx={px} cy={py} r="1.8" fill="#1f6f8b">
              {tip}
            </circle>
          );
        })}
      </g>
    </ChartSvg>
  );
}

/** Gap between the plot's right edge and a level label, px. */
const LEVEL_LABEL_GAP = 5;
/** Baseline offset that centres a line of chart text on a y position, px. */
const CENTRE_BASELINE_PX = ((ASCENT_EM - DESCENT_EM) / 2) * FONT_PX;

interface LevelLike {
  kind: string;
  value: number;
  label: string;
  colour: string;
}

/**
 * One label per distinct level value, top level first: the names of the levels that share the
 * value joined by " = " and the value once ("action = ISO 5 limit 3520"). `kinds[0]` is the level
 * that draws the label; the colour is that of the last (most severe) level of the group.
 */
export function levelLabelGroups(
  levels: LevelLike[],
): { kinds: string[]; value: number; text: string; colour: string }[] {
  const groups: { kinds: string[]; names: string[]; value: number; colour: string }[] = [];
  for (const l of levels) {
    const g = groups.find((x) => Math.abs(x.value - l.value) <= 1e-9 * Math.max(x.value, l.value));
    if (g) {
      g.kinds.push(l.kind);
      g.names.push(l.label);
      g.colour = l.colour;
    } else groups.push({ kinds: [l.kind], names: [l.label], value: l.value, colour: l.colour });
  }
  return groups
    .sort((a, b) => b.value - a.value)
    .map((g) => ({
      kinds: g.kinds,
      value: g.value,
      text: `${g.names.join(' = ')} ${fmtConc(g.value)}`,
      colour: g.colour,
    }));
}

/**
 * Baselines for a column of one-line labels: each as near its wish as it can be, no two closer
 * than a line box and a pixel, none above `min` or below `max` (when they fit between them).
 * Wishes in any order; the result follows the input order.
 */
export function spreadBaselines(wish: number[], min: number, max: number): number[] {
  const step = LINE_BOX_PX + 1;
  const order = wish.map((w, i) => ({ w, i })).sort((a, b) => a.w - b.w);
  const y = order.map((o) => o.w);
  for (let k = 0; k < y.length; k++) y[k] = Math.max(y[k]!, min, k > 0 ? y[k - 1]! + step : min);
  for (let k = y.length - 1; k >= 0; k--) y[k] = Math.min(y[k]!, k < y.length - 1 ? y[k + 1]! - step : max);
  const out = new Array<number>(wish.length);
  order.forEach((o, k) => {
    out[o.i] = y[k]!;
  });
  return out;
}
