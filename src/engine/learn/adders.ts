/**
 * Adders per wafer pass of each tool and chamber, learned from the wafers (monitor or product) the
 * ledger puts through the tool between two scans (methods.md §2 of the project reference).
 *
 * For each pass the two scans are matched (match-pass.ts); the adders are the after-scan defects
 * with no match ("only after"), at or above the reference size — the largest near-threshold limit
 * (NEAR_THRESHOLD_FACTOR = 1.5 × the larger threshold) over the tool's passes, so every pass counts at the same size and
 * no defect that merely flickered at a threshold counts. Per tool: Σn/k with the Garwood interval,
 * the Hill slope with its SE, the dispersion between passes, and the history pass by pass.
 *
 * Too little data (nothing proposed, the reason given with its numbers): fewer than
 * MIN_ADDER_PASSES passes, or fewer than MIN_SLOPE_ADDERS adders for the slope.
 */
import { fitAddersPerPass } from '../../model/adders-fit.ts';
import type { Db } from '../../store/db.ts';
import type { StoredTool } from '../../store/tools.ts';
import { fmtCount, fmtSize } from '../format.ts';
import type { FittedAdders } from '../parameter-set-types.ts';
import {
  addersOf,
  MIN_ADDER_PASSES,
  MIN_SLOPE_ADDERS,
  nearThresholdNote,
  passRecord,
  toolSelected,
} from './common.ts';
import { type LearnData, learnDataFrom } from './loader.ts';
import { type MatchedPass, matchPasses } from './match-pass.ts';
import { collectPasses } from './passes.ts';
import type { AdderLearning, AddersReport, TypedAdders } from './types.ts';

function typedOf(t: StoredTool | undefined, referenceM: number | null): TypedAdders | null {
  const a = t?.adders;
  if (a?.model !== 'power-law') return null;
  const at = referenceM ?? a.atDiameterM;
  return {
    countAbove: a.countAbove,
    atDiameterM: a.atDiameterM,
    slope: a.slope,
    fromM: a.fromM,
    countAtReference:
      a.fromM !== null && at < a.fromM
        ? a.countAbove * (a.fromM / a.atDiameterM) ** -a.slope
        : a.countAbove * (at / a.atDiameterM) ** -a.slope,
  };
}

/** Learns one tool key's adders from its matched passes. */
export function learnToolAdders(
  toolKey: string,
  toolId: string,
  chamber: string | null,
  ms: readonly MatchedPass[],
  tool: StoredTool | undefined,
  notes: string[],
  confidence: number,
  fittedAtMs: number,
): AdderLearning {
  const sorted = [...ms].sort((a, b) => a.pass.step.startMs - b.pass.step.startMs);
  const referenceM = sorted.length ? Math.max(...sorted.map((m) => m.match.nearThresholdLimitM)) : null;
  const base: AdderLearning = {
    toolKey,
    toolId,
    chamber,
    name: tool?.name ?? null,
    referenceM,
    passes: [],
    fit: null,
    proposal: null,
    tooLittle: null,
    typed: typedOf(tool, referenceM),
    notes: [...notes],
  };
  if (referenceM === null) {
    base.tooLittle = 'too little data: no pass through this tool lies between two scans of a wafer';
    return base;
  }
  const sizes = sorted.map((m) => addersOf(m, referenceM));
  base.passes = sorted.map((m, i) => passRecord(m, sizes[i]!.length));
  const fit = fitAddersPerPass(sizes, referenceM, confidence);
  base.fit = fit;
  const near = nearThresholdNote(sorted);
  if (near) base.notes.push(near);
  const chance = sorted.reduce((s, m) => s + m.match.expectedChanceMatches, 0);
  base.notes.push(
    `${sorted.reduce((s, m) => s + m.match.matched, 0)} defects matched over ${sorted.length} passes (chance matches expected: ${fmtCount(chance)})`,
  );
  if (fit.passes < MIN_ADDER_PASSES)
    base.tooLittle = `too little data: ${fit.passes} pass${fit.passes === 1 ? '' : 'es'} (at least ${MIN_ADDER_PASSES} are needed); nothing proposed`;
  else if (fit.slope === null || fit.total < MIN_SLOPE_ADDERS)
    base.tooLittle = `too little data: ${fit.total} adder${fit.total === 1 ? '' : 's'} ≥ ${fmtSize(referenceM)} over ${fit.passes} passes (the size slope needs at least ${MIN_SLOPE_ADDERS}); nothing proposed — count per pass ${fmtCount(fit.meanPerPass)} [${fmtCount(fit.lowerPerPass)}, ${fmtCount(fit.upperPerPass)}]`;
  if (base.tooLittle === null && fit.slope !== null && fit.slopeSe !== null) {
    const proposal: FittedAdders = {
      toolId,
      chamber,
      countAbove: fit.meanPerPass,
      countLow: fit.lowerPerPass,
      countHigh: fit.upperPerPass,
      atDiameterM: referenceM,
      slope: fit.slope,
      slopeSe: fit.slopeSe,
      passes: fit.passes,
      dispersionIndex: fit.dispersion?.index ?? null,
      method: fit.method,
      data: sorted.flatMap((m) => [m.pass.before.scanId, m.pass.after.scanId]),
      n: fit.passes,
      fittedAtMs,
    };
    base.proposal = proposal;
    const d = fit.dispersion;
    if (d?.index != null && d.pValue != null && d.pValue < 0.05)
      base.notes.push(
        `the passes differ more than a Poisson count allows (variance/mean ${fmtCount(d.index)}, p = ${d.pValue.toPrecision(2)}${d.negativeBinomialK !== null ? `, negative-binomial k ≈ ${fmtCount(d.negativeBinomialK)} by moments` : ''}): the Garwood interval is too narrow for the next pass`,
      );
  }
  return base;
}

/**
 * Learns the adders per pass of every tool and chamber (or the one `options.toolId` names) from the
 * stored scans and ledger.
 */
export function learnAdders(
  db: Db,
  options: { toolId?: string; confidence?: number; nowMs?: number } = {},
): AddersReport {
  return learnAddersFrom(learnDataFrom(db), options);
}

/** learnAdders on data already read (learnDataFrom). */
export function learnAddersFrom(
  data: LearnData,
  options: { toolId?: string; confidence?: number; nowMs?: number } = {},
): AddersReport {
  const confidence = options.confidence ?? 0.95;
  const fittedAtMs = options.nowMs ?? Date.now();
  const collected = collectPasses(data);
  const passes = collected.passes.filter((p) => toolSelected(p.toolKey, p.toolId, options.toolId));
  const { matched, issues: matchIssues, position } = matchPasses(data, passes, collected.passes);
  const tools = data.tools;
  const allIssues = [...collected.issues, ...matchIssues];
  const keys = new Map<string, { toolId: string; chamber: string | null }>();
  for (const p of passes) keys.set(p.toolKey, { toolId: p.toolId, chamber: p.chamber });
  for (const i of allIssues)
    if (i.subject && !keys.has(i.subject)) {
      const [toolId, chamber] = i.subject.split('/') as [string, string | undefined];
      if (toolSelected(i.subject, toolId, options.toolId))
        keys.set(i.subject, { toolId, chamber: chamber ?? null });
    }
  if (options.toolId && keys.size === 0) {
    const [toolId, chamber] = options.toolId.split('/') as [string, string | undefined];
    keys.set(options.toolId, { toolId, chamber: chamber ?? null });
  }
  const results = [...keys.entries()]
    .sort(([a], [b]) => a.localeCompare(b))
    .map(([key, t]) =>
      learnToolAdders(
        key,
        t.toolId,
        t.chamber,
        matched.filter((m) => m.pass.toolKey === key),
        tools[key] ?? (t.chamber ? tools[t.toolId] : undefined),
        allIssues.filter((i) => i.subject === key).map((i) => i.message),
        confidence,
        fittedAtMs,
      ),
    );
  return {
    results,
    issues: allIssues.filter(
      (i) => i.subject === null || (options.toolId === undefined && !keys.has(i.subject)),
    ),
    position,
    fittedAtMs,
  };
}
