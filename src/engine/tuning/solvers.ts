/**
 * Solvers: the value of one lever at which a pair (or every pair of a lot) just meets its spec at
 * the spec's confidence. The chain is monotone in each lever (methods.md §5: more wait or air → more
 * particles; a stronger clean → fewer), so the spec margin
 *
 *   g(x) = min over pairs and spec lines of the line's relative margin (≥ 0: met)
 *     voids:   (limit − upper bound) / max(limit, 1)
 *     area:    (limit − upper bound) / limit
 *     yield:   lower bound − limit
 *
 * changes sign once on the lever's bracket. The bracket's ends are run first: when the spec fails at
 * the favourable end (zero wait, a perfect clean, the cleanest class) or holds at the unfavourable one,
 * there is no answer and the result says so and why. Otherwise Brent's method (src/model/roots.ts)
 * finds the sign change to the stated tolerance; the answer is the end of the final bracket where the
 * spec is met, and the forward check is the chain run at it and at the other end (just past it, failing).
 * The Monte Carlo bounds are step functions of x (same seed, fixed draws): g is monotone but not smooth,
 * which Brent's bracketing tolerates (it falls back to bisection).
 */

import { removalEfficiency } from '../../model/clean.ts';
import { bisectRoot } from '../../model/roots.ts';
import { fmtPercent, fmtSize } from '../format.ts';
import type { SpecCheck } from '../types.ts';
import { forwardOf, pairsUnder } from './forward.ts';
import { cleanLogistic, D50_RANGE_M, MAX_EXTRA_PASSES } from './scenario.ts';
import type { ForwardCheck, Lever, SolverBasis, SolverName, SolverResult } from './types.ts';
import { ScenarioError } from './types.ts';
import type { WhatIfContext } from './whatif.ts';

export { checkMargin, checksOn, forwardOf, pairsUnder } from './forward.ts';

interface Search {
  solver: SolverName;
  basis: SolverBasis;
  question: string;
  unit: SolverResult['unit'];
  current: number | null;
  /** Bracket in the search variable u (x = toX(u)). */
  lo: number;
  hi: number;
  /** Which end of the bracket is favourable (the spec is easier to meet there). */
  favourable: 'lo' | 'hi';
  /** Tolerance on u. */
  tolerance: number;
  /**
   * When set, u is searched on the multiples of this step only (bisection over whole steps, the
   * tolerance being the step): for a quantity with permitted increments, such as an ISO class.
   */
  grid?: number;
  levers: (x: number) => Lever[];
  toX?: (u: number) => number;
  /** Words for a value in the unit. */
  words: (x: number) => string;
}

function solve(ctx: WhatIfContext, s: Search): SolverResult {
  const toX = s.toX ?? ((u: number) => u);
  const cache = new Map<number, ReturnType<typeof forwardOf>>();
  const run = (u: number) => {
    let hit = cache.get(u);
    if (!hit) {
      const x = toX(u);
      hit = forwardOf(x, pairsUnder(ctx, s.levers(x)), s.basis);
      cache.set(u, hit);
    }
    return hit;
  };
  const subject = { kind: ctx.kind, id: ctx.kind === 'pair' ? ctx.pair.pairId : ctx.lot.lotId } as const;
  const base = {
    solver: s.solver,
    basis: s.basis,
    subject,
    question: s.question,
    unit: s.unit,
    current: s.current,
    bracket: [toX(s.lo), toX(s.hi)] as [number, number],
    tolerance: s.toX ? Math.abs(toX(s.lo + s.tolerance) - toX(s.lo)) : s.tolerance,
  };
  const tolWords = (u: number) => s.words(Math.abs(toX(u + s.tolerance) - toX(u))).replace(/^ISO class /, '');
  const [fav, unfav] = s.favourable === 'lo' ? [s.lo, s.hi] : [s.hi, s.lo];
  const atFav = run(fav);
  const worstWords = (f: ForwardCheck) =>
    f.worst
      ? ` (worst: pair ${f.worst.pairId}, ${f.worst.metric} bound ${fmtBound(f.worst)} against ${fmtLimit(f.worst)})`
      : '';
  if (!atFav.withinSpec)
    return {
      ...base,
      status: 'fails-everywhere',
      value: null,
      margin: null,
      iterations: cache.size,
      forward: { atAnswer: null, pastAnswer: strip(atFav) },
      message: `No answer: ${subject.kind} ${subject.id} is outside spec even at ${s.words(toX(fav))}${worstWords(atFav)} — the rest of the chain alone breaks the spec.`,
    };
  const atUnfav = run(unfav);
  if (atUnfav.withinSpec)
    return {
      ...base,
      status: 'passes-everywhere',
      value: null,
      margin: null,
      iterations: cache.size,
      forward: { atAnswer: strip(atUnfav), pastAnswer: null },
      message: `No limit within the bracket: ${subject.kind} ${subject.id} stays within spec even at ${s.words(toX(unfav))}.`,
    };
  // A met spec with zero margin counts as met: the sign of g is the spec's verdict, never zero.
  const g = (u: number) => {
    const f = run(u);
    return f.withinSpec ? Math.max(f.margin, 1e-12) : Math.min(f.margin, -1e-12);
  };
  const r = s.grid
    ? gridBisect(g, s.lo, s.hi, s.grid)
    : bisectRoot(g, s.lo, s.hi, { xTolerance: s.tolerance, maxIterations: 200 });
  const a = run(r.root);
  const b = run(r.other);
  const [okU, okF, pastF] = a.withinSpec ? [r.root, a, b.withinSpec ? null : b] : [r.other, b, a];
  const value = toX(okU);
  return {
    ...base,
    tolerance: s.toX ? Math.abs(toX(okU + s.tolerance) - toX(okU)) : s.tolerance,
    status: 'found',
    value,
    margin: s.current === null ? null : value - s.current,
    iterations: cache.size,
    forward: { atAnswer: strip(okF), pastAnswer: pastF ? strip(pastF) : null },
    message: `${s.question}: ${s.words(value)}${s.current === null ? '' : ` (as is: ${s.words(s.current)})`}, to within ${tolWords(okU)}.`,
  };
}

/**
 * Bisection over the multiples of `step` between lo and hi (both multiples, g of opposite signs at
 * them): ends at two neighbouring multiples with g of opposite signs, after ⌈log2((hi − lo)/step)⌉
 * evaluations. `root` is the end on lo's side of the sign change, `other` the one on hi's.
 */
function gridBisect(
  g: (u: number) => number,
  lo: number,
  hi: number,
  step: number,
): { root: number; other: number } {
  const at = (k: number) => Number((k * step).toFixed(12));
  let a = Math.round(lo / step);
  let b = Math.round(hi / step);
  const loSign = g(at(a)) > 0;
  while (b - a > 1) {
    const m = Math.floor((a + b) / 2);
    if (g(at(m)) > 0 === loSign) a = m;
    else b = m;
  }
  return { root: at(a), other: at(b) };
}

function strip(f: ReturnType<typeof forwardOf>): ForwardCheck {
  return { value: f.value, withinSpec: f.withinSpec, call: f.call, worst: f.worst };
}

function fmtBound(c: SpecCheck): string {
  return c.metric === 'voids' ? c.bound.toFixed(1) : fmtPercent(c.bound);
}
function fmtLimit(c: SpecCheck): string {
  return c.metric === 'voids'
    ? `≤ ${c.limit}`
    : c.metric === 'dieYield'
      ? `≥ ${fmtPercent(c.limit)}`
      : `≤ ${fmtPercent(c.limit)}`;
}

function wafersOf(ctx: WhatIfContext) {
  const pairs = ctx.inputs.pairs;
  return pairs.flatMap((p) => [p.top, p.bottom].map((w) => ({ pair: p, wafer: w })));
}

/** A duration in hours and minutes ("3 h 12 min", "45 min"). */
export function hoursMinutes(s: number): string {
  const min = Math.round(s / 60);
  return min < 60 ? `${min} min` : `${Math.floor(min / 60)} h ${String(min % 60).padStart(2, '0')} min`;
}

/** Default tolerance of the longest wait, s (5 min: finer than a queue is planned). */
export const WAIT_TOLERANCE_S = 300;

/**
 * The longest wait at a location (each stay there, as the wait lever sets it) that keeps the subject
 * within spec. Bracket [0, max(2 × the longest recorded stay there, 24 h)]. For a pair whose last stay
 * there is still running, also the latest bond time it allows (the stay's start + the answer).
 */
export function solveLongestWait(
  ctx: WhatIfContext,
  locationId: string,
  opts: { toleranceS?: number; maxS?: number; basis?: SolverBasis } = {},
): SolverResult {
  const stays: { startMs: number; durS: number; running: boolean; bondMs: number | null }[] = [];
  for (const { pair, wafer } of wafersOf(ctx))
    for (const s of wafer.ledger)
      if ((s.kind === 'wait' || s.kind === 'transfer') && s.locationId === locationId) {
        const end = Math.min(s.endMs ?? ctx.asOfMs, pair.bondTimeMs ?? ctx.asOfMs);
        stays.push({
          startMs: s.startMs,
          durS: Math.max(0, (end - s.startMs) / 1000),
          running: s.endMs === null && pair.bondTimeMs === null,
          bondMs: pair.bondTimeMs,
        });
      }
  if (stays.length === 0)
    throw new ScenarioError(`no wafer of ${ctx.kind} ${subjectId(ctx)} waits at location "${locationId}"`);
  const current = Math.max(...stays.map((s) => s.durS));
  const hi = opts.maxS ?? Math.max(2 * current, 24 * 3600);
  const r = solve(ctx, {
    solver: 'longest-wait',
    basis: opts.basis ?? 'bound',
    question: `Longest wait at ${locationId} within spec`,
    unit: 's',
    current,
    lo: 0,
    hi,
    favourable: 'lo',
    tolerance: opts.toleranceS ?? WAIT_TOLERANCE_S,
    levers: (x) => [{ kind: 'wait', locationId, durationS: x }],
    words: hoursMinutes,
  });
  const running = stays.filter((s) => s.running);
  if (r.value !== null && running.length > 0)
    r.latestBondTimeMs = Math.min(...running.map((s) => s.startMs)) + Math.floor(r.value * 1000);
  else r.latestBondTimeMs = null;
  return r;
}

function subjectId(ctx: WhatIfContext): string {
  return ctx.kind === 'pair' ? ctx.pair.pairId : ctx.lot.lotId;
}

function cleanOf(ctx: WhatIfContext, cleanId: string) {
  const c = ctx.inputs.line.cleans[cleanId];
  if (!c)
    throw new ScenarioError(
      `unknown clean "${cleanId}" (known: ${Object.keys(ctx.inputs.line.cleans).sort().join(', ') || 'none'})`,
    );
  return c;
}

/** Tolerance of a removal efficiency, fraction (0.1 percentage point). */
export const REMOVAL_TOLERANCE = 0.001;

/**
 * The least removal efficiency a clean needs at a chosen size (the curve keeps its width and moves
 * its d50; see the clean lever's removalAt), with `extraPasses` extra runs of it at the end of the
 * route (0: as the route runs it). Bracket [0, 1].
 */
export function solveCleanRemoval(
  ctx: WhatIfContext,
  cleanId: string,
  diameterM: number,
  opts: { extraPasses?: number; tolerance?: number; basis?: SolverBasis } = {},
): SolverResult {
  const c = cleanOf(ctx, cleanId);
  if (!(diameterM > 0 && diameterM < 1e-3))
    throw new ScenarioError(`size ${diameterM} m: give a size above 0 and below 1 mm`);
  const p = cleanLogistic(c);
  const current = removalEfficiency(diameterM, {
    d50M: p.halfSizeM,
    maxEfficiency: p.maxEfficiency,
    steepness: Math.min(1 / (p.widthDecades * Math.LN10), 50),
  });
  const passes = opts.extraPasses ?? 0;
  return solve(ctx, {
    solver: 'clean-removal',
    basis: opts.basis ?? 'bound',
    question: `Least removal of ${cleanId} at ${fmtSize(diameterM)}${passes ? ` with ${passes} extra pass(es)` : ''} within spec`,
    unit: 'fraction',
    current,
    lo: 0,
    hi: 1,
    favourable: 'hi',
    tolerance: opts.tolerance ?? REMOVAL_TOLERANCE,
    levers: (x) => [
      {
        kind: 'clean',
        cleanId,
        removalAt: { diameterM, efficiency: x },
        ...(passes ? { extraPasses: passes } : {}),
      },
    ],
    words: (x) => fmtPercent(x),
  });
}

/**
 * The largest d50 a clean may have (its width and maximum removal kept) with `extraPasses` extra runs.
 * Searched in log10 d over [0.1 nm, 10 µm] to 0.002 decades (0.5 %).
 */
export function solveCleanD50(
  ctx: WhatIfContext,
  cleanId: string,
  opts: { extraPasses?: number; toleranceDecades?: number; basis?: SolverBasis } = {},
): SolverResult {
  const c = cleanOf(ctx, cleanId);
  const passes = opts.extraPasses ?? 0;
  return solve(ctx, {
    solver: 'clean-d50',
    basis: opts.basis ?? 'bound',
    question: `Largest d50 of ${cleanId}${passes ? ` with ${passes} extra pass(es)` : ''} within spec`,
    unit: 'm',
    current: cleanLogistic(c).halfSizeM,
    lo: Math.log10(D50_RANGE_M[0]),
    hi: Math.log10(10e-6),
    favourable: 'lo',
    tolerance: opts.toleranceDecades ?? 0.002,
    toX: (u) => 10 ** u,
    levers: (x) => [{ kind: 'clean', cleanId, d50M: x, ...(passes ? { extraPasses: passes } : {}) }],
    words: (x) => fmtSize(x),
  });
}

/**
 * The fewest extra runs of a clean (default: the product's re-clean) at the end of the route that
 * bring the subject within spec, within the spec's re-clean limit (maxRecleans less the re-cleans the
 * wafers already had). Counted up from 0: exact (tolerance 0).
 */
export function solveExtraPasses(
  ctx: WhatIfContext,
  cleanId?: string,
  opts: { basis?: SolverBasis } = {},
): SolverResult {
  const basis = opts.basis ?? 'bound';
  const pairs = ctx.inputs.pairs;
  const product = ctx.inputs.line.products[pairs[0]?.productId ?? ''];
  const id = cleanId ?? product?.recleanCleanId ?? null;
  if (!id) throw new ScenarioError(`the product names no re-clean: give the clean to run`);
  cleanOf(ctx, id);
  const had = Math.max(0, ...pairs.flatMap((p) => [p.top.recleanCount, p.bottom.recleanCount]));
  const limit = Math.min(MAX_EXTRA_PASSES, Math.max(0, (product?.spec.maxRecleans ?? 0) - had));
  const checks: ReturnType<typeof forwardOf>[] = [];
  const base = {
    solver: 'extra-passes' as const,
    basis,
    subject: { kind: ctx.kind, id: subjectId(ctx) },
    question: `Fewest extra passes of ${id} within spec`,
    unit: 'passes' as const,
    current: 0,
    bracket: [0, limit] as [number, number],
    tolerance: 0,
  };
  for (let n = 0; n <= limit; n++) {
    const f = forwardOf(n, pairsUnder(ctx, n ? [{ kind: 'clean', cleanId: id, extraPasses: n }] : []), basis);
    checks.push(f);
    if (f.withinSpec)
      return {
        ...base,
        status: 'found',
        value: n,
        margin: n,
        iterations: checks.length,
        forward: { atAnswer: strip(f), pastAnswer: n > 0 ? strip(checks[n - 1]!) : null },
        message:
          n === 0
            ? `No extra pass needed: ${base.subject.kind} ${base.subject.id} is within spec as it is.`
            : `${n} extra pass(es) of ${id} bring ${base.subject.kind} ${base.subject.id} within spec (${n - 1} do not); the limit allows ${limit}.`,
      };
  }
  const last = checks[checks.length - 1]!;
  return {
    ...base,
    status: 'fails-everywhere',
    value: null,
    margin: null,
    iterations: checks.length,
    forward: { atAnswer: null, pastAnswer: strip(last) },
    message: `No answer within the re-clean limit: even ${limit} extra pass(es) of ${id} (the spec allows ${product?.spec.maxRecleans ?? 0} re-cleans, the wafers had ${had}) leave it outside spec.`,
  };
}

/**
 * Step of an ISO class: 0.1, the smallest increment of N that ISO 14644-1:2015 permits for an
 * intermediate class (from memory of the standard's clause on intermediate classes) — a finer
 * answer could not be specified; the search runs on these steps only.
 */
export const CLASS_TOLERANCE = 0.1;

/**
 * The highest (least clean) ISO 14644-1 class of an area that keeps the subject within spec, the air
 * scaled by 10^(class − stated class). Bracket [1, 9]. Needs the location's stated class.
 */
export function solveAreaClass(
  ctx: WhatIfContext,
  locationId: string,
  opts: { basis?: SolverBasis } = {},
): SolverResult {
  const loc = ctx.inputs.line.locations[locationId];
  if (!loc || !ctx.inputs.line.counters[locationId])
    throw new ScenarioError(`location "${locationId}" is not on the route of ${ctx.kind} ${subjectId(ctx)}`);
  if (loc.isoClass === null)
    throw new ScenarioError(`location "${locationId}" states no ISO class to scale from`);
  return solve(ctx, {
    solver: 'area-class',
    basis: opts.basis ?? 'bound',
    question: `Least clean ISO class of ${locationId} within spec`,
    unit: 'class',
    current: loc.isoClass,
    lo: 1,
    hi: 9,
    favourable: 'lo',
    tolerance: CLASS_TOLERANCE,
    grid: CLASS_TOLERANCE,
    levers: (x) => [{ kind: 'air', locationId, isoClass: x }],
    words: (x) => `ISO class ${x.toFixed(1)}`,
  });
}
