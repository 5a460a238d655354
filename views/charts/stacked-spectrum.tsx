/**
 * stackedSpectrum — a particle size spectrum stacked by source.
 *
 * x: particle diameter on a log axis; y: expected count per bin (step areas, one step per bin
 * of the spectrum grid) or the cumulative count N(≥ d) (areas through the bin edges, straight
 * in log–log, i.e. power-law between edges), on a log axis. Sources are stacked in the order
 * given; each has its own pattern as well as colour, and the legend gives each source's total.
 * Log y cannot show zero: the axis starts six decades below the largest stacked value and
 * anything below is drawn on the floor, which the description says.
 */
import { scaleLog } from 'd3-scale';
import { area, curveLinear, curveStepAfter, stack } from 'd3-shape';
import { SPECTRUM_EDGES_M } from '../../src/model/spectrum.ts';
import {
  ChartSvg,
  clip,
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
  XAxis,
  YAxis,
} from './svg.tsx';

export interface SpectrumSeries {
  source: string;
  /** Expected count per bin, smallest size first (one value per bin between consecutive edges). */
  counts: ArrayLike<number>;
}

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
  const legendRows = input.series.length;
  const width = input.width ?? 560;
  const height = (input.height ?? 300) + legendRows * 16;
  const frame = { width, height, margin: { top: 14, right: 26, bottom: 50 + legendRows * 16, left: 66 } };
  const box = innerBox(frame);
  const basis = input.basis ?? 'particles per wafer';

  const { perSource, stacked } = stackSpectrum(input.series, mode, nb);
  const totals = (stacked[0] ?? []).map((_, i) => stacked.reduce((m, layer) => Math.max(m, layer[i]![1]), 0));
  const yMaxRaw = Math.max(0, ...totals);
  const hasData = yMaxRaw > 0;

  // x domain: the bins that carry something, widened to whole decades.
  const significant = totals.map((t, i) => (t > yMaxRaw * 10 ** -Y_DECADES ? i : -1)).filter((i) => i >= 0);
  const lo = hasData ? edges[significant[0]!]! : edges[0]!;
  const hi = hasData ? edges[Math.min(significant.at(-1)! + 1, nb)]! : edges[nb]!;
  const xDomain: [number, number] = [
    Math.max(edges[0]!, 10 ** Math.floor(Math.log10(lo) + 1e-9)),
    Math.min(edges[nb]!, 10 ** Math.ceil(Math.log10(hi) - 1e-9)),
  ];
  const x = scaleLog().domain(xDomain).range([box.x0, box.x1]).clamp(true);
  const yTop = hasData ? 10 ** Math.ceil(Math.log10(yMaxRaw) - 1e-9) : 1;
  const yFloor = yTop * 10 ** -Y_DECADES;
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
    return { k, d: shape(pts) ?? '', style, pid, total, source: input.series[k]!.source };
  });

  const yLabel = mode === 'per-bin' ? `${basis} per size bin` : `${basis} ≥ d`;
  const desc = hasData
    ? `${mode === 'per-bin' ? 'Count per size bin' : 'Cumulative count above each size'} in ${basis}, stacked by source: ` +
      layers.map((l) => `${l.source} ${fmtNum(l.total)}`).join('; ') +
      `. Log axes; values below ${fmtNum(yFloor)} are drawn on the axis floor.`
    : 'No particles in any source.';
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
              d={l.d}
              fill={seriesFill(l.pid, l.style)}
              fill-opacity={l.style.pattern === 'solid' ? 0.75 : 1}
              stroke={l.style.colour}
              stroke-width="1"
            >
              <title>{`${l.source}: ${fmtNum(l.total)} ${basis}`}</title>
            </path>
          ))}
        </g>
      ) : (
        <NoData x={(box.x0 + box.x1) / 2} y={(box.y0 + box.y1) / 2} text="no particles from any source" />
      )}
      {(input.markers ?? [])
        .filter((m) => m.atM >= xDomain[0] && m.atM <= xDomain[1])
        .map((m) => (
          <g class="vc-marker">
            <line
              x1={r(x(m.atM))}
              x2={r(x(m.atM))}
              y1={box.y0}
              y2={box.y1}
              stroke="#18202e"
              stroke-width="1"
              stroke-dasharray="5 3"
            />
            <text x={r(x(m.atM)) + 3} y={box.y0 + 10}>
              {m.label}
            </text>
          </g>
        ))}
      <Legend
        x={box.x0}
        y={box.y1 + 40}
        entries={layers.map((l) => ({
          label: `${clip(l.source, Math.floor((box.x1 - box.x0) / 6.4) - 12)} — ${fmtNum(l.total)}`,
          swatch: (
            <rect
              x={0}
              y={0}
              width={14}
              height={12}
              fill={seriesFill(l.pid, l.style)}
              fill-opacity={l.style.pattern === 'solid' ? 0.75 : 1}
              stroke={l.style.colour}
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

function sum(a: number[]): number {
  let t = 0;
  for (const v of a) t += v;
  return t;
}
