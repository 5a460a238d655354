/**
 * backtestPlot — predicted against observed per bonded pair, before and after calibration, with the
 * 1:1 line and each prediction's 95 % interval as a horizontal whisker.
 *
 * Predicted on x, observed on y: a point on the dashed 1:1 line is a pair the prediction got right;
 * (whole-number observations may be dodged a little below/above their value for before/after, and
 * areas drawn on square-root axes; the chart says so when they are);
 * a whisker that crosses the line holds the observed value in its interval. Before: hollow circles
 * (grey); after: filled diamonds (blue) — shape and fill tell them apart without colour. Linear axes
 * from 0 (counts and areas are ≥ 0); the upper end takes the larger of the points and the
 * interval ends, capped at twice the largest point so one wide interval does not flatten the rest
 * (a capped whisker ends in an arrow).
 */
import { scaleLinear, scaleSqrt } from 'd3-scale';
import { ChartSvg, innerBox, Legend, linearTicks, NoData, r, safeId, XAxis, YAxis } from './svg.tsx';

export interface BacktestPoint {
  label: string;
  observed: number;
  predicted: number;
  low: number;
  high: number;
}

export interface BacktestPlotInput {
  title: string;
  /** Axis words, e.g. "reportable voids per pair". */
  quantity: string;
  before: BacktestPoint[];
  after: BacktestPoint[];
  /** Tick labels (the values are in the caller's display unit already). */
  format?: (v: number) => string;
  /**
   * 'sqrt': square-root axes (still from 0), for quantities spanning decades such as areas; default
   * linear.
   */
  scale?: 'linear' | 'sqrt';
  /**
   * Whole-number observations (counts): before is drawn this far below its observed value and after
   * this far above, in the quantity's units, so the two do not hide each other (the legend says so).
   */
  dodge?: number;
  id?: string;
  width?: number;
  height?: number;
}

const BEFORE = '#5d6472';
const AFTER = '#1f6f8b';

export function backtestPlot(input: BacktestPlotInput) {
  const id = safeId(input.id ?? `bt-${input.title}`);
  const width = input.width ?? 340;
  const height = input.height ?? 330;
  const frame = { width, height, margin: { top: 16, right: 16, bottom: 92, left: 58 } };
  const box = innerBox(frame);
  const fmt = input.format ?? ((v: number) => String(Number(v.toPrecision(3))));
  const all = [...input.before, ...input.after].filter(
    (p) => Number.isFinite(p.observed) && Number.isFinite(p.predicted),
  );
  const desc =
    `${input.before.length} pairs before and ${input.after.length} after calibration: predicted ${input.quantity} ` +
    '(x, with its 95 % interval as a whisker) against observed (y); dashed line 1:1' +
    (input.scale === 'sqrt' ? '; square-root axes' : '') +
    (input.dodge ? '; before drawn just below and after just above the observed value' : '') +
    '.';
  if (all.length === 0)
    return (
      <ChartSvg kind="backtest" id={id} width={width} height={height} title={input.title} desc={desc}>
        <NoData x={width / 2} y={height / 2} text="No inspected pairs to compare" />
      </ChartSvg>
    );
  const pointMax = Math.max(...all.map((p) => Math.max(p.observed, p.predicted)), 1e-12);
  const whiskerMax = Math.max(...all.map((p) => p.high));
  const maxV = Math.min(Math.max(pointMax, whiskerMax), 2 * pointMax) * 1.05;
  const make = input.scale === 'sqrt' ? scaleSqrt : scaleLinear;
  const x = make().domain([0, maxV]).range([box.x0, box.x1]).nice();
  const y = make().domain([0, maxV]).range([box.y1, box.y0]).nice();
  const dodge = input.dodge ?? 0;
  const top = Math.min(x.domain()[1]!, y.domain()[1]!);
  const ticks = x.ticks(5);
  const clampX = (v: number) => Math.min(Math.max(v, 0), x.domain()[1]!);
  const point = (p: BacktestPoint, after: boolean) => {
    const px = x(p.predicted);
    const py = y(Math.max(0, p.observed + (after ? dodge : -dodge)));
    const lo = x(clampX(p.low));
    const hiCapped = p.high > x.domain()[1]!;
    const hi = x(clampX(p.high));
    const colour = after ? AFTER : BEFORE;
    const inside = p.observed >= p.low && p.observed <= p.high;
    return (
      <g class={`vc-mark vc-backtest-${after ? 'after' : 'before'}`} data-inside={inside ? 'true' : 'false'}>
        <line x1={r(lo)} x2={r(hi)} y1={r(py)} y2={r(py)} stroke={colour} stroke-width="1" />
        <line x1={r(lo)} x2={r(lo)} y1={r(py - 3)} y2={r(py + 3)} stroke={colour} stroke-width="1" />
        {hiCapped ? (
          <path
            d={`M${r(hi - 5)},${r(py - 3)} L${r(hi)},${r(py)} L${r(hi - 5)},${r(py + 3)}`}
            fill="none"
            stroke={colour}
          />
        ) : (
          <line x1={r(hi)} x2={r(hi)} y1={r(py - 3)} y2={r(py + 3)} stroke={colour} stroke-width="1" />
        )}
        {after ? (
          <path
            d={`M${r(px)},${r(py - 5)} L${r(px + 5)},${r(py)} L${r(px)},${r(py + 5)} L${r(px - 5)},${r(py)} Z`}
            fill={colour}
            stroke="#18202e"
            stroke-width="0.6"
            stroke-opacity="1"
          />
        ) : (
          <circle
            cx={r(px)}
            cy={r(py)}
            r={4}
            fill="#ffffff"
            stroke={colour}
            stroke-width="1.4"
            stroke-opacity="1"
          />
        )}
        <title>{`${p.label} ${after ? 'after' : 'before'}: predicted ${fmt(p.predicted)} [${fmt(p.low)}–${fmt(p.high)}], observed ${fmt(p.observed)}${inside ? '' : ' (outside the interval)'}`}</title>
      </g>
    );
  };
  return (
    <ChartSvg kind="backtest" id={id} width={width} height={height} title={input.title} desc={desc}>
      <XAxis
        ticks={linearTicks(ticks, (v) => x(v), fmt)}
        y={box.y1}
        x0={box.x0}
        x1={box.x1}
        label={`predicted ${input.quantity}`}
        grid={box.y0}
      />
      <YAxis
        ticks={linearTicks(y.ticks(5), (v) => y(v), fmt)}
        x={box.x0}
        y0={box.y1}
        y1={box.y0}
        label={`observed ${input.quantity}`}
        grid={box.x1}
      />
      <line
        class="vc-one-to-one"
        x1={r(x(0))}
        y1={r(y(0))}
        x2={r(x(top))}
        y2={r(y(top))}
        stroke="#18202e"
        stroke-width="1"
        stroke-dasharray="5 4"
      />
      <text x={r(x(top) - 4)} y={r(y(top) + 12)} text-anchor="end" class="vc-one-to-one-label">
        1:1
      </text>
      <g class="vc-backtest-points">
        {input.before.map((p) => point(p, false))}
        {input.after.map((p) => point(p, true))}
      </g>
      {input.dodge || input.scale === 'sqrt' ? (
        <text class="vc-backtest-note" x={box.x0} y={height - 6}>
          {[
            input.scale === 'sqrt' ? 'square-root axes' : '',
            input.dodge ? 'before drawn a little below, after above' : '',
          ]
            .filter(Boolean)
            .join('; ')}
        </text>
      ) : null}
      <Legend
        x={box.x0}
        y={box.y1 + 44}
        columns={2}
        columnWidth={130}
        entries={[
          {
            label: 'before (typed)',
            swatch: <circle cx={7} cy={6} r={4} fill="#ffffff" stroke={BEFORE} stroke-width="1.4" />,
          },
          {
            label: 'after (left out)',
            swatch: <path d="M7,1 L12,6 L7,11 L2,6 Z" fill={AFTER} stroke="#18202e" stroke-width="0.6" />,
          },
          {
            label: '95 % interval',
            swatch: <path d="M1,6 H13 M1,3 V9 M13,3 V9" stroke={BEFORE} fill="none" />,
          },
          {
            label: '1:1',
            swatch: <line x1={0} y1={10} x2={14} y2={2} stroke="#18202e" stroke-dasharray="5 4" />,
          },
        ]}
      />
    </ChartSvg>
  );
}
