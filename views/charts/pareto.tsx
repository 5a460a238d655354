/**
 * pareto — contributions sorted from largest to smallest as bars, with the cumulative share as
 * a line on a 0–100 % axis (the usual Pareto chart of quality practice).
 *
 * The shares are of the *whole* the items are part of (`total`), not of the bars alone: a grouping
 * that covers only some of the risk (the tools, when most of it comes from waits) shows what it
 * leaves out as a last, hatched bar ("other sources") and says its share above the plot, so the
 * cumulative line runs as far as the bars really reach and the 80 % line is 80 % of the whole —
 * the same figures as the share column of the table beside the chart.
 *
 * Beyond `maxBars` the smallest items are pooled into one "others" bar. A rest bar much taller than
 * every item is drawn broken (cut at the top of the plot, its value written inside) so the items
 * keep a readable scale. Labels come from files (tool names, locations): hono/jsx escapes them;
 * they run down from under their bars, long ones shortened to the margin and given whole in the
 * bar's tooltip (and in the table beside the chart).
 */
import { scaleBand, scaleLinear } from 'd3-scale';
import { line } from 'd3-shape';
import {
  ChartSvg,
  clip,
  fmtNum,
  fmtPct,
  innerBox,
  linearTicks,
  NoData,
  r,
  safeId,
  XAxis,
  YAxis,
} from './svg.tsx';

export interface ParetoItem {
  label: string;
  value: number;
}

export interface ParetoInput {
  title: string;
  items: ParetoItem[];
  /** What the bars measure, e.g. "expected voids". */
  valueLabel: string;
  /**
   * The whole the shares are of (e.g. the pair's expected die-kill events from every source); default the
   * sum of the items. Whatever the items leave of it is drawn as the rest bar.
   */
  total?: number;
  /** Name of the rest bar (default "other sources"). */
  restLabel?: string;
  /** How a bar's value is written on it (default 3 significant figures), e.g. as the table beside writes it. */
  format?: (value: number) => string;
  maxBars?: number;
  id?: string;
  width?: number;
  height?: number;
}

export interface ParetoBar extends ParetoItem {
  /** Cumulative share of the total after this bar, 0…1. */
  cumulative: number;
  /** Items pooled in this bar (1 for an item of its own). */
  pooled: number;
  /** The part of the total no item holds. */
  rest: boolean;
}

/** Below this share of the total the rest is rounding, not a bar. */
const REST_MIN_SHARE = 1e-9;

/**
 * The bars a Pareto chart shows: sorted descending, the tail pooled, then the rest of the total (if
 * any), with cumulative shares of the total.
 */
export function paretoBars(
  items: ParetoItem[],
  maxBars = 10,
  total?: number,
  restLabel = 'other sources',
): ParetoBar[] {
  const kept = items
    .filter((i) => Number.isFinite(i.value) && i.value > 0)
    .sort((a, b) => b.value - a.value || a.label.localeCompare(b.label));
  let bars: (ParetoItem & { pooled: number })[] = kept.map((i) => ({ ...i, pooled: 1 }));
  if (bars.length > maxBars) {
    const head = bars.slice(0, maxBars - 1);
    const tail = bars.slice(maxBars - 1);
    bars = [
      ...head,
      { label: `others (${tail.length})`, value: tail.reduce((a, b) => a + b.value, 0), pooled: tail.length },
    ];
  }
  const sum = bars.reduce((a, b) => a + b.value, 0);
  const whole = total !== undefined && Number.isFinite(total) && total > sum ? total : sum;
  const out: ParetoBar[] = [];
  let run = 0;
  for (const b of bars) {
    run += b.value;
    out.push({ ...b, rest: false, cumulative: whole > 0 ? run / whole : 0 });
  }
  const rest = whole - sum;
  if (out.length > 0 && rest > REST_MIN_SHARE * whole)
    out.push({ label: restLabel, value: rest, pooled: 0, rest: true, cumulative: 1 });
  return out;
}

const ITEM_FILL = '#2c3648';
const POOLED_FILL = '#b9bec8';
const LINE_COLOUR = '#c98a12';
/** Upper bound of the advance of one character of the 11 px chart type (capitals and digits included), px. */
export const LABEL_PX_PER_CHAR = 6.6;

export function pareto(input: ParetoInput) {
  const id = safeId(input.id ?? `pa-${input.title}`);
  const bars = paretoBars(input.items, input.maxBars ?? 10, input.total, input.restLabel);
  const items = bars.filter((b) => !b.rest);
  const restBar = bars.find((b) => b.rest) ?? null;
  const width = input.width ?? 520;
  const height = input.height ?? 340;
  const frame = { width, height, margin: { top: 30, right: 60, bottom: 130, left: 62 } };
  const box = innerBox(frame);
  const x = scaleBand<number>()
    .domain(bars.map((_, i) => i))
    .range([box.x0, box.x1])
    .paddingInner(0.22)
    .paddingOuter(0.12);
  // The value axis: the items' scale; a rest bar joins it unless it would squash them (then broken).
  const itemMax = items.length ? items[0]!.value : 0;
  const restBroken = restBar !== null && itemMax > 0 && restBar.value > 1.5 * itemMax;
  const vmax = Math.max(itemMax, restBar && !restBroken ? restBar.value : 0) || 1;
  const y = scaleLinear().domain([0, vmax]).nice(5).range([box.y1, box.y0]);
  const yc = scaleLinear().domain([0, 1]).range([box.y1, box.y0]);
  const cx = (i: number) => x(i)! + x.bandwidth() / 2;
  const whole = bars.reduce((a, b) => a + b.value, 0);
  const share = (v: number) => fmtPct(whole > 0 ? v / whole : 0);
  const itemPath =
    line<ParetoBar>()
      .x((_, i) => cx(i))
      .y((b) => yc(b.cumulative))(items) ?? '';
  const itemsShare = items.length ? items.at(-1)!.cumulative : 0;
  const desc = bars.length
    ? `${input.valueLabel} by contributor, largest first (total ${fmtNum(whole)}): ` +
      bars.map((b) => `${b.label} ${fmtNum(b.value)} (${share(b.value)})`).join('; ') +
      `; cumulative share of the total ${items.map((b) => fmtPct(b.cumulative)).join(', ')}` +
      (restBar ? `, 100 % with ${restBar.label}.` : '.')
    : `No contributions to ${input.valueLabel}.`;
  // Axis labels run straight down from under their bar (a column about 13 px wide, so neighbours
  // never meet); at most 6.6 px per character of 11 px type, each is cut to the bottom margin.
  const labelTop = box.y1 + 8;
  const labelChars = Math.max(4, Math.floor((height - labelTop - 4) / LABEL_PX_PER_CHAR));
  const barTop = (b: ParetoBar) => (b.rest && restBroken ? box.y0 : y(b.value));
  const fmtValue = input.format ?? ((v: number) => fmtNum(v));
  // A value is written above its bar unless the cumulative point sits there: then inside the bar
  // (white on the dark fill, when the bar is tall enough) or above the point.
  const valueLabel = (b: ParetoBar) => {
    const top = barTop(b);
    const point = yc(b.cumulative);
    const above = top - 4;
    const clashes = point > above - 14 && point < above + 8;
    const brokenRest = b.rest && restBroken;
    if (!clashes && !brokenRest) return { y: above, inside: false };
    if (box.y1 - top > 24) return { y: top + (brokenRest ? 34 : 14), inside: true };
    return { y: Math.min(above, point - 7), inside: false };
  };
  return (
    <ChartSvg kind="pareto" id={id} width={width} height={height} title={input.title} desc={desc}>
      <defs>
        <pattern
          id={`${id}-rest`}
          patternUnits="userSpaceOnUse"
          width="6"
          height="6"
          patternTransform="rotate(45)"
        >
          <rect width="6" height="6" fill="#eceae4" />
          <line x1="0" y1="0" x2="0" y2="6" stroke="#8a8f99" stroke-width="1.5" />
        </pattern>
      </defs>
      {restBar ? (
        <text class="vc-pareto-note" x={box.x0} y={13}>
          {`The bars hold ${fmtPct(itemsShare)} of all ${input.valueLabel}; ${restBar.label}: ${share(restBar.value)}.`}
        </text>
      ) : null}
      <YAxis
        ticks={linearTicks(y.ticks(5), y, (v) => fmtNum(v))}
        x={box.x0}
        y0={box.y0}
        y1={box.y1}
        label={input.valueLabel}
        grid={box.x1}
      />
      <YAxis
        ticks={linearTicks([0, 0.2, 0.4, 0.6, 0.8, 1], yc, (v) => `${Math.round(v * 100)} %`)}
        x={box.x1}
        y0={box.y0}
        y1={box.y1}
        side="right"
        label="cumulative share of total"
      />
      <XAxis ticks={[]} y={box.y1} x0={box.x0} x1={box.x1} />
      {bars.length === 0 ? (
        <NoData x={(box.x0 + box.x1) / 2} y={(box.y0 + box.y1) / 2} text="nothing to attribute" />
      ) : null}
      <g class="vc-marks">
        {bars.map((b, i) => (
          <g
            class={b.rest ? 'vc-mark vc-bar vc-bar-rest' : 'vc-mark vc-bar'}
            data-label={b.label}
            data-value={b.value}
            data-pooled={b.pooled}
          >
            <rect
              x={r(x(i)!)}
              y={r(barTop(b))}
              width={r(x.bandwidth())}
              height={r(Math.max(0, box.y1 - barTop(b)))}
              fill={b.rest ? `url(#${id}-rest)` : b.pooled > 1 ? POOLED_FILL : ITEM_FILL}
              stroke="#18202e"
              stroke-width="0.6"
              stroke-dasharray={b.rest ? '3 2' : undefined}
            >
              <title>{`${b.label}: ${fmtNum(b.value)} ${input.valueLabel} (${share(b.value)} of the total)`}</title>
            </rect>
            {b.rest && restBroken ? (
              <g class="vc-bar-break">
                <polygon
                  points={`${r(x(i)! - 3)},${r(box.y0 + 16)} ${r(x(i)! + x.bandwidth() + 3)},${r(box.y0 + 10)} ${r(x(i)! + x.bandwidth() + 3)},${r(box.y0 + 16)} ${r(x(i)! - 3)},${r(box.y0 + 22)}`}
                  fill="#fff"
                />
                <path
                  d={`M${r(x(i)! - 3)},${r(box.y0 + 16)} L${r(x(i)! + x.bandwidth() + 3)},${r(box.y0 + 10)} M${r(x(i)! - 3)},${r(box.y0 + 22)} L${r(x(i)! + x.bandwidth() + 3)},${r(box.y0 + 16)}`}
                  stroke="#18202e"
                  stroke-width="1"
                />
                <title>off the scale of the other bars</title>
              </g>
            ) : null}
            <text
              class="vc-bar-value"
              x={r(cx(i))}
              y={r(valueLabel(b).y)}
              text-anchor="middle"
              fill={valueLabel(b).inside && !b.rest && b.pooled <= 1 ? '#fff' : undefined}
              stroke={valueLabel(b).inside && b.rest ? '#fff' : undefined}
              stroke-width={valueLabel(b).inside && b.rest ? 3 : undefined}
              paint-order={valueLabel(b).inside && b.rest ? 'stroke' : undefined}
            >
              {fmtValue(b.value)}
            </text>
            <text
              class="vc-bar-label"
              x={r(cx(i) + 4)}
              y={r(labelTop)}
              text-anchor="end"
              transform={`rotate(-90 ${r(cx(i) + 4)} ${r(labelTop)})`}
            >
              {clip(b.label, labelChars)}
            </text>
          </g>
        ))}
      </g>
      {bars.length > 0 ? (
        <g class="vc-cumulative">
          <line
            class="vc-guide"
            x1={box.x0}
            x2={box.x1}
            y1={r(yc(0.8))}
            y2={r(yc(0.8))}
            stroke="#8a8f99"
            stroke-dasharray="2 3"
          />
          <path class="vc-cumulative-line" d={itemPath} fill="none" stroke={LINE_COLOUR} stroke-width="2" />
          {restBar && items.length > 0 ? (
            <line
              class="vc-cumulative-rest"
              x1={r(cx(items.length - 1))}
              y1={r(yc(itemsShare))}
              x2={r(cx(items.length))}
              y2={r(yc(1))}
              stroke={LINE_COLOUR}
              stroke-width="1.5"
              stroke-dasharray="4 3"
            />
          ) : null}
          {bars.map((b, i) => (
            <rect
              class="vc-cumulative-point"
              data-label={b.label}
              x={r(cx(i) - 3)}
              y={r(yc(b.cumulative) - 3)}
              width="6"
              height="6"
              fill="#fff"
              stroke={LINE_COLOUR}
              stroke-width="1.5"
            >
              <title>{`${fmtPct(b.cumulative)} of the total up to and with ${b.label}`}</title>
            </rect>
          ))}
        </g>
      ) : null}
    </ChartSvg>
  );
}
