/**
 * pareto — contributions sorted from largest to smallest as bars, with the cumulative share as
 * a line on a 0–100 % axis (the usual Pareto chart of quality practice).
 *
 * Beyond `maxBars` the smallest items are pooled into one "others" bar, so the cumulative line
 * still ends at 100 %. Labels come from files (tool names, locations): hono/jsx escapes them,
 * long ones are shortened on the axis and given whole in the bar's tooltip.
 */
import { scaleBand, scaleLinear } from 'd3-scale';
import { line } from 'd3-shape';
import { ChartSvg, clip, fmtNum, innerBox, linearTicks, NoData, r, safeId, XAxis, YAxis } from './svg.tsx';

export interface ParetoItem {
  label: string;
  value: number;
}

export interface ParetoInput {
  title: string;
  items: ParetoItem[];
  /** What the bars measure, e.g. "expected voids". */
  valueLabel: string;
  maxBars?: number;
  id?: string;
  width?: number;
  height?: number;
}

export interface ParetoBar extends ParetoItem {
  /** Cumulative share after this bar, 0…1. */
  cumulative: number;
  pooled: number;
}

/** The bars a Pareto chart shows: sorted descending, the tail pooled, with cumulative shares. */
export function paretoBars(items: ParetoItem[], maxBars = 10): ParetoBar[] {
  const clean = items
    .filter((i) => Number.isFinite(i.value) && i.value > 0)
    .sort((a, b) => b.value - a.value || a.label.localeCompare(b.label));
  let bars: (ParetoItem & { pooled: number })[] = clean.map((i) => ({ ...i, pooled: 1 }));
  if (bars.length > maxBars) {
    const head = bars.slice(0, maxBars - 1);
    const tail = bars.slice(maxBars - 1);
    bars = [
      ...head,
      { label: `others (${tail.length})`, value: tail.reduce((a, b) => a + b.value, 0), pooled: tail.length },
    ];
  }
  const total = bars.reduce((a, b) => a + b.value, 0);
  let run = 0;
  return bars.map((b) => {
    run += b.value;
    return { ...b, cumulative: total > 0 ? run / total : 0 };
  });
}

export function pareto(input: ParetoInput) {
  const id = safeId(input.id ?? `pa-${input.title}`);
  const bars = paretoBars(input.items, input.maxBars ?? 10);
  const width = input.width ?? 520;
  const height = input.height ?? 300;
  const frame = { width, height, margin: { top: 16, right: 52, bottom: 92, left: 62 } };
  const box = innerBox(frame);
  const x = scaleBand<number>()
    .domain(bars.map((_, i) => i))
    .range([box.x0, box.x1])
    .paddingInner(0.22)
    .paddingOuter(0.12);
  const vmax = bars.length ? bars[0]!.value : 1;
  const y = scaleLinear().domain([0, vmax]).nice(5).range([box.y1, box.y0]);
  const yc = scaleLinear().domain([0, 1]).range([box.y1, box.y0]);
  const cx = (i: number) => x(i)! + x.bandwidth() / 2;
  const cumPath =
    line<ParetoBar>()
      .x((_, i) => cx(i))
      .y((b) => yc(b.cumulative))(bars) ?? '';
  const total = bars.reduce((a, b) => a + b.value, 0);
  const desc = bars.length
    ? `${input.valueLabel} by contributor, largest first (total ${fmtNum(total)}): ` +
      bars.map((b) => `${b.label} ${fmtNum(b.value)} (${Math.round((b.value / total) * 100)} %)`).join('; ')
    : `No contributions to ${input.valueLabel}.`;
  const labelChars = Math.max(8, Math.min(24, Math.floor(x.bandwidth() / 3.2)));
  return (
    <ChartSvg kind="pareto" id={id} width={width} height={height} title={input.title} desc={desc}>
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
        label="cumulative share"
      />
      <XAxis ticks={[]} y={box.y1} x0={box.x0} x1={box.x1} />
      {bars.length === 0 ? (
        <NoData x={(box.x0 + box.x1) / 2} y={(box.y0 + box.y1) / 2} text="nothing to attribute" />
      ) : null}
      <g class="vc-marks">
        {bars.map((b, i) => (
          <g class="vc-mark vc-bar" data-label={b.label} data-value={b.value}>
            <rect
              x={r(x(i)!)}
              y={r(y(b.value))}
              width={r(x.bandwidth())}
              height={r(Math.max(0, box.y1 - y(b.value)))}
              fill={b.pooled > 1 ? '#b9bec8' : '#2c3648'}
              stroke="#18202e"
              stroke-width="0.6"
            >
              <title>{`${b.label}: ${fmtNum(b.value)} ${input.valueLabel} (${Math.round((b.value / total) * 100)} %)`}</title>
            </rect>
            <text class="vc-bar-value" x={r(cx(i))} y={r(y(b.value) - 4)} text-anchor="middle">
              {fmtNum(b.value, 2)}
            </text>
            <text
              class="vc-bar-label"
              x={r(cx(i))}
              y={box.y1 + 12}
              text-anchor="end"
              transform={`rotate(-35 ${r(cx(i))} ${box.y1 + 12})`}
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
          <path d={cumPath} fill="none" stroke="#c98a12" stroke-width="2" />
          {bars.map((b, i) => (
            <rect
              class="vc-cumulative-point"
              x={r(cx(i) - 3)}
              y={r(yc(b.cumulative) - 3)}
              width="6"
              height="6"
              fill="#fff"
              stroke="#c98a12"
              stroke-width="1.5"
            />
          ))}
        </g>
      ) : null}
    </ChartSvg>
  );
}
