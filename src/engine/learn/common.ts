/**
 * Pieces shared by adders and removal learning: the per-pass record, the selection of passes, and
 * the thresholds below which a fit proposes nothing.
 */
import { MATCH_STATUS } from '../../model/matching/index.ts';
import { fmtSize } from '../format.ts';
import { type MatchedPass, NEAR_THRESHOLD_FACTOR } from './match-pass.ts';
import type { PassRecord } from './types.ts';

/** Passes an adder fit needs (a count over one pass says nothing of the spread between passes). */
export const MIN_ADDER_PASSES = 2;
/** Adders the size slope needs (Hill SE α/√n: 32 % at 10). */
export const MIN_SLOPE_ADDERS = 10;
/** Matched pre-scan particles a removal fit needs. */
export const MIN_REMOVAL_PARTICLES = 50;
/** Removed and surviving particles each a removal fit needs. */
export const MIN_REMOVAL_OUTCOMES = 5;
/** Size spread a removal fit needs: the 90th over the 10th percentile of the particle sizes. */
export const MIN_SIZE_SPREAD = 1.5;

/** Whether a tool key is selected by a `--tool` value (a tool id selects all its chambers). */
export function toolSelected(toolKey: string, toolId: string, filter: string | undefined): boolean {
  return filter === undefined || filter === toolKey || filter === toolId;
}

/** New defects of a pass at or above `referenceM` (sizes from the after scan). */
export function addersOf(m: MatchedPass, referenceM: number): number[] {
  const out: number[] = [];
  const { after, match } = m;
  for (let j = 0; j < after.count; j++)
    if (match.afterStatus[j] === MATCH_STATUS.only && after.diameterM[j]! >= referenceM)
      out.push(after.diameterM[j]!);
  return out;
}

export function passRecord(m: MatchedPass, adders: number): PassRecord {
  const { pass, match } = m;
  return {
    waferId: pass.waferId,
    lotId: pass.lotId,
    timeMs: pass.step.startMs,
    beforeScanId: pass.before.scanId,
    afterScanId: pass.after.scanId,
    beforeDefects: m.before.count,
    afterDefects: m.after.count,
    matched: match.matched,
    onlyBefore: match.onlyBefore,
    adders,
    nearThreshold: match.nearThresholdBefore + match.nearThresholdAfter,
    expectedChanceMatches: match.expectedChanceMatches,
    offsetXM: match.offset.applied ? match.offset.dxM : null,
    offsetYM: match.offset.applied ? match.offset.dyM : null,
  };
}

/** One sentence on the near-threshold defects of a set of passes (or null when there are none). */
export function nearThresholdNote(ms: readonly MatchedPass[]): string | null {
  let b = 0;
  let a = 0;
  let limit = 0;
  for (const m of ms) {
    b += m.match.nearThresholdBefore;
    a += m.match.nearThresholdAfter;
    limit = Math.max(limit, m.match.nearThresholdLimitM);
  }
  if (a + b === 0) return null;
  return `near threshold, not counted: ${b} defects seen only before and ${a} only after lie below ${fmtSize(limit)} (${NEAR_THRESHOLD_FACTOR} × the larger threshold of their scans), where a scanner may miss what it saw once`;
}
