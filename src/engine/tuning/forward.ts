/**
 * The forward run of the tuning solvers: the subject's pairs assessed under a set of levers, and the
 * spec margin g of the pairs (the smallest relative margin of any spec line of any pair; ≥ 0: met),
 * on the spec's bounds or on the expected figures.
 */
import type { Call, PairAssessment, SpecCheck } from '../types.ts';
import type { ForwardCheck, Lever, SolverBasis } from './types.ts';
import { assessLotScenario, assessPairScenario, type WhatIfContext } from './whatif.ts';

const RANK: Record<Call, number> = { bond: 0, 're-clean': 1, hold: 2 };

/** The relative margin of one spec line (≥ 0: met). */
export function checkMargin(c: SpecCheck): number {
  if (c.metric === 'voids') return (c.limit - c.bound) / Math.max(c.limit, 1);
  if (c.metric === 'unbondedFraction') return c.limit > 0 ? (c.limit - c.bound) / c.limit : c.limit - c.bound;
  return c.bound - c.limit;
}

/** The subject's pairs under a set of levers (summary detail). */
export function pairsUnder(ctx: WhatIfContext, levers: Lever[]): PairAssessment[] {
  return ctx.kind === 'pair'
    ? [assessPairScenario(ctx, { levers }, 'summary')]
    : assessLotScenario(ctx, { levers }, 'summary').pairs;
}

/**
 * The spec lines of a pair on a basis: 'bound' (the spec's own: the figure's bound at its confidence,
 * as the call uses) or 'expected' (the central values against the same limits).
 */
export function checksOn(p: PairAssessment, basis: SolverBasis): SpecCheck[] {
  if (basis === 'bound') return p.specChecks;
  return p.specChecks.map((c) => {
    const v =
      c.metric === 'voids'
        ? p.figures.voids.value
        : c.metric === 'unbondedFraction'
          ? p.figures.unbondedFraction.value
          : (p.figures.dieYield?.value ?? c.bound);
    return { ...c, bound: v, pass: c.metric === 'dieYield' ? v >= c.limit : v <= c.limit };
  });
}

/** Forward check of a set of pairs at one lever value, and its margin g. */
export function forwardOf(
  value: number,
  pairs: PairAssessment[],
  basis: SolverBasis = 'bound',
): ForwardCheck & { margin: number } {
  let worst: ForwardCheck['worst'] = null;
  let margin = Number.POSITIVE_INFINITY;
  let call: Call = 'bond';
  for (const p of pairs) {
    if (RANK[p.call] > RANK[call]) call = p.call;
    for (const c of checksOn(p, basis)) {
      const m = checkMargin(c);
      if (m < margin) {
        margin = m;
        worst = { ...c, pairId: p.pairId };
      }
    }
  }
  if (!Number.isFinite(margin)) margin = 1; // a spec with no line to check is always met
  return { value, withinSpec: margin >= 0, call, worst, margin };
}
