/**
 * Removal efficiency vs size of each clean, learned from matched scans before and after it
 * (methods.md §3 of the project reference).
 *
 * Every before-scan particle at or above its pass's near-threshold limit is one trial: survived
 * (matched in the after scan) or removed (only-before). Data points: survival per size band with
 * Wilson and Clopper–Pearson intervals. Curve: PRE(d) = E_max/(1 + (d50/d)^k) by maximum likelihood
 * on the individual particles (fitRemovalParticles; E_max fitted only where the plateau is seen) with
 * its pointwise band. The clean's own adders (after-scan defects with no match) are fitted apart as
 * adders per pass and never counted as survivors.
 *
 * Too little data (nothing proposed, with the reason and numbers): fewer than MIN_REMOVAL_PARTICLES
 * particles, fewer than MIN_REMOVAL_OUTCOMES removed or surviving, a size spread (90th/10th
 * percentile) below MIN_SIZE_SPREAD, a fit the data cannot determine, or removal that does not rise
 * with size (k ≤ 0).
 */
import { fitAddersPerPass } from '../../model/adders-fit.ts';
import { ModelInputError } from '../../model/errors.ts';
import { MATCH_STATUS } from '../../model/matching/index.ts';
import { fitRemovalParticles, removalCurveBand } from '../../model/removal-fit.ts';
import { clopperPearsonInterval, wilsonInterval } from '../../model/stats/binomial.ts';
import type { Db } from '../../store/db.ts';
import type { StoredClean } from '../../store/tools.ts';
import { fmtCount, fmtSize } from '../format.ts';
import type { FittedRemoval } from '../parameter-set-types.ts';
import {
  addersOf,
  MIN_REMOVAL_OUTCOMES,
  MIN_REMOVAL_PARTICLES,
  MIN_SIZE_SPREAD,
  nearThresholdNote,
  passRecord,
} from './common.ts';
import { type LearnData, learnDataFrom } from './loader.ts';
import { type MatchedPass, matchPasses } from './match-pass.ts';
import { collectPasses } from './passes.ts';
import type {
  RemovalBandData,
  RemovalLearning,
  RemovalPassRecord,
  RemovalReport,
  TypedRemoval,
} from './types.ts';

/** Band edges of the data points: half-octave steps (× √2) from the smallest limit. */
const BAND_STEP = Math.SQRT2;
/** Points of the fitted curve drawn per decade of size. */
const CURVE_POINTS_PER_DECADE = 24;

function typedOf(c: StoredClean | undefined): TypedRemoval | null {
  const r = c?.removal;
  if (r?.model !== 'logistic-log-d') return null;
  return { maxEfficiency: r.maxEfficiency, halfSizeM: r.halfSizeM, widthDecades: r.widthDecades };
}

function quantile(sorted: readonly number[], p: number): number {
  const i = (sorted.length - 1) * p;
  const lo = Math.floor(i);
  const hi = Math.ceil(i);
  return sorted[lo]! + (sorted[hi]! - sorted[lo]!) * (i - lo);
}

/** The data points: survival per half-octave band with Wilson and Clopper–Pearson intervals. */
export function survivalBands(
  sizes: readonly number[],
  removed: readonly number[],
  fromM: number,
  confidence: number,
): RemovalBandData[] {
  if (sizes.length === 0) return [];
  const max = Math.max(...sizes);
  const out: RemovalBandData[] = [];
  for (let lo = fromM; lo <= max; lo *= BAND_STEP) {
    const hi = lo * BAND_STEP;
    let n = 0;
    let r = 0;
    sizes.forEach((d, i) => {
      if (d >= lo && d < hi) {
        n++;
        r += removed[i]!;
      }
    });
    if (n === 0) continue;
    const w = wilsonInterval(n - r, n, confidence);
    const cp = clopperPearsonInterval(n - r, n, confidence);
    out.push({
      lowerM: lo,
      upperM: hi,
      n,
      survived: n - r,
      removed: r,
      survival: (n - r) / n,
      wilsonLow: w.lower,
      wilsonHigh: w.upper,
      clopperPearsonLow: cp.lower,
      clopperPearsonHigh: cp.upper,
    });
  }
  return out;
}

/** Learns one clean's removal curve from its matched passes. */
export function learnCleanRemoval(
  cleanId: string,
  ms: readonly MatchedPass[],
  clean: StoredClean | undefined,
  notes: string[],
  confidence: number,
  fittedAtMs: number,
): RemovalLearning {
  const sorted = [...ms].sort((a, b) => a.pass.step.startMs - b.pass.step.startMs);
  const sizes: number[] = [];
  const removed: number[] = [];
  const records: RemovalPassRecord[] = [];
  for (const m of sorted) {
    const limit = m.match.nearThresholdLimitM;
    let particles = 0;
    let gone = 0;
    for (let i = 0; i < m.before.count; i++) {
      const d = m.before.diameterM[i]!;
      if (d < limit) continue;
      const r = m.match.beforeStatus[i] === MATCH_STATUS.only ? 1 : 0;
      sizes.push(d);
      removed.push(r);
      particles++;
      gone += r;
    }
    records.push({ ...passRecord(m, addersOf(m, limit).length), particles, removed: gone });
  }
  const result: RemovalLearning = {
    cleanId,
    name: clean?.name ?? null,
    toolId: clean?.toolId ?? sorted[0]?.pass.toolId ?? null,
    passes: records,
    particles: sizes.length,
    removed: removed.reduce((s, v) => s + v, 0),
    bands: [],
    fit: null,
    curve: [],
    proposal: null,
    tooLittle: null,
    ownAdders: null,
    typed: typedOf(clean),
    notes: [...notes],
  };
  if (sorted.length === 0) {
    result.tooLittle = 'too little data: no pass through this clean lies between two scans of a wafer';
    return result;
  }
  const fromM = Math.min(...sorted.map((m) => m.match.nearThresholdLimitM));
  const ownRef = Math.max(...sorted.map((m) => m.match.nearThresholdLimitM));
  result.bands = survivalBands(sizes, removed, fromM, confidence);
  result.ownAdders = fitAddersPerPass(
    sorted.map((m) => addersOf(m, ownRef)),
    ownRef,
    confidence,
  );
  const near = nearThresholdNote(sorted);
  if (near) result.notes.push(near);
  result.notes.push(
    `the clean's own adders (new defects ≥ ${fmtSize(ownRef)} after it) are kept apart: ${result.ownAdders.total} over ${sorted.length} passes, ${fmtCount(result.ownAdders.meanPerPass)} per pass [${fmtCount(result.ownAdders.lowerPerPass)}, ${fmtCount(result.ownAdders.upperPerPass)}]`,
  );

  const n = sizes.length;
  const nRemoved = result.removed;
  const ordered = [...sizes].sort((a, b) => a - b);
  const spread = n > 1 ? quantile(ordered, 0.9) / quantile(ordered, 0.1) : 1;
  if (n < MIN_REMOVAL_PARTICLES)
    result.tooLittle = `too little data: ${n} particles ≥ ${fmtSize(fromM)} before the clean (at least ${MIN_REMOVAL_PARTICLES} are needed); nothing proposed`;
  else if (nRemoved < MIN_REMOVAL_OUTCOMES || n - nRemoved < MIN_REMOVAL_OUTCOMES)
    result.tooLittle = `too little data: ${nRemoved} removed and ${n - nRemoved} surviving particles (at least ${MIN_REMOVAL_OUTCOMES} of each are needed); nothing proposed`;
  else if (spread < MIN_SIZE_SPREAD)
    result.tooLittle = `too little data: the particle sizes span only ${spread.toFixed(2)} × (90th over 10th percentile; at least ${MIN_SIZE_SPREAD} × is needed to see the curve); nothing proposed`;
  if (result.tooLittle) return result;

  try {
    const fit = fitRemovalParticles(sizes, removed, { confidence });
    result.fit = fit;
    if (!(fit.steepness > 0)) {
      result.tooLittle = `the fitted removal does not rise with size (k = ${fit.steepness.toPrecision(3)}): the logistic form does not describe this clean's data; nothing proposed`;
      return result;
    }
    const lo = Math.min(fromM, fit.d50M) / 2;
    const hi = Math.max(ordered[n - 1]!, fit.d50M * 4);
    const steps = Math.max(2, Math.ceil(Math.log10(hi / lo) * CURVE_POINTS_PER_DECADE));
    result.curve = removalCurveBand(
      fit,
      Array.from({ length: steps + 1 }, (_, i) => lo * (hi / lo) ** (i / steps)),
    );
    if (fit.maxEfficiencyNote) result.notes.push(fit.maxEfficiencyNote);
    if (fit.d50M < fromM)
      result.notes.push(
        `d50 (${fmtSize(fit.d50M)}) lies below the smallest size measured (${fmtSize(fromM)}): it is an extrapolation of the curve, and its interval says how far it can be trusted`,
      );
    const proposal: FittedRemoval = {
      cleanId,
      maxEfficiency: fit.maxEfficiency,
      halfSizeM: fit.d50M,
      widthDecades: fit.widthDecades,
      halfSizeLowM: fit.d50LowM,
      halfSizeHighM: fit.d50HighM,
      widthLowDecades: fit.widthLowDecades,
      widthHighDecades: fit.widthHighDecades,
      method: fit.maxEfficiencyNote ? `${fit.method}; ${fit.maxEfficiencyNote}` : fit.method,
      data: sorted.flatMap((m) => [m.pass.before.scanId, m.pass.after.scanId]),
      n,
      fittedAtMs,
    };
    result.proposal = proposal;
  } catch (e) {
    if (!(e instanceof ModelInputError)) throw e;
    result.tooLittle = `too little data: ${e.allowed} is required (${String(e.value)}); nothing proposed`;
  }
  return result;
}

/** Learns the removal curve of every clean (or the one `options.cleanId` names) from the stored scans and ledger. */
export function learnRemoval(
  db: Db,
  options: { cleanId?: string; confidence?: number; nowMs?: number } = {},
): RemovalReport {
  return learnRemovalFrom(learnDataFrom(db), options);
}

/** learnRemoval on data already read (learnDataFrom). */
export function learnRemovalFrom(
  data: LearnData,
  options: { cleanId?: string; confidence?: number; nowMs?: number } = {},
): RemovalReport {
  const confidence = options.confidence ?? 0.95;
  const fittedAtMs = options.nowMs ?? Date.now();
  const collected = collectPasses(data);
  const passes = collected.passes.filter(
    (p) => p.cleanId !== null && (options.cleanId === undefined || p.cleanId === options.cleanId),
  );
  const { matched, issues: matchIssues, position } = matchPasses(data, passes, collected.passes);
  const cleans = data.cleans;
  const issues = [...collected.issues, ...matchIssues];
  const toolOfIssue = (i: { subject: string | null }) => i.subject?.split('/')[0] ?? null;
  const ids = new Set(passes.map((p) => p.cleanId!));
  // A clean whose tool has a message (no scan before it, refused intervals) is reported too.
  for (const c of Object.values(cleans))
    if (c.toolId && issues.some((i) => toolOfIssue(i) === c.toolId)) ids.add(c.cleanId);
  if (options.cleanId !== undefined) for (const id of [...ids]) if (id !== options.cleanId) ids.delete(id);
  if (options.cleanId) ids.add(options.cleanId);
  const results = [...ids].sort().map((id) => {
    const tools = new Set(passes.filter((p) => p.cleanId === id).map((p) => p.toolId));
    const t = cleans[id]?.toolId;
    if (t) tools.add(t);
    return learnCleanRemoval(
      id,
      matched.filter((m) => m.pass.cleanId === id),
      cleans[id],
      issues.filter((i) => tools.has(toolOfIssue(i) ?? '')).map((i) => i.message),
      confidence,
      fittedAtMs,
    );
  });
  return {
    results,
    issues: issues.filter((i) => i.subject === null),
    position,
    fittedAtMs,
  };
}
