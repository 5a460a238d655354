import { describe, expect, it } from 'vitest';
import { ModelInputError } from '../../../../src/model/errors.ts';
import { createRng } from '../../../../src/model/rng.ts';
import { hillEstimator, hillEstimatorTruncated, hillFromSums } from '../../../../src/model/stats/hill.ts';

describe('hillEstimator', () => {
  it('gives α̂ = 0.96180 and 95 % interval [0.26206, 2.10808] for x = {1, 2, 4, 8}, x_m = 1', () => {
    // [D] Clauset, Shalizi & Newman 2009 eq. 3.1: α̂ = n/S, S = Σ ln(x_i/x_m) = 6 ln 2;
    // exact interval 2αS ~ χ²(2n): [χ²(0.025; 8), χ²(0.975; 8)] / (2S).
    const r = hillEstimator([1, 2, 4, 8], 1);
    const S = 6 * Math.LN2;
    expect(r.n).toBe(4);
    expect(r.sumLogExcess).toBeCloseTo(S, 14);
    expect(r.alpha).toBeCloseTo(0.9618, 5);
    expect(r.alpha).toBeCloseTo(4 / S, 14);
    expect(r.lower).toBeCloseTo(0.26206, 5);
    expect(r.upper).toBeCloseTo(2.10808, 5);
    expect(r.se).toBeCloseTo(r.alpha / 2, 14);
    // The χ² quantiles agree with the NIST/SEMATECH table (8 df: 2.180 and 17.535, 3 decimals [M]).
    expect(Math.abs(r.lower * 2 * S - 2.18)).toBeLessThan(5e-4);
    expect(Math.abs(r.upper * 2 * S - 17.535)).toBeLessThan(5e-4);
  });

  it('offers the unbiased form (n − 1)/S with the same exact interval', () => {
    const mle = hillEstimator([1, 2, 4, 8], 1);
    const unb = hillEstimator([1, 2, 4, 8], 1, 0.95, { estimator: 'unbiased' });
    expect(unb.estimator).toBe('unbiased');
    expect(unb.alpha).toBeCloseTo(3 / (6 * Math.LN2), 14);
    expect(unb.lower).toBe(mle.lower);
    expect(unb.upper).toBe(mle.upper);
  });

  it('leaves out sizes below the threshold and counts them', () => {
    const r = hillEstimator([0.5, 1, 2, 0.9, 4, 8], 1);
    expect(r.n).toBe(4);
    expect(r.excluded).toBe(2);
    expect(r.alpha).toBeCloseTo(hillEstimator([1, 2, 4, 8], 1).alpha, 14);
  });

  it('does not depend on the unit of size (scale invariance)', () => {
    const nm = [45, 52, 61, 90, 130, 300].map((d) => d * 1e-9);
    const a = hillEstimator(nm, 45e-9);
    const b = hillEstimator(
      nm.map((d) => d * 1e3),
      45e-6,
    );
    expect(b.alpha).toBeCloseTo(a.alpha, 12);
    expect(b.upper).toBeCloseTo(a.upper, 12);
  });

  it('covers the true exponent 95 % of the time and the unbiased form has mean α (simulation)', () => {
    // Pareto samples x = x_m U^(−1/α) from the seeded generator; 4000 replicates of n = 20.
    // Tolerances: 4 binomial SE for coverage, 4 SE of the mean of the unbiased estimator
    // (Var[(n−1)/S] = α²/(n − 2)).
    const rng = createRng(2009);
    const alpha = 2.08;
    const reps = 4000;
    const n = 20;
    let covered = 0;
    let sumUnbiased = 0;
    for (let r = 0; r < reps; r++) {
      const xs = Array.from({ length: n }, () => 50e-9 * (1 - rng.uniform()) ** (-1 / alpha));
      const e = hillEstimator(xs, 50e-9, 0.95, { estimator: 'unbiased' });
      if (e.lower <= alpha && alpha <= e.upper) covered++;
      sumUnbiased += e.alpha;
    }
    expect(Math.abs(covered / reps - 0.95)).toBeLessThan(4 * Math.sqrt((0.95 * 0.05) / reps));
    expect(Math.abs(sumUnbiased / reps - alpha)).toBeLessThan(
      (4 * (alpha / Math.sqrt(n - 2))) / Math.sqrt(reps),
    );
  });

  it('rejects bad sizes, threshold, confidence and estimator with ModelInputError', () => {
    expect(() => hillEstimator([1, Number.NaN, 3], 1)).toThrow(/hillEstimator: sizes\[1\] = NaN m/);
    expect(() => hillEstimator([1, -2, 3], 1)).toThrow(
      /hillEstimator: sizes\[1\] = -2 m is out of range; allowed > 0 m/,
    );
    expect(() => hillEstimator([1, 0], 1)).toThrow(ModelInputError);
    expect(() => hillEstimator([1, Number.POSITIVE_INFINITY], 1)).toThrow(ModelInputError);
    expect(() => hillEstimator('1,2' as unknown as number[], 1)).toThrow(/hillEstimator: sizes/);
    for (const t of [0, -1, Number.NaN])
      expect(() => hillEstimator([1, 2], t)).toThrow(/hillEstimator: thresholdM/);
    for (const c of [0, 1, 2, Number.NaN])
      expect(() => hillEstimator([1, 2], 1, c)).toThrow(/hillEstimator: confidence/);
    expect(() => hillEstimator([1, 2], 1, 0.95, { estimator: 'bogus' as 'mle' })).toThrow(
      /options\.estimator/,
    );
    expect(() => hillEstimator([0.2, 0.5], 1)).toThrow(/at least 1 size/);
    expect(() => hillEstimator([], 1)).toThrow(ModelInputError);
    expect(() => hillEstimator([1, 1, 1], 1)).toThrow(/at least one size above thresholdM/);
    expect(() => hillEstimator([2], 1, 0.95, { estimator: 'unbiased' })).toThrow(/at least 2 size/);
  });
});

describe('hillFromSums', () => {
  it('gives the worked example from n = 4 and S = 6 ln 2 (Clauset, Shalizi & Newman 2009 eq. 3.1)', () => {
    const r = hillFromSums(4, 6 * Math.LN2);
    expect(r.alpha).toBeCloseTo(0.9618, 5);
    expect(r.lower).toBeCloseTo(0.26206, 5);
    expect(r.upper).toBeCloseTo(2.10808, 5);
  });

  it('equals hillEstimator on the same sample, both forms', () => {
    const rng = createRng(5);
    const xs = Array.from({ length: 3000 }, () => 45e-9 * (1 - rng.uniform()) ** (-1 / 1.7));
    for (const estimator of ['mle', 'unbiased'] as const) {
      const a = hillEstimator(xs, 45e-9, 0.9, { estimator });
      const b = hillFromSums(a.n, a.sumLogExcess, 0.9, { estimator });
      const { excluded: _, ...rest } = a;
      expect(b).toEqual(rest);
    }
  });

  it('refuses a bad n, S or confidence with the function and parameter named', () => {
    expect(() => hillFromSums(0, 1)).toThrow(/hillFromSums: n = 0/);
    expect(() => hillFromSums(2.5, 1)).toThrow(/hillFromSums: n/);
    expect(() => hillFromSums(1, 1, 0.95, { estimator: 'unbiased' })).toThrow(/hillFromSums: n = 1/);
    expect(() => hillFromSums(3, 0)).toThrow(/hillFromSums: sumLogExcess = 0/);
    expect(() => hillFromSums(3, Number.NaN)).toThrow(ModelInputError);
    expect(() => hillFromSums(3, 1, 1)).toThrow(/hillFromSums: confidence/);
  });
});

describe('hillEstimatorTruncated', () => {
  /** Truncated-Pareto log-likelihood written straight from the density α x^(−α−1) / (L^(−α) − U^(−α)). */
  const directLogLik = (xs: number[], L: number, U: number, a: number) =>
    xs.reduce((s, x) => s + Math.log(a) - (a + 1) * Math.log(x) - Math.log(L ** -a - U ** -a), 0);

  it('reduces to the Hill estimator when the upper size is far away (U = 10³⁰ x_m)', () => {
    const t = hillEstimatorTruncated([1, 2, 4, 8], 1, 1e30);
    expect(t.alpha).toBeCloseTo(hillEstimator([1, 2, 4, 8], 1).alpha, 12);
    expect(t.se).toBeCloseTo(t.alpha / 2, 10);
  });

  it('maximises the truncated-Pareto likelihood (independent golden-section search on the direct density)', () => {
    const xs = [1, 1.3, 2, 2.2, 4, 5.5, 8];
    const L = 1;
    const U = 10;
    let a = 0.01;
    let b = 6;
    const g = (Math.sqrt(5) - 1) / 2;
    for (let i = 0; i < 200; i++) {
      const c = b - g * (b - a);
      const d = a + g * (b - a);
      if (directLogLik(xs, L, U, c) > directLogLik(xs, L, U, d)) b = d;
      else a = c;
    }
    const t = hillEstimatorTruncated(xs, L, U);
    // Golden section reaches ~1e-8 in α (flat maximum: error ∝ √ε); compare to 1e-6.
    expect(Math.abs(t.alpha - (a + b) / 2)).toBeLessThan(1e-6);
    expect(t.logLikelihood).toBeCloseTo(directLogLik(xs, L, U, t.alpha), 10);
  });

  it('satisfies the score equation of Aban, Meerschaert & Panorska (2006) with r = L/U', () => {
    const xs = [60e-9, 70e-9, 85e-9, 120e-9, 200e-9, 450e-9, 1e-6];
    const L = 50e-9;
    const U = 2e-6;
    const { alpha: a, n } = hillEstimatorTruncated(xs, L, U);
    const r = L / U;
    const score =
      n / a + (n * r ** a * Math.log(r)) / (1 - r ** a) - xs.reduce((s, x) => s + Math.log(x / L), 0);
    expect(Math.abs(score)).toBeLessThan(1e-9 * n);
  });

  it('changes the sign of α̂ when the sizes are mirrored in log size, x → LU/x (invariant)', () => {
    const xs = [1.1, 1.5, 2, 3, 7];
    const a = hillEstimatorTruncated(xs, 1, 10);
    const b = hillEstimatorTruncated(
      xs.map((x) => 10 / x),
      1,
      10,
    );
    expect(b.alpha).toBeCloseTo(-a.alpha, 10);
    expect(b.lower).toBeCloseTo(-a.upper, 8);
    expect(b.upper).toBeCloseTo(-a.lower, 8);
  });

  it('recovers a known exponent from simulated truncated-Pareto sizes within 4 standard errors', () => {
    // Inverse CDF: x = L [1 − u (1 − r^α)]^(−1/α), r = L/U; α = 1.5, L = 50 nm, U = 5 µm, n = 5000.
    const rng = createRng(2006);
    const alpha = 1.5;
    const L = 50e-9;
    const U = 5e-6;
    const r = L / U;
    const xs = Array.from({ length: 5000 }, () => L * (1 - rng.uniform() * (1 - r ** alpha)) ** (-1 / alpha));
    const t = hillEstimatorTruncated(xs, L, U);
    expect(Math.abs(t.alpha - alpha)).toBeLessThan(4 * t.se);
    expect(t.lower).toBeLessThan(t.alpha);
    expect(t.upper).toBeGreaterThan(t.alpha);
    // For large n the likelihood-ratio interval approaches α̂ ± 1.96 SE (within 5 % in width).
    expect(Math.abs((t.upper - t.lower) / (2 * 1.959964 * t.se) - 1)).toBeLessThan(0.05);
  });

  it('leaves out sizes outside [L, U] and counts them', () => {
    const t = hillEstimatorTruncated([0.5, 1, 2, 4, 8, 20], 1, 10);
    expect(t.n).toBe(4);
    expect(t.excluded).toBe(2);
  });

  it('rejects bad input with ModelInputError naming the parameter', () => {
    expect(() => hillEstimatorTruncated([1, 2], 0, 10)).toThrow(/hillEstimatorTruncated: lowerM = 0 m/);
    expect(() => hillEstimatorTruncated([1, 2], 1, 1)).toThrow(
      /hillEstimatorTruncated: upperM = 1 m is out of range; allowed > 1 m/,
    );
    expect(() => hillEstimatorTruncated([1, 2], 1, Number.POSITIVE_INFINITY)).toThrow(/upperM/);
    expect(() => hillEstimatorTruncated([1, Number.NaN], 1, 10)).toThrow(/sizes\[1\]/);
    expect(() => hillEstimatorTruncated([1, 2], 1, 10, 1.5)).toThrow(/confidence/);
    expect(() => hillEstimatorTruncated([20, 30], 1, 10)).toThrow(/at least 1 size in/);
    expect(() => hillEstimatorTruncated([1, 1], 1, 10)).toThrow(/not all at one truncation bound/);
    expect(() => hillEstimatorTruncated([10, 10], 1, 10)).toThrow(/not all at one truncation bound/);
  });
});
