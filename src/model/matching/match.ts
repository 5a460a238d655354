/**
 * One-to-one matching of the defects of two scans of one wafer (methods.md §1 of the project
 * reference): which defects of the earlier scan ("before") are found again in the later one
 * ("after"), which disappeared, which are new — the raw material of adders per pass (only-after) and
 * of removal efficiency (matched = survived, only-before = removed).
 *
 * Steps of matchScans:
 *  1. Stage offset (optional, on by default): a first matching within a wide search radius; the
 *     "confident" matches are the pairs that are each other's only candidate within it; their
 *     median displacement (x and y separately) is the stage offset, removed from the after scan.
 *  2. Matching within r_m = σ √(2 ln(1/(1 − q))) (matchingRadius), one-to-one, greedy by distance,
 *     on a grid index with cells of side r_m (PointGrid), so the work is linear in the number of
 *     defects at the densities of real scans.
 *  3. Classification. Near the detection threshold a scanner sees a defect only with some probability
 *     (capture probability < 1), so a defect below f × the larger of the two thresholds (f = 1.25 by
 *     default) that appears in one scan only is put in a class of its own, "near threshold, not
 *     counted": neither an adder nor a removal (methods.md §1 [M]).
 *  4. Per size band: matched, only-before, only-after and near-threshold counts; and the number of
 *     matches two unrelated scans of these counts would make by chance, n_b n_a π r_m² / A.
 */
import { finiteResult, ModelInputError, requireNumber, requirePositive } from '../errors.ts';
import { PointGrid } from './grid.ts';
import { estimateStageOffset } from './offset.ts';

/** A scan as matching needs it: positions and sizes in one frame, and the detection threshold. */
export interface MatchableScan {
  count: number;
  xM: Float64Array;
  yM: Float64Array;
  /** LSE diameter of each defect, m. */
  diameterM: Float64Array;
  /** The scan's detection threshold, m. */
  thresholdM: number;
}

export interface ScanMatchOptions {
  /**
   * σ, the standard deviation per axis of one defect's displacement between the two scans, m
   * (for two scans each with per-axis positioning error σ_s, σ = √2 σ_s).
   */
  positionSigmaM: number;
  /** q, the fraction of true repeats the radius captures, 0.5 ≤ q < 1 (default 0.99: r_m ≈ 3.03 σ). */
  captureFraction?: number;
  /** A, the inspected area of the wafer (π (R − edge exclusion)²), m². */
  areaM2: number;
  /** f: a defect below f × the larger threshold seen in one scan only is not counted (default 1.25). */
  nearThresholdFactor?: number;
  /**
   * Band edges, m, ascending; band b is [edges[b], edges[b + 1]) and the last edge may be Infinity.
   * Default: the smaller threshold, the near-threshold limit, then × 2, 4, 8, 16 and Infinity.
   */
  bandEdgesM?: readonly number[];
  /** Estimate and remove a stage offset first (default true). */
  estimateOffset?: boolean;
  /** Largest stage offset searched for, m (default 10 r_m). */
  maxOffsetM?: number;
  /** Fewest confident matches an offset estimate needs (default 5); with fewer none is removed. */
  minConfidentMatches?: number;
}

/** Counts of one size band. */
export interface MatchBand {
  lowerM: number;
  upperM: number;
  /** Pairs matched, by the before scan's size. */
  matched: number;
  /** Before-scan defects at or above the near-threshold limit with no match (removed / gone). */
  onlyBefore: number;
  /** After-scan defects at or above the near-threshold limit with no match (new: adders). */
  onlyAfter: number;
  /** Before-scan defects below the limit with no match: not counted as removals. */
  nearThresholdBefore: number;
  /** After-scan defects below the limit with no match: not counted as adders. */
  nearThresholdAfter: number;
}

/** Status of each defect in DefectMatch.beforeStatus / afterStatus. */
export const MATCH_STATUS = Object.freeze({ matched: 0, only: 1, nearThreshold: 2 });

export interface ScanOffset {
  /** Median displacement after − before of the confident matches, m (0 when not estimated). */
  dxM: number;
  dyM: number;
  /** Confident matches the estimate rests on. */
  confidentMatches: number;
  /** Whether the offset was removed before the final matching. */
  applied: boolean;
}

export interface ScanMatch {
  /** r_m, the match radius used, m. */
  radiusM: number;
  positionSigmaM: number;
  captureFraction: number;
  offset: ScanOffset;
  /** For each before defect the index of its after match, −1 when none. */
  beforeMatch: Int32Array;
  /** For each after defect the index of its before match, −1 when none. */
  afterMatch: Int32Array;
  /** MATCH_STATUS per before defect (only = only-before, counted as gone). */
  beforeStatus: Uint8Array;
  /** MATCH_STATUS per after defect (only = only-after, counted as new). */
  afterStatus: Uint8Array;
  matched: number;
  onlyBefore: number;
  onlyAfter: number;
  nearThresholdBefore: number;
  nearThresholdAfter: number;
  /** Defects below this size seen in one scan only are not counted, m. */
  nearThresholdLimitM: number;
  bands: MatchBand[];
  /** n_b n_a π r_m² / A: matches two unrelated scans of these counts would make by chance. */
  expectedChanceMatches: number;
  /** Plain-language notes (offset removed or not, near-threshold defects left uncounted). */
  notes: string[];
}

/**
 * Match radius for a stated positioning error: the radius of a circle that holds a fraction q of
 * the displacements of true repeats.
 *
 * Formula: a displacement with independent normal components of standard deviation σ per axis has a
 * Rayleigh-distributed length, P(|Δ| ≤ r) = 1 − exp(−r²/(2σ²)); solving for r at probability q,
 *   r_m = σ √(2 ln(1/(1 − q)))      (methods.md §1 [D]).
 *
 * @param positionSigmaM σ, m, > 0 (per axis, of the displacement between the two scans)
 * @param captureFraction q, 0 < q < 1 (default 0.99)
 * @returns r_m, m
 * @throws ModelInputError for σ ≤ 0 or q outside (0, 1), or a radius that overflows
 * @example matchingRadius(1e-5, 0.99) // 3.0349e-5 (3.03 σ)
 */
export function matchingRadius(positionSigmaM: number, captureFraction = 0.99): number {
  const fn = 'matchingRadius';
  const s = requirePositive(fn, 'positionSigmaM', positionSigmaM, 'm');
  const q = requireNumber(fn, 'captureFraction', captureFraction, '', {
    min: 0,
    max: 1,
    minExclusive: true,
    maxExclusive: true,
  });
  return finiteResult(fn, s * Math.sqrt(-2 * Math.log1p(-q)));
}

/**
 * Expected number of chance matches between two unrelated defect maps.
 *
 * Formula: with n_a defects placed at random over area A, each falls within r_m of one of n_b
 * fixed defects with probability ≈ n_b π r_m² / A, so E[chance matches] ≈ n_b n_a π r_m² / A
 * (methods.md §1 [D]). Valid while n_b π r_m² / A ≪ 1 (sparse maps) and r_m ≪ the wafer radius
 * (edge effects neglected); one-to-one assignment makes the real number slightly smaller when the
 * maps are dense.
 *
 * @param nBefore n_b, defects in one scan, ≥ 0
 * @param nAfter n_a, defects in the other, ≥ 0
 * @param radiusM r_m, m, ≥ 0
 * @param areaM2 A, inspected area, m², > 0
 * @throws ModelInputError for negative counts or radius, or A ≤ 0, or a result that overflows
 * @example expectedChanceMatches(1000, 1000, 3e-5, 0.0683) // 0.0414
 */
export function expectedChanceMatches(
  nBefore: number,
  nAfter: number,
  radiusM: number,
  areaM2: number,
): number {
  const fn = 'expectedChanceMatches';
  requireNumber(fn, 'nBefore', nBefore, '', { min: 0 });
  requireNumber(fn, 'nAfter', nAfter, '', { min: 0 });
  requireNumber(fn, 'radiusM', radiusM, 'm', { min: 0 });
  requirePositive(fn, 'areaM2', areaM2, 'm²');
  return finiteResult(fn, (nBefore * nAfter * Math.PI * radiusM * radiusM) / areaM2);
}

function requireScan(fn: string, name: string, s: MatchableScan): void {
  if (typeof s !== 'object' || s === null)
    throw new ModelInputError(fn, name, '', 'an object { count, xM, yM, diameterM, thresholdM }', s);
  for (const k of ['xM', 'yM', 'diameterM'] as const)
    if (!(s[k] instanceof Float64Array))
      throw new ModelInputError(fn, `${name}.${k}`, 'm', 'a Float64Array', s[k]);
  requireNumber(fn, `${name}.count`, s.count, '', {
    min: 0,
    max: Math.min(s.xM.length, s.yM.length, s.diameterM.length),
    integer: true,
  });
  requirePositive(fn, `${name}.thresholdM`, s.thresholdM, 'm');
  for (let i = 0; i < s.count; i++) {
    if (!Number.isFinite(s.xM[i]!)) requireNumber(fn, `${name}.xM[${i}]`, s.xM[i], 'm');
    if (!Number.isFinite(s.yM[i]!)) requireNumber(fn, `${name}.yM[${i}]`, s.yM[i], 'm');
    if (!(s.diameterM[i]! > 0)) requirePositive(fn, `${name}.diameterM[${i}]`, s.diameterM[i], 'm');
  }
}

/** Checks x, y Float64Arrays with `count` (integer ≤ both lengths) finite entries: O(count). */
function requirePoints(
  fn: string,
  prefix: string,
  x: unknown,
  y: unknown,
  count: unknown,
  countName: string,
): void {
  if (!(x instanceof Float64Array)) throw new ModelInputError(fn, `${prefix}x`, 'm', 'a Float64Array', x);
  if (!(y instanceof Float64Array)) throw new ModelInputError(fn, `${prefix}y`, 'm', 'a Float64Array', y);
  const n = requireNumber(fn, countName, count, '', {
    min: 0,
    max: Math.min(x.length, y.length),
    integer: true,
  });
  for (let i = 0; i < n; i++) {
    if (!Number.isFinite(x[i]!)) requireNumber(fn, `${prefix}x[${i}]`, x[i], 'm');
    if (!Number.isFinite(y[i]!)) requireNumber(fn, `${prefix}y[${i}]`, y[i], 'm');
  }
}

/**
 * One-to-one matching of two point sets within radius r, greedy by distance: repeatedly the
 * closest remaining pair (ties: the smaller before index, then the smaller after index) is matched.
 *
 * Computed as rounds of mutual nearest neighbours among the still unmatched points, which gives the
 * same assignment: the closest remaining pair is always mutual, and a mutual pair has no closer
 * rival, so greedy takes it too. Each round costs one grid query per active point; a point with no
 * candidate within r leaves the active set for good. Rounds stop when none matches.
 *
 * @param bx, by positions of the before points, m (Float64Array; the first nb are used, each finite)
 * @param nb number of before points, integer, 0 ≤ nb ≤ the lengths of bx and by
 * @param ax, ay positions of the after points, m (the first na are used, each finite)
 * @param na number of after points, integer, 0 ≤ na ≤ the lengths of ax and ay
 * @param radiusM r, m, > 0
 * @returns beforeMatch[i] = after index or −1, afterMatch[j] = before index or −1
 * @throws ModelInputError for a non-Float64Array, a count out of range, a non-finite position or r ≤ 0
 */
export function greedyMatch(
  bx: Float64Array,
  by: Float64Array,
  nb: number,
  ax: Float64Array,
  ay: Float64Array,
  na: number,
  radiusM: number,
): { beforeMatch: Int32Array; afterMatch: Int32Array } {
  const fn = 'greedyMatch';
  requirePoints(fn, 'b', bx, by, nb, 'nb');
  requirePoints(fn, 'a', ax, ay, na, 'na');
  requirePositive(fn, 'radiusM', radiusM, 'm');
  const beforeMatch = new Int32Array(nb).fill(-1);
  const afterMatch = new Int32Array(na).fill(-1);
  if (nb === 0 || na === 0) return { beforeMatch, afterMatch };
  const gridA = new PointGrid(ax, ay, na, radiusM);
  const gridB = new PointGrid(bx, by, nb, radiusM);
  const takenA = new Uint8Array(na);
  const takenB = new Uint8Array(nb);
  // Before points in the grid's layout: consecutive queries read neighbouring memory.
  const active = gridB.order.slice();
  let nActive = nb;
  const choice = new Int32Array(nb);
  for (;;) {
    let kept = 0;
    let matchedThisRound = 0;
    for (let k = 0; k < nActive; k++) {
      const i = active[k]!;
      const j = gridA.nearestWithin(bx[i]!, by[i]!, radiusM, takenA);
      choice[i] = j;
      if (j >= 0) active[kept++] = i;
    }
    nActive = kept;
    for (let k = 0; k < nActive; k++) {
      const i = active[k]!;
      const j = choice[i]!;
      if (takenA[j]) continue;
      // Is i the nearest untaken before point of j? (ties to the smaller index, as gridB reports)
      if (gridB.nearestWithin(ax[j]!, ay[j]!, radiusM, takenB) === i) {
        beforeMatch[i] = j;
        afterMatch[j] = i;
        takenA[j] = 1;
        takenB[i] = 1;
        matchedThisRound++;
      }
    }
    if (matchedThisRound === 0) break;
    kept = 0;
    for (let k = 0; k < nActive; k++) if (!takenB[active[k]!]) active[kept++] = active[k]!;
    nActive = kept;
    if (nActive === 0) break;
  }
  return { beforeMatch, afterMatch };
}

function bandOf(edges: readonly number[], d: number): number {
  // Few bands: a linear scan is faster than a search.
  if (d < edges[0]!) return -1;
  for (let b = 0; b < edges.length - 1; b++) if (d < edges[b + 1]!) return b;
  return -1;
}

function fmtNm(m: number): string {
  return `${Math.round(m * 1e10) / 10} nm`;
}

function fmtUm(m: number): string {
  return `${Math.round(m * 1e7) / 10} µm`;
}

/**
 * Matches the defects of two scans of one wafer, one-to-one, and classifies every defect
 * (methods.md §1; the steps are listed at the top of this file).
 *
 * Both scans must be in one frame already (the scans import maps each file's convention into the
 * internal frame; a stage offset is estimated here). A matched pair is banded by the before size;
 * an unmatched defect by its own size. Defects smaller than the first band edge or at/above a
 * finite last edge are classified but fall in no band.
 *
 * @param before the earlier scan (positions m, diameters m, threshold m)
 * @param after the later scan
 * @param options σ (m), q, area A (m²), near-threshold factor, band edges, offset search (ScanMatchOptions)
 * @returns ScanMatch: per-defect matches and statuses, totals, bands, offset, chance matches, notes
 * @throws ModelInputError for malformed scans (non-finite position, size ≤ 0, threshold ≤ 0) or options
 * @example
 *   // one defect seen in both scans 5 µm apart, one new 80 nm defect; σ = 10 µm, q = 0.99:
 *   matchScans(
 *     { count: 1, xM: Float64Array.of(0.01), yM: Float64Array.of(0), diameterM: Float64Array.of(60e-9), thresholdM: 40e-9 },
 *     { count: 2, xM: Float64Array.of(0.010005, -0.02), yM: Float64Array.of(0, 0.03), diameterM: Float64Array.of(61e-9, 80e-9), thresholdM: 40e-9 },
 *     { positionSigmaM: 1e-5, areaM2: 0.0683, estimateOffset: false },
 *   ) // matched 1, onlyAfter 1, onlyBefore 0, radiusM 3.03e-5
 */
export function matchScans(
  before: MatchableScan,
  after: MatchableScan,
  options: ScanMatchOptions,
): ScanMatch {
  const fn = 'matchScans';
  requireScan(fn, 'before', before);
  requireScan(fn, 'after', after);
  if (typeof options !== 'object' || options === null)
    throw new ModelInputError(fn, 'options', '', 'an object { positionSigmaM, areaM2, … }', options);
  const sigma = requirePositive(fn, 'options.positionSigmaM', options.positionSigmaM, 'm');
  const q = requireNumber(fn, 'options.captureFraction', options.captureFraction ?? 0.99, '', {
    min: 0.5,
    max: 1,
    maxExclusive: true,
  });
  const area = requirePositive(fn, 'options.areaM2', options.areaM2, 'm²');
  const factor = requireNumber(fn, 'options.nearThresholdFactor', options.nearThresholdFactor ?? 1.25, '', {
    min: 1,
    max: 10,
  });
  const radius = matchingRadius(sigma, q);
  const maxOffset = requirePositive(fn, 'options.maxOffsetM', options.maxOffsetM ?? 10 * radius, 'm');
  const minConfident = requireNumber(
    fn,
    'options.minConfidentMatches',
    options.minConfidentMatches ?? 5,
    '',
    {
      min: 1,
      integer: true,
    },
  );
  const limit = factor * Math.max(before.thresholdM, after.thresholdM);
  const edges = options.bandEdgesM ?? [
    Math.min(before.thresholdM, after.thresholdM),
    limit,
    2 * limit,
    4 * limit,
    8 * limit,
    16 * limit,
    Infinity,
  ];
  if (!Array.isArray(edges) || edges.length < 2)
    throw new ModelInputError(fn, 'options.bandEdgesM', 'm', 'at least 2 ascending edges', edges);
  for (let b = 0; b < edges.length; b++) {
    const e = edges[b]!;
    if (!(e > 0) || (b < edges.length - 1 && !Number.isFinite(e)) || (b > 0 && !(e > edges[b - 1]!)))
      throw new ModelInputError(
        fn,
        `options.bandEdgesM[${b}]`,
        'm',
        '> 0, ascending, finite except the last',
        e,
      );
  }
  const notes: string[] = [];

  // 1. Stage offset.
  let ax = after.xM;
  let ay = after.yM;
  const offset: ScanOffset = { dxM: 0, dyM: 0, confidentMatches: 0, applied: false };
  if (options.estimateOffset ?? true) {
    const est = estimateStageOffset(before, after, maxOffset);
    offset.confidentMatches = est.confidentMatches;
    if (est.confidentMatches >= minConfident) {
      offset.dxM = est.dxM;
      offset.dyM = est.dyM;
      offset.applied = true;
      ax = new Float64Array(after.count);
      ay = new Float64Array(after.count);
      for (let j = 0; j < after.count; j++) {
        ax[j] = after.xM[j]! - est.dxM;
        ay[j] = after.yM[j]! - est.dyM;
      }
      notes.push(
        `stage offset (${fmtUm(est.dxM)}, ${fmtUm(est.dyM)}) from ${est.confidentMatches} confident matches removed before matching`,
      );
    } else
      notes.push(
        `no stage offset removed: ${est.confidentMatches} confident matches within ${fmtUm(maxOffset)} (fewer than ${minConfident})`,
      );
  }

  // 2. Matching.
  const { beforeMatch, afterMatch } = greedyMatch(
    before.xM,
    before.yM,
    before.count,
    ax,
    ay,
    after.count,
    radius,
  );

  // 3–4. Classification and bands.
  const bands: MatchBand[] = [];
  for (let b = 0; b < edges.length - 1; b++)
    bands.push({
      lowerM: edges[b]!,
      upperM: edges[b + 1]!,
      matched: 0,
      onlyBefore: 0,
      onlyAfter: 0,
      nearThresholdBefore: 0,
      nearThresholdAfter: 0,
    });
  const beforeStatus = new Uint8Array(before.count);
  const afterStatus = new Uint8Array(after.count);
  let matched = 0;
  let onlyBefore = 0;
  let onlyAfter = 0;
  let nearB = 0;
  let nearA = 0;
  for (let i = 0; i < before.count; i++) {
    const d = before.diameterM[i]!;
    const band = bands[bandOf(edges, d)];
    if (beforeMatch[i]! >= 0) {
      matched++;
      if (band) band.matched++;
    } else if (d < limit) {
      beforeStatus[i] = MATCH_STATUS.nearThreshold;
      nearB++;
      if (band) band.nearThresholdBefore++;
    } else {
      beforeStatus[i] = MATCH_STATUS.only;
      onlyBefore++;
      if (band) band.onlyBefore++;
    }
  }
  for (let j = 0; j < after.count; j++) {
    if (afterMatch[j]! >= 0) continue;
    const d = after.diameterM[j]!;
    const band = bands[bandOf(edges, d)];
    if (d < limit) {
      afterStatus[j] = MATCH_STATUS.nearThreshold;
      nearA++;
      if (band) band.nearThresholdAfter++;
    } else {
      afterStatus[j] = MATCH_STATUS.only;
      onlyAfter++;
      if (band) band.onlyAfter++;
    }
  }
  if (nearB + nearA > 0)
    notes.push(
      `near threshold, not counted: ${nearB} defects seen only before and ${nearA} only after are below ${fmtNm(limit)} (${factor} × the larger threshold), where a scanner may miss a defect it saw once; they count neither as removals nor as adders`,
    );
  return {
    radiusM: radius,
    positionSigmaM: sigma,
    captureFraction: q,
    offset,
    beforeMatch,
    afterMatch,
    beforeStatus,
    afterStatus,
    matched,
    onlyBefore,
    onlyAfter,
    nearThresholdBefore: nearB,
    nearThresholdAfter: nearA,
    nearThresholdLimitM: limit,
    bands,
    expectedChanceMatches: expectedChanceMatches(before.count, after.count, radius, area),
    notes,
  };
}
