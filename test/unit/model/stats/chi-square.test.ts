import { describe, expect, it } from 'vitest';
import { ModelInputError } from '../../../../src/model/errors.ts';
import {
  chiSquareCdf,
  chiSquareQuantile,
  chiSquareSurvival,
} from '../../../../src/model/stats/chi-square.ts';
import { logGamma } from '../../../../src/model/stats/gamma.ts';
import { jStat } from './jstat.ts';

const rel = (a: number, b: number) => Math.abs(a - b) / Math.abs(b);

/*
 * NIST/SEMATECH e-Handbook of Statistical Methods, "Critical Values of the Chi-Square Distribution"
 * (§1.3.6.7.4; section number from memory). Upper-tail table: x with P(X > x) = 0.10, 0.05,
 * 0.025, 0.01, 0.001 — values from memory [M] (each confirmed by jstat in the grid test below).
 * Lower-tail rows: x with P(X > x) = 0.90, 0.95, 0.975, 0.99, 0.999, as reproduced from the
 * handbook (September 2011 edition) in a published appendix table.
 * Printed to 3 decimals, so the tolerance is half a unit of the last digit: 5e-4.
 */
const UPPER_TAIL = [0.1, 0.05, 0.025, 0.01, 0.001];
const NIST_UPPER: [number, number[]][] = [
  [1, [2.706, 3.841, 5.024, 6.635, 10.828]],
  [2, [4.605, 5.991, 7.378, 9.21, 13.816]],
  [5, [9.236, 11.07, 12.833, 15.086, 20.515]],
  [10, [15.987, 18.307, 20.483, 23.209, 29.588]],
  [20, [28.412, 31.41, 34.17, 37.566, 45.315]],
  [100, [118.498, 124.342, 129.561, 135.807, 149.449]],
];
const LOWER_TAIL = [0.9, 0.95, 0.975, 0.99, 0.999];
const NIST_LOWER: [number, number[]][] = [
  [10, [4.865, 3.94, 3.247, 2.558, 1.479]],
  [30, [20.599, 18.493, 16.791, 14.953, 11.588]],
  [100, [82.358, 77.929, 74.222, 70.065, 61.918]],
];

describe('chiSquareQuantile', () => {
  it('reproduces the NIST/SEMATECH upper-tail critical values to the printed 3 decimals', () => {
    for (const [k, row] of NIST_UPPER)
      row.forEach((v, i) => {
        expect(Math.abs(chiSquareQuantile(1 - UPPER_TAIL[i]!, k) - v)).toBeLessThanOrEqual(5e-4);
      });
  });

  it('reproduces the NIST/SEMATECH lower-tail critical values to the printed 3 decimals', () => {
    for (const [k, row] of NIST_LOWER)
      row.forEach((v, i) => {
        expect(Math.abs(chiSquareQuantile(1 - LOWER_TAIL[i]!, k) - v)).toBeLessThanOrEqual(5e-4);
      });
  });

  it('agrees with jstat.chisquare.inv over a grid of p and (non-integer) k', () => {
    // 1e-9 relative: jstat's inverse stops its Newton iteration near 1e-10 relative (measured max
    // difference on this grid 1.1e-10); ours round-trips to ~1e-13 (next test).
    const ps = [0.001, 0.01, 0.025, 0.05, 0.1, 0.25, 0.5, 0.75, 0.9, 0.95, 0.975, 0.99, 0.999];
    for (const k of [0.1, 0.25, 0.5, 1, 1.5, 2, 3.7, 5, 10, 25.5, 50, 100, 250])
      for (const p of ps) expect(rel(chiSquareQuantile(p, k), jStat.chisquare.inv(p, k))).toBeLessThan(1e-9);
  });

  it('inverts the CDF: F(F⁻¹(p)) = p, including far tails and tiny k (round trip)', () => {
    const ps = [1e-100, 1e-15, 1e-5, 0.2, 0.5, 0.5000001, 0.8, 1 - 1e-5, 1 - 1e-15];
    for (const k of [0.1, 0.13, 0.5, 0.99, 1, 2.5, 9.9, 30, 333.3, 1e5, 1e7, 2e9])
      for (const p of ps) {
        const x = chiSquareQuantile(p, k);
        if (x === 0) {
          // Underflow is allowed only where the small-x limit P(a, y) ≈ y^a / Γ(a + 1) puts the
          // true quantile below the smallest double: ln y = [ln p + ln Γ(a + 1)] / a < −744.
          expect(p).toBeLessThan(0.5);
          expect((Math.log(p) + logGamma(k / 2 + 1)) / (k / 2)).toBeLessThan(-744);
          continue;
        }
        // Compare in the tail that is small, where relative precision is meaningful.
        const back = p > 0.5 ? chiSquareSurvival(x, k) : chiSquareCdf(x, k);
        const target = p > 0.5 ? 1 - p : p;
        // 1e-9 relative: worst case measured 7e-11 (k = 2e9 in a 1e-100 tail); 1e-13 typical.
        expect(rel(back, target)).toBeLessThan(1e-9);
      }
  });

  it('matches closed forms: k = 2 gives −2 ln(1 − p); k = 1 gives z²', () => {
    for (const p of [1e-6, 0.01, 0.3, 0.9, 0.999999])
      expect(rel(chiSquareQuantile(p, 2), -2 * Math.log1p(-p))).toBeLessThan(1e-13);
    // z(0.975) = 1.959963984540054 (standard normal quantile, e.g. jStat.normal.inv)
    expect(rel(chiSquareQuantile(0.95, 1), 1.959963984540054 ** 2)).toBeLessThan(1e-13);
    expect(rel(chiSquareQuantile(0.95, 1), jStat.normal.inv(0.975, 0, 1) ** 2)).toBeLessThan(1e-12);
  });

  it('rises with p and with k (invariant)', () => {
    for (const k of [0.1, 1, 7.5, 80]) {
      let prev = -1;
      for (const p of [1e-9, 0.001, 0.1, 0.4, 0.6, 0.9, 0.999, 1 - 1e-9]) {
        const x = chiSquareQuantile(p, k);
        expect(x).toBeGreaterThan(prev);
        prev = x;
      }
    }
    for (const p of [0.05, 0.5, 0.95]) {
      let prev = -1;
      for (const k of [0.1, 0.5, 1, 2, 10, 100]) {
        const x = chiSquareQuantile(p, k);
        expect(x).toBeGreaterThan(prev);
        prev = x;
      }
    }
  });

  it('underflows to 0 (not NaN) when the quantile is below the smallest double', () => {
    const x = chiSquareQuantile(1e-300, 0.1);
    expect(x).toBe(0);
  });

  it('rejects p outside (0, 1), k outside [0.1, 2e9] and non-finite input with ModelInputError', () => {
    for (const p of [0, 1, -0.1, 1.1, Number.NaN, Number.POSITIVE_INFINITY])
      expect(() => chiSquareQuantile(p, 3)).toThrow(/chiSquareQuantile: p = .*allowed > 0 and < 1/);
    for (const k of [0.09, 0, -1, 3e9, Number.NaN, Number.NEGATIVE_INFINITY])
      expect(() => chiSquareQuantile(0.5, k)).toThrow(
        /chiSquareQuantile: k = .* degrees of freedom is out of range; allowed ≥ 0.1 degrees of freedom and ≤ 2000000000/,
      );
  });
});

describe('chiSquareCdf / chiSquareSurvival', () => {
  it('agrees with jstat.chisquare.cdf over a grid', () => {
    // 1e-9 absolute (jstat's incomplete gamma is good to about 1e-10; measured max 6e-11).
    for (const k of [0.1, 0.5, 1, 2, 3.7, 10, 25.5, 100, 250])
      for (const x of [0.001, 0.1, 0.5, 1, 2, 5, 10, 30, 100, 300])
        expect(Math.abs(chiSquareCdf(x, k) - jStat.chisquare.cdf(x, k))).toBeLessThan(1e-9);
  });

  it('gives F(3.841; 1) ≈ 0.95 and F(18.307; 10) ≈ 0.95 (NIST/SEMATECH table, 3 decimals)', () => {
    // A 3-decimal x shifts F by at most density × 5e-4 < 1e-4 here.
    expect(Math.abs(chiSquareCdf(3.841, 1) - 0.95)).toBeLessThan(1e-4);
    expect(Math.abs(chiSquareCdf(18.307, 10) - 0.95)).toBeLessThan(1e-4);
  });

  it('keeps the upper tail exact far out: Q(x; 2) = e^(−x/2) at x = 1000 (exponential law)', () => {
    expect(rel(chiSquareSurvival(1000, 2), Math.exp(-500))).toBeLessThan(1e-12);
    expect(chiSquareCdf(0, 4)).toBe(0);
    expect(chiSquareSurvival(0, 4)).toBe(1);
  });

  it('rejects bad x and k with ModelInputError', () => {
    for (const fn of [chiSquareCdf, chiSquareSurvival]) {
      for (const x of [-1, Number.NaN, Number.POSITIVE_INFINITY]) {
        expect(() => fn(x, 2)).toThrow(ModelInputError);
        expect(() => fn(x, 2)).toThrow(new RegExp(`${fn.name}: x = .*allowed ≥ 0`));
      }
      for (const k of [0.05, 2.5e9, Number.NaN])
        expect(() => fn(1, k)).toThrow(new RegExp(`${fn.name}: k = .*allowed ≥ 0.1 degrees of freedom`));
    }
  });
});
