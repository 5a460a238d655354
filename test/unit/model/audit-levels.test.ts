/**
 * Level methods (src/model/audit-levels.ts) against jstat 1.9.6 (a reference library from the
 * registry) for the quantiles, the definition's worked values for the percentile, ISO 14644-1:2015
 * eq. (1) for the class fraction, and hand computation where stated.
 */
import { createRequire } from 'node:module';
import { describe, expect, it } from 'vitest';
import { ModelInputError } from '../../../src/model/errors.ts';
import {
  classFractionLevel,
  logMeanKSigmaLevel,
  negativeBinomialQuantile,
  percentileOf,
  poissonQuantile,
} from '../../../src/model/index.ts';

// jstat has no type declarations; the functions used are typed here.
const jstat = createRequire(import.meta.url)('jstat') as {
  poisson: { cdf: (k: number, l: number) => number };
  negbin: { pdf: (k: number, r: number, p: number) => number };
};

describe('percentileOf (Hyndman & Fan 1996, definition 7)', () => {
  it('worked values: 1…5 at 0.9 → 4.6, at 0.5 → 3, at 0 and 1 the extremes (definition, hand computation)', () => {
    expect(percentileOf([5, 3, 1, 4, 2], 0.9)).toBeCloseTo(4.6, 12);
    expect(percentileOf([1, 2, 3, 4, 5], 0.5)).toBe(3);
    expect(percentileOf([1, 2, 3, 4, 5], 0)).toBe(1);
    expect(percentileOf([1, 2, 3, 4, 5], 1)).toBe(5);
  });
  it('refuses an empty baseline and p outside [0, 1]', () => {
    expect(() => percentileOf([], 0.5)).toThrow(ModelInputError);
    expect(() => percentileOf([1], 1.5)).toThrow(ModelInputError);
  });
});

describe('poissonQuantile against jstat poisson.cdf', () => {
  it('is the smallest k with P(X ≤ k) ≥ p, over means 0.1–100 and p 0.5–0.9999', () => {
    // (jstat's poisson.cdf overflows its factorial above μ ≈ 170, so the check stops at 100.)
    for (const mu of [0.1, 0.7, 1, 4, 12.5, 50, 100])
      for (const p of [0.5, 0.9, 0.95, 0.99, 0.9999]) {
        const k = poissonQuantile(mu, p);
        // jstat's cdf is good to ~1e-12 here; the comparison is with p itself, so no tolerance is needed
        // unless a cdf value lies within 1e-12 of p, which none of these does.
        expect(jstat.poisson.cdf(k, mu)).toBeGreaterThanOrEqual(p);
        if (k > 0) expect(jstat.poisson.cdf(k - 1, mu)).toBeLessThan(p);
      }
  });
  it('worked value: μ = 4, p = 0.95 → 8 (jstat: P(X ≤ 7) = 0.9489, P(X ≤ 8) = 0.9786)', () => {
    expect(poissonQuantile(4, 0.95)).toBe(8);
    expect(poissonQuantile(0, 0.99)).toBe(0);
  });
});

describe('negativeBinomialQuantile against jstat negbin.pdf (summed)', () => {
  it('integer sizes (jstat’s negbin takes integer r): smallest k with P(X ≤ k) ≥ p', () => {
    for (const [mu, r] of [
      [4, 2],
      [10, 1],
      [30, 5],
      [2, 10],
    ] as const)
      for (const p of [0.5, 0.95, 0.99]) {
        const k = negativeBinomialQuantile(mu, r, p);
        // jstat's negbin.pdf(k, r, q) is the probability of k failures before the r-th success with
        // success probability q = r/(r + μ).
        const q = r / (r + mu);
        let cdf = 0;
        for (let j = 0; j <= k; j++) cdf += jstat.negbin.pdf(j, r, q);
        const below = cdf - jstat.negbin.pdf(k, r, q);
        // Sums of up to a few hundred terms: 1e-12 absolute covers their rounding.
        expect(cdf).toBeGreaterThanOrEqual(p - 1e-12);
        expect(below).toBeLessThan(p);
      }
  });
  it('worked value: μ = 4, r = 2, p = 0.95 → 11 (jstat cumulative 0.9461 at 10, 0.9615 at 11)', () => {
    expect(negativeBinomialQuantile(4, 2, 0.95)).toBe(11);
  });
  it('approaches the Poisson quantile as r grows (Var → μ)', () => {
    expect(negativeBinomialQuantile(20, 1e8, 0.99)).toBe(poissonQuantile(20, 0.99));
  });
  it('refuses a size below 0.01 and p = 1', () => {
    expect(() => negativeBinomialQuantile(4, 0.001, 0.9)).toThrow(ModelInputError);
    expect(() => negativeBinomialQuantile(4, 2, 1)).toThrow(ModelInputError);
  });
});

describe('logMeanKSigmaLevel', () => {
  it('hand computation: counts 0, 1, 3 in 1 m³ → y = ln 1, ln 2, ln 4; ȳ = ln 2, s_y = ln 2; k = 2 → e^(3 ln 2) = 8', () => {
    // Tolerance 1e-12: logs and an exp of small numbers.
    expect(logMeanKSigmaLevel([0, 1, 3], [1, 1, 1], 2)).toBeCloseTo(8, 12);
  });
  it('scales with 1/V', () => {
    expect(logMeanKSigmaLevel([0, 1, 3], [2, 2, 2], 2)).toBeCloseTo(4, 12);
  });
  it('refuses a single point', () => {
    expect(() => logMeanKSigmaLevel([1], [1], 2)).toThrow(ModelInputError);
  });
});

describe('classFractionLevel (ISO 14644-1:2015 eq. (1))', () => {
  it('half of ISO 5 at 0.5 µm: 0.5 × 3516.757 = 1758.38 (the demo’s typed alert level 1758)', () => {
    // 10^5 × 0.2^2.08 = 3516.7572…; tolerance 0.01 per m³ (the printed figures).
    expect(classFractionLevel(5, 0.5e-6, 0.5)).toBeCloseTo(1758.379, 2);
  });
  it('refuses a fraction above 1 or of 0', () => {
    expect(() => classFractionLevel(5, 0.5e-6, 1.2)).toThrow(ModelInputError);
    expect(() => classFractionLevel(5, 0.5e-6, 0)).toThrow(ModelInputError);
  });
});
