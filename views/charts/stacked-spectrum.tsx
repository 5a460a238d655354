/**
 * stackedSpectrum — a particle size spectrum stacked by source.
 *
 * x: particle diameter on a log axis; y: expected count per bin (step areas, one step per bin
 * of the spectrum grid) or the cumulative count N(≥ d) (areas through the bin edges, straight
 * in log–log, i.e. power-law between edges), on a log axis. Sources are stacked in the order
 * given; each has its own pattern as well as colour, and the legend gives each source's total.
 * Where a source belongs to one wafer of the pair, its outline says which (solid: bottom wafer,
 * dashed: top wafer, dotted: both or pooled) and its legend entry starts with the wafer, so that
 * the same source on the two wafers stays two distinguishable entries. A source with nothing in
 * any bin is neither stacked nor listed.
 * Log y cannot show zero: the axis starts six decades below the largest stacked value and
 * anything below is drawn on the floor, which the description says.
 */
import { scaleLog } from 'd3-scale';
import { area, curveLinear, curveStepAfter, stack } from 'd3-shape';
import { SPECTRUM_EDGES_M } from '../../src/model/spectrum.ts';
import {
  ChartSvg,
  FONT_PX,
  fitText,
  fmtDiameter,
  fmtNum,
  fmtPow10,
  innerBox,
  Legend,
  logTicks,
  NoData,
  r,
  SeriesPattern,
  safeId,
  seriesFill,
  seriesStyle,
  textWidth,
  X_AXIS_DEPTH,
  XAxis,
  YAxis,
  yAxisDepth,
} from './svg.tsx';

export interface SpectrumSeries {
  source: string;
  /** Expected count per bin, smallest size first (one value per bin between consecutive edges). */
  counts: ArrayLike<number>;
  /** The wafer of the pair the source belongs to; null or absent: both, or several sources pooled. */
  wafer?: 'top' | 'bottom' | null;
  /** That wafer's id, shown with the side in the legend. */
  waferId?: string | null;
}

/** Outline of a layer by wafer: solid bottom, dashed top, dotted both/pooled (SVG stroke-dasharray). */
export const WAFER_OUTLINE: Record<'top' | 'bottom' | 'both', string | undefined> = {
  bottom: undefined,
  top: '5 2',
  both: '1.5 2',
};
const LEGEND_ROW = 16;
const LEGEND_HEADING = 14;

export interface StackedSpectrumInput {
  title: string;
  series: SpectrumSeries[];
  mode?: 'per-bin' | 'cumulative';
  /** Bin edges in metres (default: the 48-bin grid, 10 nm – 100 µm). */
  edgesM?: ArrayLike<number>;
  /** What one count is, e.g. "particles per wafer". */
  basis?: string;
  /** Vertical reference lines (a scan threshold, a void-relevant size). */
  markers?: { atM: number; label: string }[];
  id?: string;
  width?: number;
  height?: number;
}

/** Decades below the largest stacked value that the log y axis still shows. */
const Y_DECADES = 6;

export function stackedSpectrum(input: StackedSpectrumInput) {
  const id = safeId(input.id ?? `sp-${input.title}`);
  const mode = input.mode ?? 'per-bin';
  const edges = Array.from(input.edgesM ?? SPECTRUM_EDGES_M);
  const nb = edges.length - 1;
  // A source with nothing in any bin has no layer and no legend entry.
  const series = input.series.filter((s) =>
    Array.from({ length: nb }, (_, i) => Number(s.counts[i] ?? 0)).some((v) => v > 0),
  );
  const bySide = series.some((s) => s.wafer === 'top' || s.wafer === 'bottom');
  const legendRows = series.length;
  const legendHeight = (bySide ? LEGEND_HEADING : 0) + legendRows * LEGEND_ROW;
  const width = input.width ?? 560;
  const height = (input.height ?? 300) + legendHeight;
  const basis = input.basis ?? 'particles per wafer';
  const yLabel = mode === 'per-bin' ? `${basis} per size bin` : `${basis} ≥ d`;

  const { perSource, stacked } = stackSpectrum(series, mode, nb);
  const totals = (stacked[0] ?? []).map((_, i) => stacked.reduce((m, layer) => Math.max(m, layer[i]![1]), 0));
  const yMaxRaw = Math.max(0, ...totals);
  const hasData = yMaxRaw > 0;
  const yTop = hasData ? 10 ** Math.ceil(Math.log10(yMaxRaw) - 1e-9) : 1;
  const yFloor = yTop * 10 ** -Y_DECADES;
  const yTickProbe = logTicks([yFloor, yTop], (v) => v, fmtPow10);
  const frame = {
    width,
    height,
    margin: {
      top: 14,
      right: 26,
      bottom: X_AXIS_DEPTH + 4 + legendHeight + 4,
      left: Math.max(40, yAxisDepth(yTickProbe, yLabel)),
    },
  };
  const box = innerBox(frame);

  // x domain: the bins that carry something, widened to whole decades.
  const significant = totals.map((t, i) => (t > yMaxRaw * 10 ** -Y_DECADES ? i : -1)).filter((i) => i >= 0);
  const lo = hasData ? edges[significant[0]!]! : edges[0]!;
  const hi = hasData ? edges[Math.min(significant.at(-1)! + 1, nb)]! : edges[nb]!;
  const xDomain: [number, number] = [
    Math.max(edges[0]!, 10 ** Math.floor(Math.log10(lo) + 1e-9)),
    Math.min(edges[nb]!, 10 ** Math.ceil(Math.log10(hi) - 1e-9)),
  ];
  const x = scaleLog().domain(xDomain).range([box.x0, box.x1]).clamp(true);
  const y = scaleLog().domain([yFloor, yTop]).range([box.y1, box.y0]).clamp(true);
  const yv = (v: number) => y(Math.max(v, yFloor));

  const xAt = (i: number) => x(edges[i]!);
  const shape =
    mode === 'per-bin'
      ? area<[number, number, number]>()
          .curve(curveStepAfter)
          .x((d) => d[0])
          .y0((d) => d[1])
          .y1((d) => d[2])
      : area<[number, number, number]>()
          .curve(curveLinear)
          .x((d) => d[0])
          .y0((d) => d[1])
          .y1((d) => d[2]);
  const layers = stacked.map((layer, k) => {
    const pts: [number, number, number][] = layer.map((p, i) => [xAt(i), yv(p[0]), yv(p[1])]);
    // A step area needs the right edge of the last bin.
    if (mode === 'per-bin' && layer.length > 0) {
      const last = layer[layer.length - 1]!;
      pts.push([xAt(nb), yv(last[0]), yv(last[1])]);
    }
    const style = seriesStyle(k);
    const pid = `${id}-p${k}`;
    const total = mode === 'per-bin' ? sum(perSource[k]!) : (perSource[k]![0] ?? 0);
    const s = series[k]!;
    const side = s.wafer === 'top' || s.wafer === 'bottom' ? s.wafer : null;
    const who = side ? `${side}${s.waferId ? ` ${s.waferId}` : ' wafer'}` : null;
    return {
      k,
      d: shape(pts) ?? '',
      style,
      pid,
      total,
      source: s.source,
      side,
      who,
      dash: bySide ? WAFER_OUTLINE[side ?? 'both'] : undefined,
    };
  });

  const desc = hasData
    ? `${mode === 'per-bin' ? 'Count per size bin' : 'Cumulative count above each size'} in ${basis}, stacked by source: ` +
      layers.map((l) => `${l.who ? `${l.who}: ` : ''}${l.source} ${fmtNum(l.total)}`).join('; ') +
      `. Log axes; values below ${fmtNum(yFloor)} are drawn on the axis floor.`
    : 'No particles in any source.';
  const legendRoom = box.x1 - box.x0 - 18;
  const legendLabel = (l: (typeof layers)[number]) => {
    const tail = ` — ${fmtNum(l.total)}`;
    return `${fitText(`${l.who ? `${l.who} · ` : ''}${l.source}`, legendRoom - textWidth(tail))}${tail}`;
  };
  return (
    <ChartSvg kind="stacked-spectrum" id={id} width={width} height={height} title={input.title} desc={desc}>
      <defs>
        {layers.map((l) => (
          <SeriesPattern id={l.pid} style={l.style} />
        ))}
        <clipPath id={`${id}-plot`}>
          <rect x={box.x0} y={box.y0} width={box.x1 - box.x0} height={box.y1 - box.y0} />
        </clipPath>
      </defs>
      <YAxis
        ticks={logTicks([yFloor, yTop], y, fmtPow10)}
        x={box.x0}
        y0={box.y0}
        y1={box.y1}
        label={yLabel}
        grid={box.x1}
      />
      <XAxis
        ticks={logTicks(xDomain, x, fmtDiameter)}
        y={box.y1}
        x0={box.x0}
        x1={box.x1}
        label="particle diameter d (log)"
        grid={box.y0}
      />
      {hasData ? (
        <g class="vc-marks" clip-path={`url(#${id}-plot)`}>
          {layers.map((l) => (
            <path
              class="vc-mark vc-layer"
              data-source={l.source}
              data-wafer={l.side ?? undefined}
              d={l.d}
              fill={seriesFill(l.pid, l.style)}
              fill-opacity={l.style.pattern === 'solid' ? 0.75 : 1}
              stroke={l.style.colour}
              stroke-width={l.dash ? 1.3 : 1}
              stroke-dasharray={l.dash}
            >
              <title>{`${l.who ? `${l.who}: ` : ''}${l.source}: ${fmtNum(l.total)} ${basis}`}</title>
            </path>
          ))}
        </g>
      ) : (
        <NoData x={(box.x0 + box.x1) / 2} y={(box.y0 + box.y1) / 2} text="no particles from any source" />
      )}
      {(input.markers ?? [])
        .filter((m) => m.atM >= xDomain[0] && m.atM <= xDomain[1])
        .map((m) => {
          const mx = r(x(m.atM));
          // The label reads to the right of its line unless it would leave the plot.
          const left = mx + 3 + textWidth(m.label) > box.x1;
          return (
            <g class="vc-marker">
              <line
                x1={mx}
                x2={mx}
                y1={box.y0}
                y2={box.y1}
                stroke="#18202e"
                stroke-width="1"
                stroke-dasharray="5 3"
              />
              <text x={left ? mx - 3 : mx + 3} y={box.y0 + 10} text-anchor={left ? 'end' : undefined}>
                {m.label}
              </text>
            </g>
          );
        })}
      <Legend
        x={box.x0}
        y={box.y1 + X_AXIS_DEPTH + 4}
        heading={
          bySide ? fitText(outlineKey(layers.map((l) => l.side)), box.x1 - box.x0, FONT_PX, true) : undefined
        }
        rowHeight={LEGEND_ROW}
        entries={layers.map((l) => ({
          label: legendLabel(l),
          swatch: (
            <rect
              class="vc-legend-swatch"
              data-wafer={l.side ?? undefined}
              x={0.75}
              y={0.75}
              width={14}
              height={11}
              fill={seriesFill(l.pid, l.style)}
              fill-opacity={l.style.pattern === 'solid' ? 0.75 : 1}
              stroke={l.style.colour}
              stroke-width={l.dash ? 1.5 : 1}
              stroke-dasharray={l.dash}
            />
          ),
        }))}
      />
    </ChartSvg>
  );
}

/**
 * The numbers behind the chart: each source's values at the chart's x positions (per bin, or
 * N(≥ edge) at each edge for the cumulative mode) and the d3 stack of them, bottom to top in
 * the order given. Negative and non-finite bins count as 0.
 */
export function stackSpectrum(series: SpectrumSeries[], mode: 'per-bin' | 'cumulative', binCount: number) {
  const perSource = series.map((s) => {
    const c = Array.from({ length: binCount }, (_, i) => {
      const v = Number(s.counts[i] ?? 0);
      return Number.isFinite(v) && v > 0 ? v : 0;
    });
    if (mode === 'per-bin') return c;
    // N(≥ edge_i) = Σ_{j ≥ i} c_j for each edge; the last edge carries 0.
    const cum = new Array<number>(binCount + 1).fill(0);
    for (let i = binCount - 1; i >= 0; i--) cum[i] = cum[i + 1]! + c[i]!;
    return cum;
  });
  const npts = mode === 'per-bin' ? binCount : binCount + 1;
  const keys = series.map((_, k) => `s${k}`);
  const rows = Array.from({ length: npts }, (_, i) => {
    const row: Record<string, number> = {};
    keys.forEach((k, j) => {
      row[k] = perSource[j]![i]!;
    });
    return row;
  });
  const stacked = stack<Record<string, number>>().keys(keys)(rows);
  return { perSource, stacked };
}

/** The legend's heading: which outline means which wafer, for the outlines the chart uses. */
function outlineKey(sides: ('top' | 'bottom' | null)[]): string {
  const parts = [
    sides.includes('bottom') ? 'solid bottom wafer' : null,
    sides.includes('top') ? 'dashed top wafer' : null,
    sides.includes(null) ? 'dotted both or pooled' : null,
  ].filter((p) => p !== null);
  return `Outline: ${parts.join(' · ')}`;
}

function sum(a: number[]): number {
  let t = 0;
  for (const v of a) t += v;
  return t;
}
