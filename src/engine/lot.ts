/**
 * assessLot: every pair of a lot (one engine session, shared caches), the lot's call — the worst of
 * its pairs' (hold > re-clean > bond) — its reasons pair by pair, the lot Pareto and dominant source.
 */
import { lotDominant, paretoMetric, sumParetos } from './attribution.ts';
import { MODEL_VERSION } from './config.ts';
import { canonicalHash } from './hash.ts';
import { assessPairInSession, createSession, EngineInputError, type EngineSession } from './pair.ts';
import type { ParameterSetRef } from './parameter-set-types.ts';
import { lineParameters } from './parameters.ts';
import {
  type AssessOptions,
  type Call,
  type LineData,
  type LotAssessment,
  type LotInput,
  type PairAssessment,
  type ProductInput,
  RECLEAN_CAUTION,
  type Reason,
} from './types.ts';

const RANK: Record<Call, number> = { bond: 0, 're-clean': 1, hold: 2 };

export function assessLot(lot: LotInput, line: LineData, opts: AssessOptions): LotAssessment {
  return assessLotInSession(lot, createSession(line, opts.config), opts);
}

export function assessLotInSession(
  lot: LotInput,
  session: EngineSession,
  opts: AssessOptions,
): LotAssessment {
  const product = session.line.products[lot.productId];
  if (!product) throw new EngineInputError(`lot ${lot.lotId}: product "${lot.productId}" is not loaded`);
  const pairs = lot.pairs.map((p) =>
    assessPairInSession(p, session, { ...opts, detail: opts.detail ?? 'summary' }),
  );
  return summariseLot(lot, product, pairs, opts, lineParameters(session.line));
}

/**
 * The lot's figures from its pairs' assessments: the worst call, the reasons pair by pair, counts,
 * the summed Pareto and the dominant source. Pure; the pairs may have been assessed anywhere
 * (in this thread or in a worker) as long as each was assessed with the same options.
 */
export function summariseLot(
  lot: Pick<LotInput, 'lotId' | 'productId'>,
  product: ProductInput,
  pairs: PairAssessment[],
  opts: AssessOptions,
  /** The parameter set the pairs were assessed with (every pair names it too). */
  parameters: ParameterSetRef,
): LotAssessment {
  let call: Call = 'bond';
  for (const p of pairs) if (RANK[p.call] > RANK[call]) call = p.call;
  const reasons: Reason[] = [];
  for (const p of pairs) {
    if (p.call === 'bond') continue;
    for (const r of p.reasons)
      if (r.blocking || r.code === 'fails-spec' || r.code === 'reclean-fixes')
        reasons.push({ ...r, text: `Pair ${p.pairId} (${p.call}): ${r.text}` });
  }
  if (pairs.length === 0)
    reasons.push({ code: 'data-missing', text: `Lot ${lot.lotId} has no pairs to assess.`, blocking: true });
  if (pairs.length === 0) call = 'hold';
  if (call === 'bond')
    reasons.push({
      code: 'within-spec',
      text: `All ${pairs.length} pair(s) are within spec.`,
      blocking: false,
    });
  const counts = {
    bond: pairs.filter((p) => p.call === 'bond').length,
    reclean: pairs.filter((p) => p.call === 're-clean').length,
    hold: pairs.filter((p) => p.call === 'hold').length,
  };
  const metric = paretoMetric(product.spec.minDieYield !== null && product.die !== null);
  const pareto = sumParetos(
    pairs.map((p) => p.pareto),
    metric,
  );
  const dominant = lotDominant(
    pairs.flatMap((p) => p.contributions),
    metric,
  );
  let voids = 0;
  let kills: number | null = null;
  let dies = 0;
  for (const p of pairs) {
    voids += p.figures.voids.value;
    if (p.figures.dieKillsNB) kills = (kills ?? 0) + p.figures.dieKillsNB.value;
    dies += p.figures.dieCount;
  }
  return {
    lotId: lot.lotId,
    productId: lot.productId,
    asOfMs: opts.asOfMs,
    inputsHash: canonicalHash({
      lot: lot.lotId,
      pairs: pairs.map((p) => [p.pairId, p.inputsHash]),
      // the set's hash (absent with the typed values, so their hashes stay what they were)
      parameters: parameters.valuesHash ?? undefined,
    }),
    modelVersion: MODEL_VERSION,
    specVersion: product.spec.version,
    parameters,
    pairs,
    call,
    reasons,
    caution: call === 're-clean' || pairs.some((p) => p.call === 're-clean') ? RECLEAN_CAUTION : null,
    counts,
    pareto,
    dominant,
    totals: { voids, dieKillsNB: kills, dies },
  };
}
