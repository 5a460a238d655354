/**
 * Matching the two scans of each pass (src/model/matching), shared by adders and removal learning:
 * reading the scans' particle-like defects, the checks that the two scans describe one wafer in one
 * frame, the positioning error, and the match itself.
 *
 * Positioning error — voidcast's choice: σ (per axis, of a defect's displacement between two scans)
 * is estimated from the scans being learned from: for each pass the confident matches within
 * SEARCH_RADIUS_M (pairs each other's only candidate; estimateStageOffset) give displacements;
 * with each pass's median (its stage offset) removed they are pooled per pair of scanners
 * (positionSigmaFromDisplacements, a robust SD) when at least MIN_SIGMA_MATCHES support it, else over
 * every pass, else DEFAULT_SIGMA_M is used and the report says so. The match radius is
 * r_m = σ √(2 ln 1000) (q = 0.999, CAPTURE_FRACTION).
 */
import {
  estimateStageOffset,
  type MatchableScan,
  matchingRadius,
  matchScans,
  positionSigmaFromDisplacements,
  type ScanMatch,
  type StageOffsetEstimate,
} from '../../model/matching/index.ts';
import type { LearnData } from './loader.ts';
import type { ScanPass } from './passes.ts';
import type { LearnIssue, PositionErrorUsed } from './types.ts';

/** Largest stage offset or displacement searched for, m (scanners' stated accuracies are tens of µm [M]). */
export const SEARCH_RADIUS_M = 500e-6;
/** Displacements needed to estimate σ (fewer: the default). */
export const MIN_SIGMA_MATCHES = 30;
/** σ used when the scans do not support an estimate, m (a conservative tens-of-µm stage error [M]). */
export const DEFAULT_SIGMA_M = 50e-6;
/**
 * Fraction of true repeats the match radius captures: 0.999 (r_m = 3.72 σ), not the 0.99 of the
 * reference's example — every missed repeat is both a false adder and a false removal, while the
 * chance matches a larger radius costs stay far below one per wafer at the densities of pre-bond
 * scans (each report shows them).
 */
export const CAPTURE_FRACTION = 0.999;
/**
 * Near-threshold factor f of learning: a defect seen in one scan only and smaller than f × the
 * larger threshold of the two counts neither as an adder nor as a removal. 1.5, not the ~1.25 the
 * reference names for one scan's capture curve: the two scans size one particle each with their own
 * error (several per cent, log-normal — methods.md §1), so a defect at 1.25 × the threshold in one
 * scan may lie near the threshold in the other; 1.25 · e^(2·√2·0.07) ≈ 1.5 keeps two standard
 * deviations of a 7 % sizing error per scan clear of it.
 */
export const NEAR_THRESHOLD_FACTOR = 1.5;
/** Two scans with at least this many defects each that share at most SHARED_MIN are taken to be in different frames. */
export const FRAME_CHECK_MIN_DEFECTS = 20;
const SHARED_MIN = 2;

export interface MatchedPass {
  pass: ScanPass;
  before: MatchableScan;
  after: MatchableScan;
  match: ScanMatch;
}

export interface MatchedPasses {
  matched: MatchedPass[];
  issues: LearnIssue[];
  position: PositionErrorUsed;
}

function sameFrameIssue(data: LearnData, p: ScanPass): string | null {
  const a = p.before;
  const b = p.after;
  if (Math.abs(a.waferDiameterM - b.waferDiameterM) > 1e-9)
    return `wafer ${p.waferId}: ${data.scanWhere(a.scanId)} states a ${a.waferDiameterM * 1000} mm wafer and ${data.scanWhere(b.scanId)} a ${b.waferDiameterM * 1000} mm one: not one wafer in one frame; the pass through ${p.toolKey} is left out`;
  return null;
}

/**
 * Matches the scans of every pass. Passes whose scans cannot be compared (different wafer sizes,
 * no defect in common although both have many) are left out with a message. σ is estimated from
 * the passes in `sigmaFrom` (default: the passes matched), so that learning one tool uses the same
 * positioning error as learning them all.
 */
export function matchPasses(
  data: LearnData,
  passes: readonly ScanPass[],
  sigmaFrom: readonly ScanPass[] = passes,
): MatchedPasses {
  const issues: LearnIssue[] = [];
  const loaded: {
    pass: ScanPass;
    before: MatchableScan;
    after: MatchableScan;
    area: number;
    est: StageOffsetEstimate;
  }[] = [];
  const selected = new Set(passes);
  const all = [...passes, ...sigmaFrom.filter((p) => !selected.has(p))];
  for (const p of all) {
    const frame = sameFrameIssue(data, p);
    if (frame) {
      if (selected.has(p)) issues.push({ subject: p.toolKey, message: frame });
      continue;
    }
    const r = Math.min(
      p.before.waferDiameterM / 2 - p.before.edgeExclusionM,
      p.after.waferDiameterM / 2 - p.after.edgeExclusionM,
    );
    const before = data.defects(p.before, r);
    const after = data.defects(p.after, r);
    if (!before || !after) continue;
    loaded.push({
      pass: p,
      before,
      after,
      area: Math.PI * r * r,
      est: estimateStageOffset(before, after, SEARCH_RADIUS_M),
    });
  }
  // σ: per pair of scanners when enough confident matches, else pooled, else the default.
  const groups = new Map<string, StageOffsetEstimate[]>();
  for (const l of loaded) {
    const k = `${l.pass.before.toolId ?? '?'}→${l.pass.after.toolId ?? '?'}`;
    const g = groups.get(k) ?? [];
    g.push(l.est);
    groups.set(k, g);
  }
  const sigmaOf = (ests: StageOffsetEstimate[]) => {
    const n = ests.reduce((s, e) => s + e.confidentMatches, 0);
    return n >= MIN_SIGMA_MATCHES
      ? positionSigmaFromDisplacements(ests.filter((e) => e.confidentMatches > 0))
      : null;
  };
  const pooled = sigmaOf(loaded.map((l) => l.est));
  const bySource = new Map<string, { sigmaM: number; n: number } | null>();
  for (const [k, ests] of groups) bySource.set(k, sigmaOf(ests) ?? pooled);
  const position: PositionErrorUsed = pooled
    ? {
        sigmaM: pooled.sigmaM,
        source: 'estimated',
        n: pooled.n,
        radiusM: matchingRadius(pooled.sigmaM, CAPTURE_FRACTION),
      }
    : {
        sigmaM: DEFAULT_SIGMA_M,
        source: 'default',
        n: 0,
        radiusM: matchingRadius(DEFAULT_SIGMA_M, CAPTURE_FRACTION),
      };

  const matched: MatchedPass[] = [];
  for (const l of loaded) {
    if (!selected.has(l.pass)) continue;
    const k = `${l.pass.before.toolId ?? '?'}→${l.pass.after.toolId ?? '?'}`;
    const sigma = bySource.get(k)?.sigmaM ?? DEFAULT_SIGMA_M;
    const match = matchScans(l.before, l.after, {
      positionSigmaM: sigma,
      captureFraction: CAPTURE_FRACTION,
      nearThresholdFactor: NEAR_THRESHOLD_FACTOR,
      areaM2: l.area,
      maxOffsetM: SEARCH_RADIUS_M,
    });
    if (
      l.before.count >= FRAME_CHECK_MIN_DEFECTS &&
      l.after.count >= FRAME_CHECK_MIN_DEFECTS &&
      match.matched <= SHARED_MIN &&
      match.expectedChanceMatches < 0.5
    ) {
      issues.push({
        subject: l.pass.toolKey,
        message: `wafer ${l.pass.waferId}: ${data.scanWhere(l.pass.before.scanId)} (${l.before.count} defects, convention ${l.pass.before.convention}) and ${data.scanWhere(l.pass.after.scanId)} (${l.after.count} defects, convention ${l.pass.after.convention}) share only ${match.matched} defects (chance alone: ${match.expectedChanceMatches.toFixed(2)}): another frame or a wrongly declared coordinate convention? the pass through ${l.pass.toolKey} is left out`,
      });
      continue;
    }
    matched.push({ pass: l.pass, before: l.before, after: l.after, match });
  }
  return { matched, issues, position };
}
