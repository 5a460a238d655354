/**
 * Tuning solvers (src/engine/tuning/solvers.ts) on lines built in code (invented data):
 * - the closed form of methods.md §5: with deposition linear in the wait's duration at a constant
 *   concentration (models.md, deposition: dose = C·t), the expected voids are a + b·t and the longest
 *   wait for a limit L is t* = (L − a)/b — the solver (expected basis) must land within its tolerance;
 * - every solver's answer re-checked by a forward run from a fresh context on both sides of the root;
 * - no answer when the spec fails at zero wait / holds over the whole bracket, said so;
 * - monotonicity of each lever (fast-check over lever values) on the expected figures, which the
 *   chain computes without sampling (the bounds carry Monte Carlo noise).
 */
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import {
  assessPairScenario,
  createPairContext,
  type Lever,
  type PairContext,
  solveAreaClass,
  solveCleanRemoval,
  solveExtraPasses,
  solveLongestWait,
} from '../../../src/engine/tuning/index.ts';
import type { LineData, PairInput, ProductInput } from '../../../src/engine/types.ts';
import {
  counterSeries,
  H,
  line,
  location,
  pair,
  scan,
  someParticles,
  step,
  T0,
  wafer,
} from '../../helpers/engine-inputs.ts';

const CH = [0.1e-6, 0.3e-6, 0.5e-6, 1e-6, 5e-6];
/** Constant air in BAY: cumulative concentrations ≥ each channel, /m³ (an ISO class 7-ish room). */
const CONC = [3.5e6, 1.0e6, 3.5e5, 8.3e4, 2.9e3];

/** An unscanned pair (incoming level) that waits 10 h open in BAY at constant air, then bonds. */
function waitingPair(): { pair: PairInput; line: LineData } {
  const w = (id: string) =>
    wafer(id, null, [
      step(0, 'activation', T0, T0 + 0.1 * H, { toolId: 'ACT' }),
      step(1, 'wait', T0 + 0.2 * H, T0 + 10.2 * H, { locationId: 'BAY' }),
    ]);
  return {
    pair: pair('P-1', w('W-1'), w('W-2'), { bondTimeMs: T0 + 10.3 * H }),
    line: line({
      locations: { BAY: location('BAY', { isoClass: 7 }) },
      counters: { BAY: counterSeries('BAY', T0 - H, T0 + 12 * H, CH, () => CONC) },
    }),
  };
}

function withSpec(l: LineData, spec: Partial<ProductInput['spec']>): LineData {
  const p = l.products['HB-1']!;
  return { ...l, products: { 'HB-1': { ...p, spec: { ...p.spec, ...spec } } } };
}

const ASOF = T0 + 11 * H;
const voidsAt = (ctx: PairContext, levers: Lever[]) =>
  assessPairScenario(ctx, { levers }, 'summary').figures.voids.value;

describe('longest wait: the closed form t* = (L − a)/b (methods.md §5)', () => {
  const base = waitingPair();
  const probe = createPairContext(base.pair, base.line, { asOfMs: ASOF, detail: 'summary' });
  const wait = (t: number): Lever[] => [{ kind: 'wait', locationId: 'BAY', durationS: t }];
  const a = voidsAt(probe, wait(0));
  const b = (voidsAt(probe, wait(10 * 3600)) - a) / (10 * 3600);

  it('the expected voids are linear in the wait (the premise: dose = C·t at a constant concentration)', () => {
    expect(b).toBeGreaterThan(0);
    for (const t of [1.5, 4, 7.25]) {
      // tolerance 1e-9 relative: floating-point summation only
      expect(voidsAt(probe, wait(t * 3600))).toBeCloseTo(a + b * t * 3600, 9);
    }
  });

  it('the solver lands on (L − a)/b within its tolerance, and the forward runs straddle it', () => {
    const tStar = 4.3 * 3600;
    const L = a + b * tStar; // the limit whose closed-form root is 4.3 h
    const ctx = createPairContext(
      base.pair,
      withSpec(base.line, { maxVoids: L, maxUnbondedFraction: null, minDieYield: null }),
      {
        asOfMs: ASOF,
        detail: 'summary',
      },
    );
    const r = solveLongestWait(ctx, 'BAY', { basis: 'expected', toleranceS: 60 });
    expect(r.status).toBe('found');
    expect(r.tolerance).toBe(60);
    // tolerance: the bisection's final bracket (≤ 60 s) plus nothing else (the margin is linear)
    expect(Math.abs(r.value! - tStar)).toBeLessThanOrEqual(60);
    expect(r.forward.atAnswer?.withinSpec).toBe(true);
    expect(r.forward.pastAnswer?.withinSpec).toBe(false);
    expect(r.forward.pastAnswer!.value - r.value!).toBeGreaterThan(0);
    expect(r.forward.pastAnswer!.value - r.value!).toBeLessThanOrEqual(60);
    // the current stay is the recorded 10 h, so the margin is the answer less 10 h
    expect(r.current).toBe(10 * 3600);
    expect(r.margin).toBeCloseTo(r.value! - 10 * 3600, 6);
    // a fresh context, run forward at the answer and one tolerance past it: the same verdicts
    const fresh = createPairContext(
      base.pair,
      withSpec(base.line, { maxVoids: L, maxUnbondedFraction: null, minDieYield: null }),
      {
        asOfMs: ASOF,
        detail: 'summary',
      },
    );
    expect(voidsAt(fresh, wait(r.value!))).toBeLessThanOrEqual(L);
    expect(voidsAt(fresh, wait(r.value! + 60))).toBeGreaterThan(L);
  });

  it('says there is no answer when the spec fails even at zero wait, and why', () => {
    const ctx = createPairContext(
      base.pair,
      withSpec(base.line, { maxVoids: a * 0.5, maxUnbondedFraction: null, minDieYield: null }),
      {
        asOfMs: ASOF,
        detail: 'summary',
      },
    );
    const r = solveLongestWait(ctx, 'BAY', { basis: 'expected' });
    expect(r.status).toBe('fails-everywhere');
    expect(r.value).toBeNull();
    expect(r.message).toMatch(/outside spec even at 0 min/);
    expect(r.forward.pastAnswer?.withinSpec).toBe(false);
  });

  it('says so when the spec holds over the whole bracket', () => {
    const ctx = createPairContext(
      base.pair,
      withSpec(base.line, { maxVoids: 1e6, maxUnbondedFraction: null, minDieYield: null }),
      {
        asOfMs: ASOF,
        detail: 'summary',
      },
    );
    const r = solveLongestWait(ctx, 'BAY', { basis: 'expected' });
    expect(r.status).toBe('passes-everywhere');
    expect(r.message).toMatch(/stays within spec even at 24 h 00 min/);
  });
});

/** A scanned pair with a clean after the activation, a wait in BAY and the product's re-clean. */
function cleanedPair(): { pair: PairInput; line: LineData } {
  const w = (id: string, shift: number) =>
    wafer(
      id,
      scan(`S-${id}`, T0, ...(Object.values(someParticles(60, shift)) as [number[], number[], number[]])),
      [
        step(0, 'activation', T0 + 0.5 * H, T0 + 0.6 * H, { toolId: 'ACT' }),
        step(1, 'clean', T0 + 1 * H, T0 + 1.1 * H, { cleanId: 'PBC' }),
        step(2, 'wait', T0 + 1.5 * H, T0 + 4.5 * H, { locationId: 'BAY', carrier: 'closed' }),
      ],
    );
  return {
    pair: pair('P-2', w('W-3', 0), w('W-4', 7), { bondTimeMs: T0 + 5 * H }),
    line: line({
      tools: {
        ACT: { ...line().tools.ACT!, adders: { countAbove: 30, atDiameterM: 45e-9, slope: 2, fromM: null } },
        BONDER: line().tools.BONDER!,
      },
      locations: { BAY: location('BAY', { isoClass: 6 }) },
      counters: { BAY: counterSeries('BAY', T0, T0 + 6 * H, CH, () => CONC) },
    }),
  };
}

describe('every solver re-checked forward, on both sides of its answer', () => {
  const base = cleanedPair();
  const probe = createPairContext(base.pair, base.line, { asOfMs: ASOF, detail: 'summary' });
  const ctxWith = (limit: number) =>
    createPairContext(
      base.pair,
      withSpec(base.line, { maxVoids: limit, maxUnbondedFraction: null, minDieYield: null, maxRecleans: 3 }),
      { asOfMs: ASOF, detail: 'summary' },
    );
  const asIsVoids = probe.asIs.figures.voids.value;
  type Case = [
    string,
    (c: PairContext) => ReturnType<typeof solveLongestWait>,
    (x: number) => Lever[],
    number,
    Lever[],
  ];
  const cases: Case[] = [
    [
      'clean-removal',
      (c) => solveCleanRemoval(c, 'PBC', 60e-9, { basis: 'expected' }),
      (x) => [{ kind: 'clean', cleanId: 'PBC', removalAt: { diameterM: 60e-9, efficiency: x } }],
      -1,
      [{ kind: 'clean', cleanId: 'PBC', removalAt: { diameterM: 60e-9, efficiency: 1 } }],
    ],
    [
      'area-class',
      (c) => solveAreaClass(c, 'BAY', { basis: 'expected' }),
      (x) => [{ kind: 'air', locationId: 'BAY', isoClass: x }],
      1,
      [{ kind: 'air', locationId: 'BAY', isoClass: 1 }],
    ],
  ];
  for (const [name, run, levers, direction, best] of cases)
    it(`${name}: within spec at the answer, outside just past it (a fresh run of the chain)`, () => {
      // a limit halfway between the best the lever can do and the as-is voids: a root exists
      const limit = (voidsAt(probe, best) + asIsVoids) / 2;
      const r = run(ctxWith(limit));
      expect(r.status, r.message).toBe('found');
      const f = ctxWith(limit);
      expect(voidsAt(f, levers(r.value!))).toBeLessThanOrEqual(limit);
      const past = r.forward.pastAnswer!.value;
      // past the answer on the failing side, within the tolerance
      expect(Math.sign(past - r.value!)).toBe(direction);
      expect(Math.abs(past - r.value!)).toBeLessThanOrEqual(r.tolerance * (1 + 1e-9));
      expect(voidsAt(f, levers(past))).toBeGreaterThan(limit);
    });

  const limit = asIsVoids / 1.3;
  const ctx = ctxWith(limit);
  const fresh = () => ctxWith(limit);

  it('extra-passes: the fewest passes within spec, one fewer outside, within the re-clean limit', () => {
    const r = solveExtraPasses(ctx, 'PBC', { basis: 'expected' });
    expect(r.status).toBe('found');
    expect(r.value).toBeGreaterThanOrEqual(1);
    expect(r.bracket).toEqual([0, 3]);
    const f = fresh();
    expect(voidsAt(f, [{ kind: 'clean', cleanId: 'PBC', extraPasses: r.value! }])).toBeLessThanOrEqual(limit);
    const fewer = r.value! - 1;
    expect(voidsAt(f, fewer ? [{ kind: 'clean', cleanId: 'PBC', extraPasses: fewer }] : [])).toBeGreaterThan(
      limit,
    );
  });

  it('extra-passes: none within a re-clean limit already used up, and why', () => {
    const used = { ...base.pair, top: { ...base.pair.top, recleanCount: 3 } };
    const c = createPairContext(
      used,
      withSpec(base.line, { maxVoids: limit, maxUnbondedFraction: null, minDieYield: null, maxRecleans: 3 }),
      {
        asOfMs: ASOF,
        detail: 'summary',
      },
    );
    const r = solveExtraPasses(c, 'PBC', { basis: 'expected' });
    expect(r.status).toBe('fails-everywhere');
    expect(r.message).toMatch(/re-clean limit/);
  });
});

describe('each lever moves the expected figures one way (property test, fast-check)', () => {
  const base = cleanedPair();
  const ctx = createPairContext(base.pair, base.line, { asOfMs: ASOF, detail: 'summary' });
  const figures = (levers: Lever[]) => assessPairScenario(ctx, { levers }, 'summary').figures;
  // direction +1: a larger lever value gives at least as many voids; −1: at most as many.
  const levers: [string, fc.Arbitrary<number>, (v: number) => Lever[], 1 | -1][] = [
    [
      'wait duration',
      fc.double({ min: 0, max: 20 * 3600, noNaN: true }),
      (v) => [{ kind: 'wait', locationId: 'BAY', durationS: v }],
      1,
    ],
    [
      'air scale',
      fc.double({ min: 0, max: 1e3, noNaN: true }),
      (v) => [{ kind: 'air', locationId: 'BAY', scale: v }],
      1,
    ],
    [
      'air class',
      fc.double({ min: 1, max: 9, noNaN: true }),
      (v) => [{ kind: 'air', locationId: 'BAY', isoClass: v }],
      1,
    ],
    [
      'wait isolation',
      fc.double({ min: 1, max: 1e4, noNaN: true }),
      (v) => [{ kind: 'wait', locationId: 'BAY', isolation: v }],
      -1,
    ],
    [
      'adders factor',
      fc.double({ min: 0, max: 10, noNaN: true }),
      (v) => [{ kind: 'adders', toolKey: 'ACT', factor: v }],
      1,
    ],
    [
      'clean d50',
      fc.double({ min: 1e-9, max: 1e-6, noNaN: true }),
      (v) => [{ kind: 'clean', cleanId: 'PBC', d50M: v }],
      1,
    ],
    [
      'clean removal at 60 nm',
      fc.double({ min: 0, max: 1, noNaN: true }),
      (v) => [{ kind: 'clean', cleanId: 'PBC', removalAt: { diameterM: 60e-9, efficiency: v } }],
      -1,
    ],
    [
      'extra passes',
      fc.integer({ min: 0, max: 10 }),
      (v) => [{ kind: 'clean', cleanId: 'PBC', extraPasses: v }],
      -1,
    ],
    [
      'deposition factor',
      fc.double({ min: 0.01, max: 100, noNaN: true }),
      (v) => [{ kind: 'deposition', factor: v }],
      1,
    ],
    [
      'interface energy',
      fc.double({ min: 0.05, max: 5, noNaN: true }),
      (v) => [{ kind: 'energy', energyJm2: v }],
      -1,
    ],
  ];
  for (const [name, values, lever, direction] of levers)
    it(`${name}: ${direction > 0 ? 'more' : 'fewer'} voids and unbonded area as it rises`, () => {
      fc.assert(
        fc.property(values, values, (x, y) => {
          const [lo, hi] = x <= y ? [x, y] : [y, x];
          const a = figures(lever(lo));
          const b = figures(lever(hi));
          // tolerance 1e-9 relative: equal inputs in floating point (e.g. both ends on a plateau)
          const le = (p: number, q: number) => p <= q * (1 + 1e-9) + 1e-12;
          if (direction > 0) {
            expect(le(a.voids.value, b.voids.value)).toBe(true);
            expect(le(a.unbondedFraction.value, b.unbondedFraction.value)).toBe(true);
          } else {
            expect(le(b.voids.value, a.voids.value)).toBe(true);
            expect(le(b.unbondedFraction.value, a.unbondedFraction.value)).toBe(true);
          }
        }),
        { seed: 15_001, numRuns: 12 },
      );
    }, 60_000);
});
