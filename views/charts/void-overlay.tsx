/**
 * voidOverlay — a bonded pair's observed voids drawn over the predicted discs of its scanned
 * particles, in the bond frame (the bottom wafer's; the top wafer's particles already mirrored onto
 * it), as calibration matched them.
 *
 * Told apart by shape as well as colour, so the map reads in greyscale:
 * - predicted disc of a scanned particle: a thin dashed circle to scale (its opacity the particle's
 *   survival probability);
 * - explained void: a filled circle, joined to its particle by a short line;
 * - unexplained void: a filled square;
 * - void in the edge exclusion (left out of the counts): a hollow triangle;
 * - not seen (a reportable predicted disc without a void): a hollow circle with an × at its centre.
 * Observed voids are drawn at their equivalent diameter, at least 3 px across so that a 0.1 mm void
 * on a 300 mm wafer stays visible (the legend says so).
 */
import { ChartSvg, fmtPct, Legend, r, safeId } from './svg.tsx';
import { toPx, type WaferGeometry, WaferOutline, waferFrame } from './wafer-frame.tsx';

export interface OverlayDisc {
  xMm: number;
  yMm: number;
  radiusMm: number;
  survival: number;
  /** The predicted void is at least the inspection's smallest void. */
  reportable: boolean;
  /** Matched to an observed void. */
  matched: boolean;
  label?: string;
}

export interface OverlayVoid {
  xMm: number;
  yMm: number;
  diameterMm: number;
  match: 'explained' | 'unexplained' | 'edge-exclusion';
  /** For an explained void, its particle's position, mm. */
  particle?: { xMm: number; yMm: number };
  label?: string;
}

export interface VoidOverlayInput extends WaferGeometry {
  title: string;
  discs: OverlayDisc[];
  voids: OverlayVoid[];
  /** Words for the frame (e.g. "bond frame: bottom wafer, top mirrored onto it"). */
  frameNote?: string;
  id?: string;
  sizePx?: number;
}

const DISC = '#7c8da3';
const EXPLAINED = '#1f6f8b';
const UNEXPLAINED = '#c98a12';
const EDGE = '#5d6472';
const NOT_SEEN = '#b3261e';
const MIN_PX = 1.5;

export function voidOverlay(input: VoidOverlayInput) {
  const id = safeId(input.id ?? `vo-${input.title}`);
  const size = input.sizePx ?? 340;
  const legendW = 246;
  const top = 24;
  const width = size + legendW + 16;
  const height = Math.max(size + top + 12, 250);
  const f = waferFrame(input, 8 + size / 2, top + size / 2, size, 'none');
  const ok = (v: { xMm: number; yMm: number }) => Number.isFinite(v.xMm) && Number.isFinite(v.yMm);
  const discs = input.discs.filter(ok);
  const voids = input.voids.filter(ok);
  const count = (m: OverlayVoid['match']) => voids.filter((v) => v.match === m).length;
  const notSeen = discs.filter((d) => d.reportable && !d.matched);
  const nExpl = count('explained');
  const nUnexpl = count('unexplained');
  const nEdge = count('edge-exclusion');
  const desc =
    `${voids.length} observed void${voids.length === 1 ? '' : 's'}: ${nExpl} explained by a scanned particle (circles), ` +
    `${nUnexpl} unexplained (squares), ${nEdge} in the edge exclusion (triangles); ` +
    `${discs.length} predicted discs of scanned particles (dashed circles), ${notSeen.length} reportable but not seen (circles with ×)` +
    (input.frameNote ? `; ${input.frameNote}` : '') +
    '.';
  const px = (mm: number) => Math.max(mm * f.k, MIN_PX);
  const lx = size + 26;
  return (
    <ChartSvg kind="void-overlay" id={id} width={width} height={height} title={input.title} desc={desc}>
      {input.frameNote ? (
        <text class="vc-frame-note" x={8} y={15}>
          {input.frameNote}
        </text>
      ) : null}
      <WaferOutline f={f} geometry={input} idPrefix={id} />
      <g class="vc-predicted-discs" clip-path={`url(#${id}-clip)`}>
        {[...discs]
          .sort((a, b) => b.radiusMm - a.radiusMm)
          .map((d) => {
            const [x, y] = toPx(f, d.xMm, d.yMm);
            const s = Math.min(1, Math.max(0, d.survival));
            return (
              <circle
                class="vc-mark vc-predicted"
                data-reportable={d.reportable ? 'true' : 'false'}
                cx={r(x)}
                cy={r(y)}
                r={r(Math.max(d.radiusMm * f.k, 0.6))}
                fill={DISC}
                fill-opacity={r(s * 0.25 * 100) / 100}
                stroke={DISC}
                stroke-opacity={Math.max(0.4, s)}
                stroke-width="0.7"
                stroke-dasharray="2 1.5"
              >
                <title>{`predicted void r = ${d.radiusMm.toFixed(3)} mm at (${d.xMm.toFixed(1)}, ${d.yMm.toFixed(1)}) mm, survival ${fmtPct(s)}${d.label ? `; ${d.label}` : ''}`}</title>
              </circle>
            );
          })}
      </g>
      <g class="vc-not-seen" clip-path={`url(#${id}-clip)`}>
        {notSeen.map((d) => {
          const [x, y] = toPx(f, d.xMm, d.yMm);
          const rr = Math.max(d.radiusMm * f.k, 3);
          return (
            <g class="vc-mark vc-void-not-seen" data-match="not-seen">
              <circle cx={r(x)} cy={r(y)} r={r(rr)} fill="none" stroke={NOT_SEEN} stroke-width="1.1" />
              <path
                d={`M${r(x - 2.5)},${r(y - 2.5)} l5,5 M${r(x - 2.5)},${r(y + 2.5)} l5,-5`}
                stroke={NOT_SEEN}
                stroke-width="1.1"
              />
              <title>{`not seen: predicted r = ${d.radiusMm.toFixed(3)} mm at (${d.xMm.toFixed(1)}, ${d.yMm.toFixed(1)}) mm, survival ${fmtPct(d.survival)}`}</title>
            </g>
          );
        })}
      </g>
      <g class="vc-observed">
        {voids.map((v) => {
          const [x, y] = toPx(f, v.xMm, v.yMm);
          const rr = px(v.diameterMm / 2);
          const tip = `${v.match === 'explained' ? 'explained' : v.match === 'unexplained' ? 'unexplained' : 'in the edge exclusion'} void ⌀ ${v.diameterMm.toFixed(3)} mm at (${v.xMm.toFixed(1)}, ${v.yMm.toFixed(1)}) mm${v.label ? `; ${v.label}` : ''}`;
          if (v.match === 'explained') {
            const [qx, qy] = v.particle ? toPx(f, v.particle.xMm, v.particle.yMm) : [x, y];
            return (
              <g class="vc-mark vc-void-explained" data-match="explained">
                <line x1={r(qx)} y1={r(qy)} x2={r(x)} y2={r(y)} stroke={EXPLAINED} stroke-width="1" />
                <circle cx={r(x)} cy={r(y)} r={r(rr)} fill={EXPLAINED} stroke="#18202e" stroke-width="0.6" />
                <title>{tip}</title>
              </g>
            );
          }
          if (v.match === 'unexplained')
            return (
              <g class="vc-mark vc-void-unexplained" data-match="unexplained">
                <rect
                  x={r(x - rr)}
                  y={r(y - rr)}
                  width={r(2 * rr)}
                  height={r(2 * rr)}
                  fill={UNEXPLAINED}
                  stroke="#18202e"
                  stroke-width="0.6"
                />
                <title>{tip}</title>
              </g>
            );
          const t = Math.max(rr, 2.5);
          return (
            <g class="vc-mark vc-void-edge" data-match="edge-exclusion">
              <path
                d={`M${r(x)},${r(y - t)} L${r(x + t)},${r(y + t)} L${r(x - t)},${r(y + t)} Z`}
                fill="none"
                stroke={EDGE}
                stroke-width="1.1"
              />
              <title>{tip}</title>
            </g>
          );
        })}
      </g>
      <Legend
        x={lx}
        y={top + 4}
        heading="Observed voids"
        rowHeight={19}
        entries={[
          {
            label: `explained (${nExpl})`,
            swatch: <circle cx={7} cy={6} r={5} fill={EXPLAINED} stroke="#18202e" stroke-width="0.6" />,
          },
          {
            label: `unexplained (${nUnexpl})`,
            swatch: (
              <rect
                x={2}
                y={1}
                width={10}
                height={10}
                fill={UNEXPLAINED}
                stroke="#18202e"
                stroke-width="0.6"
              />
            ),
          },
          {
            label: `edge exclusion, not counted (${nEdge})`,
            swatch: <path d="M7,0 L13,12 L1,12 Z" fill="none" stroke={EDGE} stroke-width="1.1" />,
          },
        ]}
      />
      <Legend
        x={lx}
        y={top + 4 + 14 + 3 * 19 + 12}
        heading="Predicted from scanned particles"
        rowHeight={19}
        entries={[
          {
            label: `disc to scale (${discs.length})`,
            swatch: (
              <circle
                cx={7}
                cy={6}
                r={6}
                fill={DISC}
                fill-opacity="0.25"
                stroke={DISC}
                stroke-dasharray="2 1.5"
              />
            ),
          },
          {
            label: `reportable, not seen (${notSeen.length})`,
            swatch: (
              <g>
                <circle cx={7} cy={6} r={5.5} fill="none" stroke={NOT_SEEN} stroke-width="1.1" />
                <path d="M4.5,3.5 l5,5 M4.5,8.5 l5,-5" stroke={NOT_SEEN} stroke-width="1.1" />
              </g>
            ),
          },
        ]}
      />
      <text class="vc-overlay-note" x={lx} y={top + 4 + 14 + 3 * 19 + 12 + 14 + 2 * 19 + 16}>
        {`voids ≥ ${MIN_PX * 2} px across, to scale when larger`}
      </text>
    </ChartSvg>
  );
}
