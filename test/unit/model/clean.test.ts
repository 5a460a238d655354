import { describe, expect, it } from 'vitest';
import {
  cleanSurvival,
  DEMO_PREBOND_CLEAN,
  fitRemovalCurve,
  type RemovalBand,
  type RemovalCurveParams,
  removalEfficiency,
} from '../../../src/model/clean.ts';
import { ModelInputError } from '../../../src/model/errors.ts';
import { createRng, type Rng } from '../../../src/model/rng.ts';

const nm = 1e-9;

/**
 * Simulated before/after scans: per band, before ~ Poisson(meanPerBand); each particle gets a
 * size uniform in ln d within the band and is removed with probability PRE(d) of the true curve.
 */
function simulateBands(
  rng: Rng,
  truth: RemovalCurveParams,
  edges: number[],
  meanPerBand: number,
): RemovalBand[] {
  return edges.slice(0, -1).map((lo, i) => {
    const hi = edges[i + 1]!;
    const before = rng.poisson(meanPerBand);
    let after = 0;
    for (let j = 0; j < before; j++) {
      const d = lo * (hi / lo) ** rng.uniform();
      if (rng.uniform() >= removalEfficiency(d, truth)) after++;
    }
    return { lowerM: lo, upperM: hi, before, after };
  });
}
const logEdges = (from: number, to: number, n: number) =>
  Array.from({ length: n + 1 }, (_, i) => from * (to / from) ** (i / n));

describe('removalEfficiency / cleanSurvival (logistic in log d)', () => {
  it('is E_max/2 at d50, E_max/(1 + (d50/d)^k) in general, and survival = 1 − PRE', () => {
    const p = { d50M: 40 * nm, maxEfficiency: 0.98, steepness: 3 };
    expect(removalEfficiency(40 * nm, p)).toBeCloseTo(0.49, 15);
    expect(removalEfficiency(80 * nm, p)).toBeCloseTo(0.98 / (1 + 0.5 ** 3), 15);
    expect(removalEfficiency(20 * nm, p)).toBeCloseTo(0.98 / (1 + 2 ** 3), 15);
    for (const d of [5, 30, 100, 1000].map((x) => x * nm))
      expect(cleanSurvival(d, p) + removalEfficiency(d, p)).toBeCloseTo(1, 15);
  });

  it('rises with size toward E_max and is symmetric in ln d about d50 (invariants)', () => {
    const p = { d50M: 40 * nm, maxEfficiency: 0.95, steepness: 2 };
    let prev = 0;
    for (const d of logEdges(1 * nm, 10e-6, 40)) {
      const e = removalEfficiency(d, p);
      expect(e).toBeGreaterThanOrEqual(prev);
      expect(e).toBeLessThanOrEqual(0.95);
      prev = e;
    }
    expect(removalEfficiency(1e-2, p)).toBeCloseTo(0.95, 10); // 0.95/(1 + (4e-6)²)
    expect(removalEfficiency(160 * nm, p) + removalEfficiency(10 * nm, p)).toBeCloseTo(0.95, 14);
  });

  it('reproduces removal above 97 % at ≥ 0.3 µm (latex spheres, Rooney, Pui & Grant 1990) with the demo curve', () => {
    for (const d of [0.3e-6, 0.5e-6, 1e-6, 5e-6])
      expect(removalEfficiency(d, DEMO_PREBOND_CLEAN)).toBeGreaterThan(0.97);
  });

  it('gives the demo expectation ≈ 99 % at 300 nm and 60–80 % at 30–50 nm (common practice [M])', () => {
    expect(removalEfficiency(300 * nm, DEMO_PREBOND_CLEAN)).toBeCloseTo(0.99, 2);
    for (const d of [30, 40, 50].map((x) => x * nm)) {
      expect(removalEfficiency(d, DEMO_PREBOND_CLEAN)).toBeGreaterThanOrEqual(0.6);
      expect(removalEfficiency(d, DEMO_PREBOND_CLEAN)).toBeLessThanOrEqual(0.8);
    }
  });

  it('rejects bad diameters and parameters with ModelInputError', () => {
    for (const fn of [removalEfficiency, cleanSurvival]) {
      expect(() => fn(0, DEMO_PREBOND_CLEAN)).toThrow(
        new RegExp(`${fn.name}: diameterM = 0 m is out of range; allowed > 0 m`),
      );
      expect(() => fn(Number.NaN, DEMO_PREBOND_CLEAN)).toThrow(ModelInputError);
      expect(() => fn(1e-7, { ...DEMO_PREBOND_CLEAN, d50M: -1 })).toThrow(
        new RegExp(`${fn.name}: params.d50M = -1 m`),
      );
      expect(() => fn(1e-7, { ...DEMO_PREBOND_CLEAN, maxEfficiency: 1.01 })).toThrow(
        /params.maxEfficiency = 1.01 is out of range; allowed ≥ 0 and ≤ 1/,
      );
      expect(() => fn(1e-7, { ...DEMO_PREBOND_CLEAN, steepness: 0 })).toThrow(/params.steepness = 0/);
      expect(() => fn(1e-7, { ...DEMO_PREBOND_CLEAN, steepness: Number.POSITIVE_INFINITY })).toThrow(
        ModelInputError,
      );
      expect(() => fn(1e-7, null as unknown as RemovalCurveParams)).toThrow(/params = null/);
    }
  });
});

describe('fitRemovalCurve (binomial maximum likelihood)', () => {
  const truth = { d50M: 35 * nm, maxEfficiency: 0.99, steepness: 2.5 };
  const edges = logEdges(20 * nm, 2e-6, 12);

  it('recovers known parameters from simulated scans within 4 standard errors (round trip, seeded)', () => {
    const fit = fitRemovalCurve(simulateBands(createRng(1990), truth, edges, 3000));
    const se = fit.standardErrors!;
    expect(se).not.toBeNull();
    expect(Math.abs(fit.params.d50M - truth.d50M)).toBeLessThan(4 * se.d50M);
    expect(Math.abs(fit.params.maxEfficiency - truth.maxEfficiency)).toBeLessThan(4 * se.maxEfficiency!);
    expect(Math.abs(fit.params.steepness - truth.steepness)).toBeLessThan(4 * se.steepness);
    // And in plain terms at this sample size: d50 within 5 %, k within 10 %, E_max within 0.005.
    expect(Math.abs(fit.params.d50M / truth.d50M - 1)).toBeLessThan(0.05);
    expect(Math.abs(fit.params.steepness / truth.steepness - 1)).toBeLessThan(0.1);
    expect(Math.abs(fit.params.maxEfficiency - truth.maxEfficiency)).toBeLessThan(0.005);
    expect(fit.degreesOfFreedom).toBe(9);
    expect(fit.flags).toEqual([]);
    expect(fit.bands.every((b) => b.used)).toBe(true);
  });

  it('reports standard errors that match the spread of repeated fits (30 replicates, factor 0.6–1.6)', () => {
    const rng = createRng(4242);
    const d50s: number[] = [];
    const ses: number[] = [];
    for (let r = 0; r < 30; r++) {
      const f = fitRemovalCurve(simulateBands(rng, truth, edges, 1500));
      d50s.push(f.params.d50M);
      ses.push(f.standardErrors!.d50M);
    }
    const mean = d50s.reduce((s, x) => s + x, 0) / d50s.length;
    const sd = Math.sqrt(d50s.reduce((s, x) => s + (x - mean) ** 2, 0) / (d50s.length - 1));
    const meanSe = ses.reduce((s, x) => s + x, 0) / ses.length;
    // With 30 replicates the sample SD is within ±35 % of the truth at ~95 %; 0.6–1.6 allows that.
    expect(sd / meanSe).toBeGreaterThan(0.6);
    expect(sd / meanSe).toBeLessThan(1.6);
  });

  it('fits well where the data follow the curve (p-value not small) and flags a poor fit (p tiny)', () => {
    const good = fitRemovalCurve(simulateBands(createRng(11), truth, edges, 3000));
    expect(good.pValue!).toBeGreaterThan(0.001);
    // A step-shaped removal (0 % below 100 nm, 99 % above) is not a logistic with k ≤ 20 over these bands.
    const bands = edges.slice(0, -1).map((lo, i) => {
      const before = 4000;
      const after = lo * (edges[i + 1]! / lo) ** 0.5 < 100 * nm ? 4000 - (i % 2) * 1200 : 40;
      return { lowerM: lo, upperM: edges[i + 1]!, before, after };
    });
    const bad = fitRemovalCurve(bands);
    expect(bad.pValue!).toBeLessThan(1e-6);
    expect(bad.bands.some((b) => Math.abs(b.pearsonResidual ?? 0) > 5)).toBe(true);
  });

  it('flags bands with net adders (after > before), leaves them out and still fits the rest', () => {
    const bands = simulateBands(createRng(5), truth, edges, 3000);
    bands[1] = { ...bands[1]!, after: bands[1]!.before + 25 };
    bands[4] = { ...bands[4]!, before: 0, after: 3 };
    const fit = fitRemovalCurve(bands);
    expect(fit.flags.map((f) => [f.code, f.band])).toEqual([
      ['adders', 1],
      ['empty-band', 4],
    ]);
    expect(fit.bands[1]!.used).toBe(false);
    expect(fit.bands[1]!.observedEfficiency!).toBeLessThan(0);
    expect(fit.bands[4]!.observedEfficiency).toBeNull();
    expect(fit.degreesOfFreedom).toBe(10 - 3);
    expect(Math.abs(fit.params.d50M / truth.d50M - 1)).toBeLessThan(0.1);
  });

  it('flags a parameter the data cannot pin down (every band far above d50)', () => {
    const high = logEdges(1e-6, 5e-6, 5)
      .slice(0, -1)
      .map((lo, i, a) => ({
        lowerM: lo,
        upperM: a[i + 1] ?? 5e-6,
        before: 1000,
        after: 10,
      }));
    const fit = fitRemovalCurve(high);
    expect(fit.flags.some((f) => f.code === 'parameter-at-bound')).toBe(true);
    expect(fit.params.maxEfficiency).toBeCloseTo(0.99, 3); // E_max itself is well determined
  });

  it('handles complete removal and no removal without NaN', () => {
    const none = fitRemovalCurve(
      edges.slice(0, 5).map((lo, i) => ({ lowerM: lo, upperM: edges[i + 1]!, before: 100, after: 100 })),
    );
    expect(none.params.maxEfficiency).toBe(0);
    expect(Number.isFinite(none.logLikelihood)).toBe(true);
    const all = fitRemovalCurve(
      edges.slice(6, 11).map((lo, i) => ({ lowerM: lo, upperM: edges[i + 7]!, before: 100, after: 0 })),
    );
    expect(all.params.maxEfficiency).toBe(1);
    expect(Number.isFinite(all.deviance)).toBe(true);
    expect(all.standardErrors === null || all.standardErrors.maxEfficiency === null).toBe(true);
  });

  it('rejects malformed bands and too few usable bands with ModelInputError', () => {
    const ok = { lowerM: 5e-8, upperM: 6e-8, before: 10, after: 5 };
    expect(() => fitRemovalCurve([ok, ok, { ...ok, upperM: 4e-8 }])).toThrow(
      /fitRemovalCurve: bands\[2\]\.upperM = 4e-8 m is out of range; allowed > 5e-8 m/,
    );
    expect(() => fitRemovalCurve([ok, ok, { ...ok, before: -1 }])).toThrow(/bands\[2\]\.before = -1 count/);
    expect(() => fitRemovalCurve([ok, ok, { ...ok, after: Number.NaN }])).toThrow(
      /bands\[2\]\.after = NaN count/,
    );
    expect(() => fitRemovalCurve([ok, ok, { ...ok, lowerM: 0 }])).toThrow(/bands\[2\]\.lowerM = 0 m/);
    expect(() => fitRemovalCurve([ok, ok, null as unknown as RemovalBand])).toThrow(/bands\[2\] = null/);
    expect(() => fitRemovalCurve('x' as unknown as RemovalBand[])).toThrow(/fitRemovalCurve: bands/);
    expect(() => fitRemovalCurve([ok, ok, { ...ok, after: 20 }])).toThrow(
      /at least 3 bands with before > 0 and after ≤ before/,
    );
    expect(() => fitRemovalCurve([])).toThrow(ModelInputError);
  });
});
