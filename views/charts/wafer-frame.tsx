/**
 * The wafer frame shared by the wafer map and the void map: wafer coordinates (mm, origin at
 * the centre, x to the right, y up, as a scan file states them after normalisation) mapped to
 * pixels, optionally mirrored, and the outline with its notch and edge-exclusion ring.
 *
 * Mirroring: the top wafer of a pair is flipped onto the bottom one. Seen from the bond
 * interface, a wafer flipped about its y axis shows x → −x; flipped about its x axis, y → −y.
 * The notch direction mirrors with it (θ → 180° − θ about y, θ → −θ about x).
 */
import { scaleLinear } from 'd3-scale';
import { r } from './svg.tsx';

export type MirrorAxis = 'none' | 'x' | 'y';

export interface WaferGeometry {
  diameterMm: number;
  /** Direction of the notch from the centre, degrees counter-clockwise from +x (270 = bottom). */
  notchAngleDeg?: number;
  edgeExclusionMm?: number;
}

export interface FramePx {
  cx: number;
  cy: number;
  /** Pixels per millimetre. */
  k: number;
  mirror: MirrorAxis;
  radiusMm: number;
}

/** Builds the mm → px mapping for a wafer drawn in a square of `sizePx` centred at (cx, cy). */
export function waferFrame(
  g: WaferGeometry,
  cx: number,
  cy: number,
  sizePx: number,
  mirror: MirrorAxis,
): FramePx {
  const radiusMm = g.diameterMm / 2;
  // d3-scale for the mapping so the same rule serves every wafer size.
  const k = scaleLinear()
    .domain([0, g.diameterMm * 1.04])
    .range([0, sizePx])(1);
  return { cx, cy, k, mirror, radiusMm };
}

/** Wafer (x, y) in mm to pixel (X, Y), with the frame's mirror applied. */
export function toPx(f: FramePx, xMm: number, yMm: number): [number, number] {
  const x = f.mirror === 'y' ? -xMm : xMm;
  const y = f.mirror === 'x' ? -yMm : yMm;
  return [f.cx + x * f.k, f.cy - y * f.k];
}

/** The notch angle as seen in the frame (degrees). */
export function shownNotchAngle(f: FramePx, notchAngleDeg: number): number {
  if (f.mirror === 'y') return 180 - notchAngleDeg;
  if (f.mirror === 'x') return -notchAngleDeg;
  return notchAngleDeg;
}

/**
 * The wafer outline as a path: a circle with a V notch. A SEMI notch is about 1 mm deep and
 * 3 mm wide on 200/300 mm wafers; it is drawn enlarged (2.5 % of the radius deep) so that it
 * stays visible at chart size, which the legend says.
 */
export function outlinePath(f: FramePx, notchAngleDeg: number): string {
  const R = f.radiusMm * f.k;
  const th = (shownNotchAngle(f, notchAngleDeg) * Math.PI) / 180;
  const depth = Math.max(R * 0.025, 3);
  const half = Math.max(depth / R, 0.02);
  // Screen angle: y is flipped, so a wafer angle θ points to (cos θ, −sin θ) on screen.
  const pt = (a: number, rad: number) => [f.cx + rad * Math.cos(a), f.cy - rad * Math.sin(a)] as const;
  const [ax, ay] = pt(th + half, R);
  const [bx, by] = pt(th - half, R);
  const [tx, ty] = pt(th, R - depth);
  // From the corner after the notch, the long way round (large-arc) to the corner before it.
  return `M${r(ax)},${r(ay)} A${r(R)},${r(R)} 0 1 0 ${r(bx)},${r(by)} L${r(tx)},${r(ty)} Z`;
}

/** The outline, the edge-exclusion ring (shaded annulus + dashed inner edge) and a centre cross. */
export function WaferOutline(props: { f: FramePx; geometry: WaferGeometry; idPrefix: string }) {
  const { f, geometry } = props;
  const R = f.radiusMm * f.k;
  const ee = Math.max(0, Math.min(geometry.edgeExclusionMm ?? 0, f.radiusMm));
  const Ri = (f.radiusMm - ee) * f.k;
  const notch = geometry.notchAngleDeg ?? 270;
  const clipId = `${props.idPrefix}-clip`;
  return (
    <g class="vc-wafer">
      <defs>
        <clipPath id={clipId}>
          <path d={outlinePath(f, notch)} />
        </clipPath>
        <pattern id={`${props.idPrefix}-ee`} patternUnits="userSpaceOnUse" width="5" height="5">
          <rect width="5" height="5" fill="#eeece6" />
          <path d="M0,5 l5,-5" stroke="#c9c5b9" stroke-width="1" />
        </pattern>
      </defs>
      <path
        class="vc-wafer-outline"
        d={outlinePath(f, notch)}
        fill="#fdfcf9"
        stroke="#2c3648"
        stroke-width="1.5"
      />
      {ee > 0 ? (
        <path
          class="vc-edge-exclusion"
          d={`M${r(f.cx - R)},${r(f.cy)} a${r(R)},${r(R)} 0 1 0 ${r(2 * R)},0 a${r(R)},${r(R)} 0 1 0 ${r(-2 * R)},0 Z M${r(f.cx - Ri)},${r(f.cy)} a${r(Ri)},${r(Ri)} 0 1 1 ${r(2 * Ri)},0 a${r(Ri)},${r(Ri)} 0 1 1 ${r(-2 * Ri)},0 Z`}
          fill={`url(#${props.idPrefix}-ee)`}
          fill-rule="evenodd"
          clip-path={`url(#${clipId})`}
          data-edge-exclusion-mm={ee}
        />
      ) : null}
      {ee > 0 ? (
        <circle
          class="vc-edge-exclusion-line"
          cx={r(f.cx)}
          cy={r(f.cy)}
          r={r(Ri)}
          fill="none"
          stroke="#8a8f99"
          stroke-width="0.8"
          stroke-dasharray="4 3"
        />
      ) : null}
      <path
        class="vc-wafer-centre"
        d={`M${r(f.cx - 4)},${r(f.cy)} h8 M${r(f.cx)},${r(f.cy - 4)} v8`}
        stroke="#b9b5aa"
        stroke-width="0.8"
      />
    </g>
  );
}

/** A die rectangle: lower-left corner (x, y) and size in mm, wafer frame. */
export interface DieRect {
  xMm: number;
  yMm: number;
  wMm: number;
  hMm: number;
}

/** The pixel rectangle of a die in the frame (mirroring moves the corner). */
export function dieToPx(f: FramePx, d: DieRect): { x: number; y: number; w: number; h: number } {
  const [ax, ay] = toPx(f, d.xMm, d.yMm);
  const [bx, by] = toPx(f, d.xMm + d.wMm, d.yMm + d.hMm);
  return { x: Math.min(ax, bx), y: Math.min(ay, by), w: Math.abs(bx - ax), h: Math.abs(by - ay) };
}

/**
 * The dies of a rectangular stepping grid that lie wholly inside the usable disc (radius minus
 * edge exclusion). Display layout only: grid origin at the wafer centre shifted by the offset,
 * one die per pitch cell, the die drawn at the cell's lower-left corner.
 */
export function layoutDies(opts: {
  diameterMm: number;
  edgeExclusionMm: number;
  dieWidthMm: number;
  dieHeightMm: number;
  pitchXMm?: number;
  pitchYMm?: number;
  offsetXMm?: number;
  offsetYMm?: number;
}): DieRect[] {
  const px = opts.pitchXMm ?? opts.dieWidthMm;
  const py = opts.pitchYMm ?? opts.dieHeightMm;
  if (!(px > 0 && py > 0 && opts.dieWidthMm > 0 && opts.dieHeightMm > 0)) return [];
  const usable = opts.diameterMm / 2 - opts.edgeExclusionMm;
  const ox = opts.offsetXMm ?? 0;
  const oy = opts.offsetYMm ?? 0;
  const n = Math.ceil(opts.diameterMm / Math.min(px, py)) + 2;
  const out: DieRect[] = [];
  const inside = (x: number, y: number) => x * x + y * y <= usable * usable + 1e-9;
  for (let j = -n; j <= n; j++)
    for (let i = -n; i <= n; i++) {
      const x = ox + i * px;
      const y = oy + j * py;
      const w = opts.dieWidthMm;
      const h = opts.dieHeightMm;
      if (inside(x, y) && inside(x + w, y) && inside(x, y + h) && inside(x + w, y + h))
        out.push({ xMm: x, yMm: y, wMm: w, hMm: h });
    }
  return out;
}
