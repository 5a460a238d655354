/**
 * The stage offset between two scans of one wafer and the positioning error between them, both from
 * the "confident" matches — pairs of defects that are each other's only candidate within a search
 * radius (methods.md §1 of the project reference: the offset as the median displacement of
 * confident matches).
 */
import { ModelInputError, requireNumber, requirePositive } from '../errors.ts';
import { PointGrid } from './grid.ts';

/** Median of the first n entries (copied and sorted). */
function median(values: Float64Array, n: number): number {
  const v = values.slice(0, n).sort();
  return n % 2 === 1 ? v[(n - 1) / 2]! : 0.5 * (v[n / 2 - 1]! + v[n / 2]!);
}

/**
 * Stage offset between two scans: the median displacement (after − before, x and y separately)
 * of the confident matches within `searchRadiusM` — pairs in which each defect is the other's only
 * candidate within that radius. Returns the offset and the number of confident matches.
 */
export function estimateStageOffset(
  before: { count: number; xM: Float64Array; yM: Float64Array },
  after: { count: number; xM: Float64Array; yM: Float64Array },
  searchRadiusM: number,
): StageOffsetEstimate {
  const fn = 'estimateStageOffset';
  requirePositive(fn, 'searchRadiusM', searchRadiusM, 'm');
  const nb = before.count;
  const na = after.count;
  const none = {
    dxM: 0,
    dyM: 0,
    confidentMatches: 0,
    displacementXM: new Float64Array(0),
    displacementYM: new Float64Array(0),
  };
  if (nb === 0 || na === 0) return none;
  const gridA = new PointGrid(after.xM, after.yM, na, searchRadiusM);
  const gridB = new PointGrid(before.xM, before.yM, nb, searchRadiusM);
  const dx = new Float64Array(Math.min(nb, na));
  const dy = new Float64Array(Math.min(nb, na));
  let n = 0;
  let only = -1;
  const keep = (j: number) => {
    only = j;
  };
  for (let k = 0; k < nb; k++) {
    const i = gridB.order[k]!;
    const x = before.xM[i]!;
    const y = before.yM[i]!;
    if (gridA.forEachWithin(x, y, searchRadiusM, keep) !== 1) continue;
    const j = only;
    if (gridB.forEachWithin(after.xM[j]!, after.yM[j]!, searchRadiusM, () => {}) !== 1) continue;
    dx[n] = after.xM[j]! - x;
    dy[n] = after.yM[j]! - y;
    n++;
  }
  if (n === 0) return none;
  return {
    dxM: median(dx, n),
    dyM: median(dy, n),
    confidentMatches: n,
    displacementXM: dx.slice(0, n),
    displacementYM: dy.slice(0, n),
  };
}

/** What estimateStageOffset finds. */
export interface StageOffsetEstimate {
  /** Median displacement after − before of the confident matches, m (0 with none). */
  dxM: number;
  dyM: number;
  confidentMatches: number;
  /** The displacements of the confident matches, m. */
  displacementXM: Float64Array;
  displacementYM: Float64Array;
}

/**
 * Positioning error between two scans, per axis, from the displacements of confident matches:
 * a robust standard deviation (1.4826 × the median absolute deviation; Hampel, JASA 69 (1974)
 * 383 — 1.4826 makes it the SD of a normal law) of the displacements after each group's median
 * (its stage offset) is removed, x and y pooled.
 *
 * Formula: rᵢ = Δᵢ − median(Δ of its group) for a group of at least `minForOffset` displacements
 * (the groups whose stage offset matchScans removes), rᵢ = Δᵢ for a smaller group (no offset is
 * removed there, and the median of a few would absorb part of the spread); σ̂ = 1.4826 · median |rᵢ|
 * over x and y of every group. A group is one pair of scans (estimateStageOffset's
 * displacementXM/YM). Robust to a few chance "confident" pairs; biased low when σ is not small
 * against the search radius (truncation), and by about 1/(2n) relatively for groups of n.
 *
 * @param groups per pair of scans, the displacements { displacementXM, displacementYM }, m
 * @param minForOffset smallest group whose median is removed (default 5, as matchScans' minConfidentMatches)
 * @returns σ̂ per axis, m, and the number of displacements it rests on (x and y each counted once)
 * @throws ModelInputError when there is no displacement at all or one is not finite
 * @example positionSigmaFromDisplacements([{ displacementXM: Float64Array.of(-1, 0, 1), displacementYM: Float64Array.of(2, 3, 4) }], 1)
 *          // { sigmaM: 1.4826, n: 3 } (minForOffset 1: each axis's median removed)
 */
export function positionSigmaFromDisplacements(
  groups: readonly { displacementXM: Float64Array; displacementYM: Float64Array }[],
  minForOffset = 5,
): { sigmaM: number; n: number } {
  const fn = 'positionSigmaFromDisplacements';
  requireNumber(fn, 'minForOffset', minForOffset, '', { min: 1, integer: true });
  let total = 0;
  for (const g of groups) total += g.displacementXM.length;
  if (total === 0) throw new ModelInputError(fn, 'groups', 'm', 'at least one displacement', 0);
  const abs = new Float64Array(2 * total);
  let k = 0;
  groups.forEach((g, gi) => {
    const n = g.displacementXM.length;
    if (n === 0) return;
    for (const [axis, v] of [
      ['X', g.displacementXM],
      ['Y', g.displacementYM],
    ] as const) {
      for (let i = 0; i < n; i++)
        if (!Number.isFinite(v[i]!)) requireNumber(fn, `groups[${gi}].displacement${axis}M[${i}]`, v[i], 'm');
      const m = n >= minForOffset ? median(v, n) : 0;
      for (let i = 0; i < n; i++) abs[k++] = Math.abs(v[i]! - m);
    }
  });
  return { sigmaM: 1.4826 * median(abs, k), n: total };
}
