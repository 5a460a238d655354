/**
 * Rigid motions and mirrors of defect positions in a wafer frame: the pure transforms that bring two
 * scans (or the two wafers of a bonded pair) into one frame before their defects are matched
 * (methods.md §1 of the project reference).
 *
 * The scans import already maps every file's declared convention (origin, axis directions, view
 * side, notch) into the internal frame (origin at the wafer centre, x right, y up, notch down, seen
 * from the front; metres), so two stored scans of one wafer share a frame up to the scanner's stage
 * offset. These functions serve what remains: removing an estimated stage offset, turning a frame,
 * and mirroring the top wafer of a pair into the bond frame (its front faces down).
 *
 * Each function returns new arrays and never changes its input.
 */
import { ModelInputError, requireNumber } from '../errors.ts';

/** Defect positions, columnar, metres. */
export interface PointColumns {
  count: number;
  xM: Float64Array;
  yM: Float64Array;
}

function requirePoints(fn: string, p: PointColumns): number {
  if (
    typeof p !== 'object' ||
    p === null ||
    !(p.xM instanceof Float64Array) ||
    !(p.yM instanceof Float64Array)
  )
    throw new ModelInputError(
      fn,
      'points',
      'm',
      'an object { count, xM: Float64Array, yM: Float64Array }',
      p,
    );
  const n = requireNumber(fn, 'points.count', p.count, '', {
    min: 0,
    max: Math.min(p.xM.length, p.yM.length),
    integer: true,
  });
  return n;
}

/**
 * Mirror of positions about an axis of the frame through the centre.
 *
 * Formula: axis 'y' (flip about the y axis): (x, y) → (−x, y); axis 'x': (x, y) → (x, −y).
 * A wafer turned face-down about its y axis (as the top wafer of a bonded pair, src/engine/geometry.ts
 * flipAxis 'y') maps with axis 'y'. The distance from the centre is kept and mirroring twice about
 * the same axis returns every point (exact in floating point).
 *
 * @param points positions, m (count ≤ the arrays' length)
 * @param axis 'x' or 'y', the mirror line
 * @returns new PointColumns of the same count
 * @throws ModelInputError for a malformed point set or axis
 * @example mirrorPoints({ count: 1, xM: Float64Array.of(0.01), yM: Float64Array.of(0.02) }, 'y')
 *          // { xM: [-0.01], yM: [0.02] }
 */
export function mirrorPoints(points: PointColumns, axis: 'x' | 'y'): PointColumns {
  const fn = 'mirrorPoints';
  const n = requirePoints(fn, points);
  if (axis !== 'x' && axis !== 'y') throw new ModelInputError(fn, 'axis', '', 'one of x, y', axis);
  const sx = axis === 'y' ? -1 : 1;
  const sy = axis === 'x' ? -1 : 1;
  const xM = new Float64Array(n);
  const yM = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    xM[i] = sx * points.xM[i]!;
    yM[i] = sy * points.yM[i]!;
  }
  return { count: n, xM, yM };
}

/**
 * Rotation of positions about the wafer centre, counter-clockwise by `angleRad`.
 *
 * Formula: x' = x cos θ − y sin θ, y' = x sin θ + y cos θ (θ in radians). Whole quarter turns
 * (θ = k·π/2 to within 10⁻¹²) use the exact values 0 and ±1, so a notch moved by 90° maps grid
 * coordinates without rounding noise.
 *
 * @param points positions, m
 * @param angleRad θ, rad, finite with |θ| ≤ 100
 * @returns new PointColumns
 * @throws ModelInputError for a malformed point set or a non-finite angle
 * @example rotatePoints({ count: 1, xM: Float64Array.of(0.01), yM: Float64Array.of(0) }, Math.PI / 2)
 *          // { xM: [0], yM: [0.01] }
 */
export function rotatePoints(points: PointColumns, angleRad: number): PointColumns {
  const fn = 'rotatePoints';
  const n = requirePoints(fn, points);
  requireNumber(fn, 'angleRad', angleRad, 'rad', { min: -100, max: 100 });
  const [c, s] = cosSinExact(angleRad);
  const xM = new Float64Array(n);
  const yM = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    const x = points.xM[i]!;
    const y = points.yM[i]!;
    xM[i] = c * x - s * y;
    yM[i] = s * x + c * y;
  }
  return { count: n, xM, yM };
}

/** cos θ and sin θ, exact at whole quarter turns. */
function cosSinExact(theta: number): [number, number] {
  const quarters = theta / (Math.PI / 2);
  const k = Math.round(quarters);
  if (Math.abs(quarters - k) < 1e-12) {
    const q = ((k % 4) + 4) % 4;
    return (
      [
        [1, 0],
        [0, 1],
        [-1, 0],
        [0, -1],
      ] as const
    )[q] as [number, number];
  }
  return [Math.cos(theta), Math.sin(theta)];
}

/**
 * Translation of positions (a stage offset added, or removed with the opposite sign).
 *
 * Formula: (x, y) → (x + Δx, y + Δy).
 *
 * @param points positions, m
 * @param dxM Δx, m, finite, |Δx| ≤ 1
 * @param dyM Δy, m, finite, |Δy| ≤ 1
 * @returns new PointColumns
 * @throws ModelInputError for a malformed point set or offset
 * @example translatePoints({ count: 1, xM: Float64Array.of(0.01), yM: Float64Array.of(0) }, -0.001, 0.002)
 *          // { xM: [0.009], yM: [0.002] }
 */
export function translatePoints(points: PointColumns, dxM: number, dyM: number): PointColumns {
  const fn = 'translatePoints';
  const n = requirePoints(fn, points);
  requireNumber(fn, 'dxM', dxM, 'm', { min: -1, max: 1 });
  requireNumber(fn, 'dyM', dyM, 'm', { min: -1, max: 1 });
  const xM = new Float64Array(n);
  const yM = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    xM[i] = points.xM[i]! + dxM;
    yM[i] = points.yM[i]! + dyM;
  }
  return { count: n, xM, yM };
}
