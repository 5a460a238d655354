/**
 * The stage offset between two scans of one wafer and the positioning error between them, both from
 * the "confident" matches — pairs of defects that are each other's only candidate within a search
 * radius (methods.md §1 of the project reference: the offset as the median displacement of
 * confident matches).
 */
import { finiteResult, ModelInputError, requireNumber, requirePositive } from '../errors.ts';
import { PointGrid } from './grid.ts';

/** Median of the first n entries (copied and sorted). */
function median(values: Float64Array, n: number): number {
  const v = values.slice(0, n).sort();
  return n % 2 === 1 ? v[(n - 1) / 2]! : 0.5 * (v[n / 2 - 1]! + v[n / 2]!);
}

/** Checks { count, xM, yM }: Float64Arrays, count an integer ≤ both lengths, the first count finite. O(count). */
function requirePositions(
  fn: string,
  name: string,
  s: unknown,
): { count: number; xM: Float64Array; yM: Float64Array } {
  if (typeof s !== 'object' || s === null)
    throw new ModelInputError(fn, name, '', 'an object { count, xM, yM }', s);
  const { count, xM, yM } = s as Record<string, unknown>;
  if (!(xM instanceof Float64Array)) throw new ModelInputError(fn, `${name}.xM`, 'm', 'a Float64Array', xM);
  if (!(yM instanceof Float64Array)) throw new ModelInputError(fn, `${name}.yM`, 'm', 'a Float64Array', yM);
  const n = requireNumber(fn, `${name}.count`, count, '', {
    min: 0,
    max: Math.min(xM.length, yM.length),
    integer: true,
  });
  for (let i = 0; i < n; i++) {
    if (!Number.isFinite(xM[i]!)) requireNumber(fn, `${name}.xM[${i}]`, xM[i], 'm');
    if (!Number.isFinite(yM[i]!)) requireNumber(fn, `${name}.yM[${i}]`, yM[i], 'm');
  }
  return { count: n, xM, yM };
}

/**
 * Stage offset between two scans: the median displacement (after − before, x and y separately)
 * of the confident matches within `searchRadiusM` — pairs in which each defect is the other's only
 * candidate within that radius. Returns the offset and the number of confident matches.
 *
 * @param before, after positions of each scan's defects, m: { count, xM, yM } (the first count entries, finite)
 * @param searchRadiusM search radius, m, > 0
 * @throws ModelInputError for a malformed scan (not Float64Arrays, count out of range, a non-finite
 *   position), searchRadiusM ≤ 0, or a displacement that overflows
 */
export function estimateStageOffset(
  before: { count: number; xM: Float64Array; yM: Float64Array },
  after: { count: number; xM: Float64Array; yM: Float64Array },
  searchRadiusM: number,
): StageOffsetEstimate {
  const fn = 'estimateStageOffset';
  requirePositions(fn, 'before', before);
  requirePositions(fn, 'after', after);
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
    dx[n] = finiteResult(fn, after.xM[j]! - x, 'displacementXM');
    dy[n] = finiteResult(fn, after.yM[j]! - y, 'displacementYM');
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
 * @throws ModelInputError when groups is not an array of { displacementXM, displacementYM } Float64Arrays
 *   of equal length, when there is no displacement at all, one is not finite, or σ̂ overflows
 * @example positionSigmaFromDisplacements([{ displacementXM: Float64Array.of(-1, 0, 1), displacementYM: Float64Array.of(2, 3, 4) }], 1)
 *          // { sigmaM: 1.4826, n: 3 } (minForOffset 1: each axis's median removed)
 */
export function positionSigmaFromDisplacements(
  groups: readonly { displacementXM: Float64Array; displacementYM: Float64Array }[],
  minForOffset = 5,
): { sigmaM: number; n: number } {
  const fn = 'positionSigmaFromDisplacements';
  requireNumber(fn, 'minForOffset', minForOffset, '', { min: 1, integer: true });
  if (!Array.isArray(groups))
    throw new ModelInputError(fn, 'groups', 'm', 'an array of { displacementXM, displacementYM }', groups);
  let total = 0;
  groups.forEach((g: unknown, gi) => {
    const { displacementXM: gx, displacementYM: gy } = (
      typeof g === 'object' && g !== null ? g : {}
    ) as Record<string, unknown>;
    if (!(gx instanceof Float64Array))
      throw new ModelInputError(fn, `groups[${gi}].displacementXM`, 'm', 'a Float64Array', gx);
    if (!(gy instanceof Float64Array) || gy.length !== gx.length)
      throw new ModelInputError(
        fn,
        `groups[${gi}].displacementYM`,
        'm',
        `a Float64Array of ${gx.length} (as displacementXM)`,
        gy,
      );
    total += gx.length;
  });
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
  return { sigmaM: finiteResult(fn, 1.4826 * median(abs, k), 'sigmaM'), n: total };
}
