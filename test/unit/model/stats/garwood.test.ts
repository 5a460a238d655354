import { describe, expect, it } from 'vitest';
import { ModelInputError } from '../../../../src/model/errors.ts';
import { garwoodInterval, poissonUpperOneSided } from '../../../../src/model/stats/garwood.ts';

/** Poisson cumulative P(N ≤ n | µ) by direct summation of the probability mass function. */
function poissonCdf(n: number, mu: number): number {
  let term = Math.exp(-mu);
  let sum = 0;
  for (let j = 0; j <= n; j++) {
    sum += term;
    term *= mu / (j + 1);
  }
  return sum;
}

describe('garwoodInterval', () => {
  it('gives [0, 3.6889] for n = 0 at 95 % (Garwood 1936; upper = −ln 0.025, closed form)', () => {
    const { lower, upper } = garwoodInterval(0);
    expect(lower).toBe(0);
    expect(upper).toBeCloseTo(3.6889, 4);
    expect(Math.abs(upper + Math.log(0.025))).toBeLessThan(1e-13);
  });

  it('gives [4.7954, 18.3904] for n = 10 at 95 % ([D]: ½χ²(0.025; 20), ½χ²(0.975; 22))', () => {
    const { lower, upper } = garwoodInterval(10);
    expect(lower).toBeCloseTo(4.7954, 4);
    expect(upper).toBeCloseTo(18.3904, 4);
  });

  it('gives the usual exact-Poisson table limits for n = 1, 2, 5, 20 (values from memory [M], matched by SciPy 1.17.1 chi2.ppf)', () => {
    // 4 decimals as printed in exact-Poisson tables; SciPy: n=1 → 0.025318, 5.571643.
    const table: [number, number, number][] = [
      [1, 0.0253, 5.5716],
      [2, 0.2422, 7.2247],
      [5, 1.6235, 11.6683],
      [20, 12.2165, 30.8884],
    ];
    for (const [n, lo, hi] of table) {
      const r = garwoodInterval(n);
      expect(r.lower).toBeCloseTo(lo, 4);
      expect(r.upper).toBeCloseTo(hi, 4);
    }
  });

  it('puts exactly α/2 of Poisson probability beyond each limit (defining property, direct pmf sums)', () => {
    for (const conf of [0.8, 0.95, 0.99]) {
      const a = 1 - conf;
      for (const n of [1, 3, 10, 40]) {
        const { lower, upper } = garwoodInterval(n, conf);
        expect(Math.abs(1 - poissonCdf(n - 1, lower) - a / 2)).toBeLessThan(1e-12); // P(N ≥ n | lower)
        expect(Math.abs(poissonCdf(n, upper) - a / 2)).toBeLessThan(1e-12); // P(N ≤ n | upper)
      }
    }
  });

  it('covers the true mean at least 95 % of the time for every µ (exact coverage, invariant)', () => {
    const intervals = Array.from({ length: 120 }, (_, n) => garwoodInterval(n));
    for (let mu = 0.05; mu <= 40; mu += 0.37) {
      let coverage = 0;
      let term = Math.exp(-mu);
      for (let n = 0; n < 120; n++) {
        const iv = intervals[n]!;
        if (iv.lower <= mu && mu <= iv.upper) coverage += term;
        term *= mu / (n + 1);
      }
      expect(coverage).toBeGreaterThanOrEqual(0.95 - 1e-12);
    }
  });

  it('widens with confidence and moves up with n (invariant)', () => {
    const a = garwoodInterval(7, 0.9);
    const b = garwoodInterval(7, 0.99);
    expect(b.lower).toBeLessThan(a.lower);
    expect(b.upper).toBeGreaterThan(a.upper);
    let prev = garwoodInterval(0);
    for (let n = 1; n < 50; n++) {
      const cur = garwoodInterval(n);
      expect(cur.lower).toBeGreaterThan(prev.lower);
      expect(cur.upper).toBeGreaterThan(prev.upper);
      expect(cur.lower).toBeLessThan(n);
      expect(cur.upper).toBeGreaterThan(n);
      prev = cur;
    }
  });

  it('handles very large counts (n = 10⁸ stays finite and brackets n)', () => {
    const { lower, upper } = garwoodInterval(1e8);
    // Normal limit: n ± 1.96 √n = 1e8 ± 19600 (±1 for the discreteness terms).
    expect(Math.abs(lower - (1e8 - 19599.6))).toBeLessThan(5);
    expect(Math.abs(upper - (1e8 + 19601.6))).toBeLessThan(5);
  });

  it('rejects non-integer, negative or huge n and confidence outside (0, 1) with ModelInputError', () => {
    for (const n of [-1, 1.5, Number.NaN, Number.POSITIVE_INFINITY, 2e8]) {
      expect(() => garwoodInterval(n)).toThrow(ModelInputError);
      expect(() => garwoodInterval(n)).toThrow(
        /garwoodInterval: n = .* count is out of range; allowed an integer ≥ 0 count/,
      );
    }
    for (const c of [0, 1, 1.5, -0.2, Number.NaN])
      expect(() => garwoodInterval(3, c)).toThrow(/garwoodInterval: confidence = .*allowed > 0 and < 1/);
  });
});

describe('poissonUpperOneSided', () => {
  it('gives 2.9957 for n = 0 at 95 % (= −ln 0.05, the "rule of three")', () => {
    expect(poissonUpperOneSided(0, 0.95)).toBeCloseTo(2.9957, 4);
    expect(Math.abs(poissonUpperOneSided(0) + Math.log(0.05))).toBeLessThan(1e-13);
  });

  it('leaves 1 − confidence of Poisson probability at or below n (defining property)', () => {
    for (const n of [0, 1, 4, 25])
      for (const conf of [0.9, 0.95, 0.999])
        expect(Math.abs(poissonCdf(n, poissonUpperOneSided(n, conf)) - (1 - conf))).toBeLessThan(1e-12);
  });

  it('rejects bad n and confidence with ModelInputError', () => {
    expect(() => poissonUpperOneSided(-3)).toThrow(/poissonUpperOneSided: n = -3 count/);
    expect(() => poissonUpperOneSided(2.2)).toThrow(ModelInputError);
    expect(() => poissonUpperOneSided(2, 1)).toThrow(/poissonUpperOneSided: confidence = 1 is out of range/);
    expect(() => poissonUpperOneSided(2, Number.NaN)).toThrow(ModelInputError);
  });
});
