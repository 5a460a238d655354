/**
 * Counter exposure index: per location, prefix sums of the time-integrated concentration
 * (particle·s/m³) per counter channel, so that the air dose of any interval costs two binary
 * searches instead of a pass over the samples.
 *
 *   F_c(t) = Σ_{samples j usable, ended before t} C_jc · Δt_j  +  C_ic · (t − start_i) for the sample i running at t
 *   dose_c(a, b) = F_c(b) − F_c(a)
 *
 * Rules (stated here, reported in the results):
 * - A sample flagged `fault` or `sentinel` is not used; its time counts as a gap.
 * - A sample flagged `lowerBound` (saturation/coincidence) is used as is and reported: the dose is
 *   then a lower bound.
 * - Gaps (time in the interval without a usable sample) are filled with the location's median usable
 *   concentration over the loaded window, per channel, and reported with their length. When more
 *   than AssessConfig.maxGapFraction of an interval is gap, the data count as missing (a hold
 *   reason). A location with no usable sample at all is filled with its ISO 14644-1 class limit
 *   (the most a compliant room may hold) when it has a class, else with zero, and is a hold reason.
 * - Overlapping samples (two counters at one location) are averaged over the covered time.
 * - Action level: any usable or lower-bound sample overlapping the interval whose concentration at
 *   the level size reaches the action level is an excursion. The concentration at the level size
 *   is the channel at that size, or — when no channel matches — the next smaller channel, which can
 *   only over-state it (cumulative counts fall with size): the conservative side for a hold.
 */
import { type CounterSeriesInput, type LocationInput, SAMPLE_FLAG } from './types.ts';

export interface ExposureIndex {
  locationId: string;
  channelSizesM: Float64Array;
  k: number;
  n: number;
  startMs: Float64Array;
  endMs: Float64Array;
  /** (n + 1) × k prefix sums of C·Δt over usable samples, particle·s/m³. */
  prefixDose: Float64Array;
  /** (n + 1) prefix sums of usable covered time, s. */
  prefixUsableS: Float64Array;
  /** (n + 1) prefix counts of lower-bound samples. */
  prefixLowerBound: Uint32Array;
  /** Per-channel median of usable samples, particles/m³ (null: no usable sample). */
  medianPerM3: Float64Array | null;
  /** Concentration at the action-level size per sample, particles/m³ (null: no action level). */
  levelPerM3: Float64Array | null;
  actionPerM3: number | null;
  levelSizeM: number | null;
  /** Cumulative end of the latest sample, for binary searches (samples sorted by start). */
  maxEndMs: Float64Array;
}

const UNUSABLE = SAMPLE_FLAG.fault | SAMPLE_FLAG.sentinel;

export function buildExposureIndex(
  series: CounterSeriesInput,
  location: LocationInput | undefined,
): ExposureIndex {
  const k = series.channelSizesM.length;
  const n = series.startMs.length;
  const prefixDose = new Float64Array((n + 1) * k);
  const prefixUsableS = new Float64Array(n + 1);
  const prefixLowerBound = new Uint32Array(n + 1);
  const maxEndMs = new Float64Array(n);
  const conc = series.cumulativePerM3;
  let usable = 0;
  let runMax = Number.NEGATIVE_INFINITY;
  for (let i = 0; i < n; i++) {
    const f = series.flags[i]!;
    const dt = (series.endMs[i]! - series.startMs[i]!) / 1000;
    const ok = (f & UNUSABLE) === 0 && dt > 0;
    const base = i * k;
    const nb = (i + 1) * k;
    for (let c = 0; c < k; c++) prefixDose[nb + c] = prefixDose[base + c]! + (ok ? conc[base + c]! * dt : 0);
    prefixUsableS[i + 1] = prefixUsableS[i]! + (ok ? dt : 0);
    prefixLowerBound[i + 1] = prefixLowerBound[i]! + ((f & SAMPLE_FLAG.lowerBound) !== 0 ? 1 : 0);
    if (ok) usable++;
    runMax = Math.max(runMax, series.endMs[i]!);
    maxEndMs[i] = runMax;
  }
  let medianPerM3: Float64Array | null = null;
  if (usable > 0) {
    medianPerM3 = new Float64Array(k);
    const col = new Float64Array(usable);
    for (let c = 0; c < k; c++) {
      let m = 0;
      for (let i = 0; i < n; i++) if ((series.flags[i]! & UNUSABLE) === 0) col[m++] = conc[i * k + c]!;
      const sorted = col.subarray(0, m).sort();
      medianPerM3[c] = m % 2 === 1 ? sorted[(m - 1) / 2]! : (sorted[m / 2 - 1]! + sorted[m / 2]!) / 2;
    }
  }
  let levelPerM3: Float64Array | null = null;
  const levels = location?.levels;
  if (levels && levels.actionPerM3 !== null && k > 0) {
    // Channel at the level size, else the next smaller one (over-states: conservative), else the smallest.
    let ch = 0;
    for (let c = 0; c < k; c++) if (series.channelSizesM[c]! <= levels.atDiameterM * (1 + 1e-9)) ch = c;
    levelPerM3 = new Float64Array(n);
    for (let i = 0; i < n; i++) levelPerM3[i] = conc[i * k + ch]!;
  }
  return {
    locationId: series.locationId,
    channelSizesM: series.channelSizesM,
    k,
    n,
    startMs: series.startMs,
    endMs: series.endMs,
    prefixDose,
    prefixUsableS,
    prefixLowerBound,
    medianPerM3,
    levelPerM3,
    actionPerM3: levels?.actionPerM3 ?? null,
    levelSizeM: levels?.atDiameterM ?? null,
    maxEndMs,
  };
}

/** Index of the last sample with start ≤ t (−1 if none). */
function lastStartAtOrBefore(ix: ExposureIndex, t: number): number {
  let lo = 0;
  let hi = ix.n - 1;
  let ans = -1;
  while (lo <= hi) {
    const mid = (lo + hi) >> 1;
    if (ix.startMs[mid]! <= t) {
      ans = mid;
      lo = mid + 1;
    } else hi = mid - 1;
  }
  return ans;
}

/** First index whose running maximum end exceeds t (n if none): every sample before it has ended by t. */
function firstNotEndedBy(ix: ExposureIndex, t: number): number {
  let lo = 0;
  let hi = ix.n;
  while (lo < hi) {
    const mid = (lo + hi) >> 1;
    if (ix.maxEndMs[mid]! <= t) lo = mid + 1;
    else hi = mid;
  }
  return lo;
}

/**
 * Cumulative usable dose per channel and usable time up to instant t (writes into doseOut):
 * F(t) = Σ_j C_j · clamp(t − start_j, 0, Δt_j) over usable samples. Samples that ended by t come
 * from the prefix sums; the few still running at t (one, or more where samples overlap) are added.
 */
function cumulativeAt(ix: ExposureIndex, t: number, doseOut: Float64Array): number {
  const k = ix.k;
  const j = firstNotEndedBy(ix, t);
  for (let c = 0; c < k; c++) doseOut[c] = ix.prefixDose[j * k + c]!;
  let usableS = ix.prefixUsableS[j]!;
  for (let i = j; i < ix.n && ix.startMs[i]! < t; i++) {
    const whole = ix.prefixUsableS[i + 1]! - ix.prefixUsableS[i]!;
    if (!(whole > 0)) continue;
    const s = ix.startMs[i]!;
    const e = ix.endMs[i]!;
    const frac = Math.min(1, Math.max(0, (t - s) / (e - s)));
    for (let c = 0; c < k; c++)
      doseOut[c]! += (ix.prefixDose[(i + 1) * k + c]! - ix.prefixDose[i * k + c]!) * frac;
    usableS += whole * frac;
  }
  return usableS;
}

export interface IntervalDose {
  /** Air dose per channel (cumulative ≥ channel size), particle·s/m³, gaps filled. */
  dosePerChannel: Float64Array;
  /** Interval length, s. */
  durationS: number;
  /** Time without a usable sample, s (filled by the median or the class limit). */
  gapS: number;
  /** How the gap was filled. */
  fill: 'none' | 'median' | 'class-limit' | 'zero';
  /** Lower-bound (saturated) samples overlapping the interval. */
  lowerBoundSamples: number;
  /** Peak concentration at the action-level size among samples overlapping the interval, and when. */
  peakLevelPerM3: number | null;
  firstActionMs: number | null;
}

/**
 * The air dose of one location over [fromMs, toMs]. `classLimitPerChannel` gives the location's
 * ISO class limit at each channel size (used only when it has no usable sample at all).
 */
export function intervalDose(
  ix: ExposureIndex,
  fromMs: number,
  toMs: number,
  classLimitPerChannel: Float64Array | null,
): IntervalDose {
  const k = ix.k;
  const durationS = Math.max(0, (toMs - fromMs) / 1000);
  const a = new Float64Array(k);
  const b = new Float64Array(k);
  const ua = cumulativeAt(ix, fromMs, a);
  const ub = cumulativeAt(ix, toMs, b);
  let usableS = Math.max(0, ub - ua);
  const dose = new Float64Array(k);
  for (let c = 0; c < k; c++) dose[c] = Math.max(0, b[c]! - a[c]!);
  // Overlapping samples: more usable time than the interval has → average over the covered time.
  if (usableS > durationS && usableS > 0) {
    const f = durationS / usableS;
    for (let c = 0; c < k; c++) dose[c]! *= f;
    usableS = durationS;
  }
  const gapS = Math.max(0, durationS - usableS);
  let fill: IntervalDose['fill'] = 'none';
  if (gapS > 1e-9) {
    const fillConc = ix.medianPerM3 ?? classLimitPerChannel;
    fill = ix.medianPerM3 ? 'median' : classLimitPerChannel ? 'class-limit' : 'zero';
    if (fillConc) for (let c = 0; c < k; c++) dose[c]! += fillConc[c]! * gapS;
  }
  // Samples overlapping [fromMs, toMs): lower-bound count and the action-level peak.
  let i1 = lastStartAtOrBefore(ix, toMs);
  if (i1 >= 0 && ix.startMs[i1]! >= toMs && toMs > fromMs) i1--;
  let i0 = i1;
  while (i0 >= 0 && ix.maxEndMs[i0]! > fromMs) i0--;
  i0++;
  let lowerBoundSamples = 0;
  let peak: number | null = null;
  let firstActionMs: number | null = null;
  if (i1 >= i0) {
    lowerBoundSamples = ix.prefixLowerBound[i1 + 1]! - ix.prefixLowerBound[i0]!;
    if (ix.levelPerM3) {
      for (let i = i0; i <= i1; i++) {
        if (ix.endMs[i]! <= fromMs) continue;
        // (flags of the sample: fault/sentinel rows do not describe the air)
        if (ix.prefixUsableS[i + 1]! === ix.prefixUsableS[i]! && !isLowerBound(ix, i)) continue;
        const v = ix.levelPerM3[i]!;
        if (peak === null || v > peak) peak = v;
        if (ix.actionPerM3 !== null && v >= ix.actionPerM3 && firstActionMs === null)
          firstActionMs = ix.startMs[i]!;
      }
    }
  }
  return {
    dosePerChannel: dose,
    durationS,
    gapS,
    fill,
    lowerBoundSamples,
    peakLevelPerM3: peak,
    firstActionMs,
  };
}

function isLowerBound(ix: ExposureIndex, i: number): boolean {
  return ix.prefixLowerBound[i + 1]! > ix.prefixLowerBound[i]!;
}
