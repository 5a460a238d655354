/**
 * removalCurve — a clean's particle removal efficiency PRE(d) against log diameter, with the
 * measured values per size band where before/after scans gave them.
 *
 * The curve is drawn from the points given (the caller evaluates its model); a measured band is
 * a square at the band's geometric centre with a horizontal bar across the band and, when an
 * interval is known, a vertical bar over it. PRE is on a linear 0–100 % axis. Optionally: a
 * confidence band around the curve (a shaded area between its lower and upper limits) and a
 * second, typed curve drawn dashed beside a fitted one.
 */
import { scaleLinear, scaleLog } from 'd3-scale';
import { line } from 'd3-shape';
import {
  ChartSvg,
  fmtDiameter,
  fmtPct,
  innerBox,
  Legend,
  linearTicks,
  logTicks,
  NoData,
  r,
  safeId,
  XAxis,
  YAxis,
} from './svg.tsx';

export interface RemovalCurvePoint {
  diameterM: number;
  /** Removal efficiency 0…1. */
  efficiency: number;
}

export interface MeasuredBand {
  fromM: number;
  toM: number;
  efficiency: number;
  lo?: number;
  hi?: number;
  /** Particles matched before the clean in this band. */
  n?: number;
}

export interface RemovalCurveBandPoint {
  diameterM: number;
  lower: number;
  upper: number;
}

export interface RemovalCurveInput {
  title: string;
  curve: RemovalCurvePoint[];
  /** Legend words of the curve (default "model PRE(d)"). */
  curveLabel?: string;
  /** Pointwise confidence band of the curve, drawn as a shaded area. */
  band?: RemovalCurveBandPoint[];
  /** A second curve drawn dashed (the typed values beside a fitted curve). */
  typed?: RemovalCurvePoint[];
  typedLabel?: string;
  measured?: MeasuredBand[];
  xDomainM?: [number, number];
  markers?: { atM: number; label: string }[];
  id?: string;
  width?: number;
  height?: number;
}

export function removalCurve(input: RemovalCurveInput) {
  const id = safeId(input.id ?? `rc-${input.title}`);
  // A second legend row when the band or the typed curve is drawn.
  const extra = input.band?.length || input.typed?.length ? 16 : 0;
  const width = input.width ?? 520;
  const height = (input.height ?? 300) + extra;
  const frame = { width, height, margin: { top: 14, right: 28, bottom: 70 + extra, left: 60 } };
  const box = innerBox(frame);
  const curve = input.curve
    .filter((p) => p.diameterM > 0 && Number.isFinite(p.efficiency))
    .sort((a, b) => a.diameterM - b.diameterM);
  const bandPts = (input.band ?? [])
    .filter((p) => p.diameterM > 0 && Number.isFinite(p.lower) && Number.isFinite(p.upper))
    .sort((a, b) => a.diameterM - b.diameterM);
  const typedPts = (input.typed ?? [])
    .filter((p) => p.diameterM > 0 && Number.isFinite(p.efficiency))
    .sort((a, b) => a.diameterM - b.diameterM);
  const measured = (input.measured ?? []).filter(
    (m) => m.fromM > 0 && m.toM > m.fromM && Number.isFinite(m.efficiency),
  );
  const xDomain = input.xDomainM ?? [10e-9, 10e-6];
  const x = scaleLog().domain(xDomain).range([box.x0, box.x1]).clamp(true);
  const y = scaleLinear().domain([0, 1]).range([box.y1, box.y0]).clamp(true);
  const inDomain = curve.filter((p) => p.diameterM >= xDomain[0] && p.diameterM <= xDomain[1]);
  const d =
    line<RemovalCurvePoint>()
      .x((p) => x(p.diameterM))
      .y((p) => y(clamp01(p.efficiency)))(inDomain) ?? '';
  const bandIn = bandPts.filter((p) => p.diameterM >= xDomain[0] && p.diameterM <= xDomain[1]);
  const bandPath = bandIn.length
    ? `M${[...bandIn.map((p) => `${r(x(p.diameterM))},${r(y(clamp01(p.upper)))}`), ...[...bandIn].reverse().map((p) => `${r(x(p.diameterM))},${r(y(clamp01(p.lower)))}`)].join('L')}Z`
    : '';
  const typedIn = typedPts.filter((p) => p.diameterM >= xDomain[0] && p.diameterM <= xDomain[1]);
  const typedPath =
    line<RemovalCurvePoint>()
      .x((p) => x(p.diameterM))
      .y((p) => y(clamp01(p.efficiency)))(typedIn) ?? '';
  const desc =
    (inDomain.length
      ? `Removal efficiency from ${fmtPct(inDomain[0]!.efficiency)} at ${fmtDiameter(inDomain[0]!.diameterM)} to ${fmtPct(inDomain.at(-1)!.efficiency)} at ${fmtDiameter(inDomain.at(-1)!.diameterM)}`
      : 'No model curve') +
    (measured.length
      ? `; measured in ${measured.length} size band${measured.length === 1 ? '' : 's'}: ` +
        measured
          .map((m) => `${fmtDiameter(m.fromM)}–${fmtDiameter(m.toM)} ${fmtPct(m.efficiency)}`)
          .join(', ')
      : '; no measured bands') +
    (typedIn.length ? '; the typed curve drawn dashed beside it' : '') +
    '.';
  return (
    <ChartSvg kind="removal-curve" id={id} width={width} height={height} title={input.title} desc={desc}>
      <YAxis
        ticks={linearTicks([0, 0.2, 0.4, 0.6, 0.8, 1], y, (v) => `${Math.round(v * 100)} %`)}
        x={box.x0}
        y0={box.y0}
        y1={box.y1}
        label="removal efficiency"
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
      {inDomain.length === 0 && measured.length === 0 ? (
        <NoData x={(box.x0 + box.x1) / 2} y={(box.y0 + box.y1) / 2} text="no removal data" />
      ) : null}
      {(input.markers ?? [])
        .filter((m) => m.atM >= xDomain[0] && m.atM <= xDomain[1])
        .map((m) => (
          <g class="vc-marker">
            <line
              x1={r(x(m.atM))}
              x2={r(x(m.atM))}
              y1={box.y0}
              y2={box.y1}
              stroke="#5d6472"
              stroke-dasharray="5 3"
            />
            <text x={r(x(m.atM)) + 3} y={box.y1 - 6}>
              {m.label}
            </text>
          </g>
        ))}
      <g class="vc-marks">
        {bandPath ? (
          <path class="vc-curve-band" d={bandPath} fill="#1f6f8b" fill-opacity="0.18" stroke="none" />
        ) : null}
        {typedPath ? (
          <path
            class="vc-mark vc-typed"
            d={typedPath}
            fill="none"
            stroke="#5d6472"
            stroke-width="1.6"
            stroke-dasharray="6 4"
          />
        ) : null}
        {d ? <path class="vc-mark vc-curve" d={d} fill="none" stroke="#1f6f8b" stroke-width="2" /> : null}
        {measured.map((m) => {
          const cxv = Math.sqrt(m.fromM * m.toM);
          const px = r(x(cxv));
          const py = r(y(clamp01(m.efficiency)));
          return (
            <g class="vc-mark vc-band" data-from-m={m.fromM} data-to-m={m.toM}>
              <line x1={r(x(m.fromM))} x2={r(x(m.toM))} y1={py} y2={py} stroke="#18202e" stroke-width="1.2" />
              {m.lo !== undefined && m.hi !== undefined ? (
                <line
                  x1={px}
                  x2={px}
                  y1={r(y(clamp01(m.lo)))}
                  y2={r(y(clamp01(m.hi)))}
                  stroke="#18202e"
                  stroke-width="1.2"
                />
              ) : null}
              <rect
                x={px - 3.5}
                y={py - 3.5}
                width="7"
                height="7"
                fill="#c98a12"
                stroke="#18202e"
                stroke-width="1"
              />
              <title>
                {`${fmtDiameter(m.fromM)}–${fmtDiameter(m.toM)}: ${fmtPct(m.efficiency)}` +
                  (m.lo !== undefined && m.hi !== undefined
                    ? ` (interval ${fmtPct(m.lo)}–${fmtPct(m.hi)})`
                    : '') +
                  (m.n !== undefined ? `, ${m.n} particles before` : '')}
              </title>
            </g>
          );
        })}
      </g>
      <Legend
        x={box.x0}
        y={box.y1 + 42}
        columns={2}
        columnWidth={(box.x1 - box.x0) / 2}
        entries={[
          {
            label: input.curveLabel ?? 'model PRE(d)',
            swatch: <line x1={0} x2={14} y1={6} y2={6} stroke="#1f6f8b" stroke-width="2" />,
          },
          ...(bandPath
            ? [
                {
                  label: 'its 95 % band',
                  swatch: <rect x={0} y={1} width="14" height="10" fill="#1f6f8b" fill-opacity="0.18" />,
                },
              ]
            : []),
          ...(typedPath
            ? [
                {
                  label: input.typedLabel ?? 'typed PRE(d)',
                  swatch: (
                    <line
                      x1={0}
                      x2={14}
                      y1={6}
                      y2={6}
                      stroke="#5d6472"
                      stroke-width="1.6"
                      stroke-dasharray="6 4"
                    />
                  ),
                },
              ]
            : []),
          {
            label: 'measured per size band',
            swatch: (
              <g>
                <line x1={0} x2={14} y1={6} y2={6} stroke="#18202e" />
                <rect x={3.5} y={2.5} width="7" height="7" fill="#c98a12" stroke="#18202e" />
              </g>
            ),
          },
        ]}
      />
    </ChartSvg>
  );
}

function clamp01(v: number): number {
  return Math.min(1, Math.max(0, v));
}
