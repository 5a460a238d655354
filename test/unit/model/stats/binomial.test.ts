/**
 * Binomial intervals (Wilson, Clopper–Pearson) and the incomplete beta function behind them.
 *
 * Sources: Newcombe, "Two-sided confidence intervals for the single proportion: comparison of seven
 * methods", Statistics in Medicine 17 (1998) 857, Table II (examples 81/263, 15/148, 0/20, 1/29;
 * method 3 = Wilson score, method 5 = Clopper–Pearson exact; four decimals) [M: recalled, and agreeing
 * with jstat to the printed digits]; jstat 1.9.6 (beta.inv, ibeta) as the reference library; the
 * coverage properties Brown, Cai & DasGupta (Statistical Science 16 (2001) 101) discuss, computed
 * exactly from the binomial pmf; closed forms by hand computation.
 */
import { describe, expect, it } from 'vitest';
import { ModelInputError } from '../../../../src/model/errors.ts';
import { betaQuantile, regularizedBeta } from '../../../../src/model/stats/beta.ts';
import { clopperPearsonInterval, wilsonInterval } from '../../../../src/model/stats/binomial.ts';
import { logGamma } from '../../../../src/model/stats/gamma.ts';
import { jStat } from './jstat.ts';

describe('regularizedBeta and betaQuantile', () => {
  it('closed forms: I_0.5(2, 3) = 11/16, I_x(1, 1) = x, I_x(a, 1) = x^a (hand computation)', () => {
    expect(regularizedBeta(0.5, 2, 3)).toBeCloseTo(11 / 16, 14);
    expect(regularizedBeta(0.3, 1, 1)).toBeCloseTo(0.3, 14);
    expect(regularizedBeta(0.7, 4.5, 1)).toBeCloseTo(0.7 ** 4.5, 14);
    expect(regularizedBeta(0, 2, 2)).toBe(0);
    expect(regularizedBeta(1, 2, 2)).toBe(1);
  });

  it('closed form I_x(½, ½) = (2/π) arcsin √x (hand computation, 10⁻¹³)', () => {
    for (const x of [0.01, 0.1, 0.25, 0.5, 0.9])
      expect(regularizedBeta(x, 0.5, 0.5)).toBeCloseTo((2 / Math.PI) * Math.asin(Math.sqrt(x)), 13);
  });

  // jstat's ibeta (and beta.inv through it) is itself good only to about 10⁻⁸–10⁻⁷ at large shapes:
  // it gives I_0.5(½, ½) = 0.50000002 where the closed form above is 0.5. Tolerances 10⁻⁷ and 10⁻⁸.
  it('agrees with jstat.ibeta (10⁻⁷) and jstat.beta.inv (10⁻⁸)', () => {
    for (const [a, b] of [
      [0.5, 0.5],
      [2, 5],
      [15, 134],
      [81, 183],
      [400, 1200],
      [3000, 7000],
    ] as const)
      for (const x of [0.01, 0.1, 0.25, 0.3, 0.5, 0.9]) {
        expect(Math.abs(regularizedBeta(x, a, b) - jStat.ibeta(x, a, b))).toBeLessThan(1e-7);
      }
    for (const [a, b] of [
      [1, 20],
      [2, 28],
      [15, 134],
      [82, 182],
      [500, 20],
    ] as const)
      for (const p of [0.001, 0.025, 0.5, 0.975, 0.999])
        expect(Math.abs(betaQuantile(p, a, b) - jStat.beta.inv(p, a, b))).toBeLessThan(1e-8);
  });

  it('inverts: I at the quantile returns p (10⁻¹² absolute)', () => {
    for (const p of [1e-6, 0.025, 0.5, 0.975, 1 - 1e-6])
      expect(Math.abs(regularizedBeta(betaQuantile(p, 7.5, 40), 7.5, 40) - p)).toBeLessThan(1e-12);
  });

  it('matches a direct sum for integer shapes: I_x(a, b) = P(Bin(a + b − 1, x) ≥ a) (hand computation)', () => {
    const a = 6;
    const b = 9;
    const x = 0.37;
    const n = a + b - 1;
    let tail = 0;
    for (let j = a; j <= n; j++)
      tail += Math.exp(
        logGamma(n + 1) - logGamma(j + 1) - logGamma(n - j + 1) + j * Math.log(x) + (n - j) * Math.log1p(-x),
      );
    expect(regularizedBeta(x, a, b)).toBeCloseTo(tail, 13);
  });

  it('refuses x outside [0, 1] and shapes ≤ 0', () => {
    expect(() => regularizedBeta(1.2, 1, 1)).toThrow(/regularizedBeta: x = 1.2/);
    expect(() => betaQuantile(0.5, 0, 1)).toThrow(ModelInputError);
  });
});

describe('wilsonInterval and clopperPearsonInterval', () => {
  // Newcombe 1998 Table II: x/n → Wilson (method 3), Clopper–Pearson (method 5), 4 decimals.
  const table: [number, number, [number, number], [number, number]][] = [
    [81, 263, [0.2553, 0.3662], [0.2527, 0.3676]],
    [15, 148, [0.0624, 0.1605], [0.0578, 0.1617]],
    [0, 20, [0, 0.1611], [0, 0.1684]],
    [1, 29, [0.0061, 0.1718], [0.0009, 0.1776]],
  ];

  it('reproduces Newcombe (1998) Table II to its four decimals (tolerance 5·10⁻⁵, the rounding)', () => {
    for (const [x, n, w, cp] of table) {
      const wi = wilsonInterval(x, n);
      const ci = clopperPearsonInterval(x, n);
      expect(Math.abs(wi.lower - w[0])).toBeLessThan(5e-5);
      expect(Math.abs(wi.upper - w[1])).toBeLessThan(5e-5);
      expect(Math.abs(ci.lower - cp[0])).toBeLessThan(5e-5);
      expect(Math.abs(ci.upper - cp[1])).toBeLessThan(5e-5);
      expect(wi.estimate).toBe(x / n);
    }
  });

  it('Clopper–Pearson equals jstat beta quantiles; Wilson at x = 0 has upper z²/(n + z²) (hand computation)', () => {
    for (const [x, n] of [
      [3, 10],
      [47, 50],
      [500, 1500],
    ] as const) {
      const ci = clopperPearsonInterval(x, n, 0.9);
      expect(Math.abs(ci.lower - jStat.beta.inv(0.05, x, n - x + 1))).toBeLessThan(1e-8);
      expect(Math.abs(ci.upper - jStat.beta.inv(0.95, x + 1, n - x))).toBeLessThan(1e-8);
    }
    const z2 = 1.959963984540054 ** 2;
    expect(wilsonInterval(0, 40).upper).toBeCloseTo(z2 / (40 + z2), 12);
    expect(wilsonInterval(40, 40).lower).toBeCloseTo(40 / (40 + z2), 12);
  });

  /** Exact coverage of an interval method at proportion p for n trials (binomial pmf). */
  function coverage(method: typeof wilsonInterval, n: number, p: number): number {
    let c = 0;
    for (let x = 0; x <= n; x++) {
      const iv = method(x, n);
      if (iv.lower <= p && p <= iv.upper)
        c += Math.exp(
          logGamma(n + 1) -
            logGamma(x + 1) -
            logGamma(n - x + 1) +
            x * Math.log(p) +
            (n - x) * Math.log1p(-p),
        );
    }
    return c;
  }

  it('coverage: Clopper–Pearson never below 95 %; Wilson close to 95 % on average (Brown, Cai & DasGupta 2001)', () => {
    const n = 30;
    let sumWilson = 0;
    let minCp = 1;
    const grid = 197;
    for (let i = 1; i <= grid; i++) {
      const p = i / (grid + 1);
      minCp = Math.min(minCp, coverage(clopperPearsonInterval, n, p));
      sumWilson += coverage(wilsonInterval, n, p);
    }
    // CP is exact by construction (≥ nominal at every p); 1e-9 allows the quantile's rounding.
    expect(minCp).toBeGreaterThanOrEqual(0.95 - 1e-9);
    // BCD 2001 §4 report Wilson's mean coverage near nominal; ±0.015 is this test's judgement of "near".
    expect(Math.abs(sumWilson / grid - 0.95)).toBeLessThan(0.015);
  });

  it('refuses x > n, non-integers and a bad level, naming them', () => {
    expect(() => wilsonInterval(5, 4)).toThrow(
      /wilsonInterval: x = 5 successes is out of range; allowed an integer ≤ n = 4/,
    );
    expect(() => clopperPearsonInterval(1.5, 4)).toThrow(ModelInputError);
    expect(() => wilsonInterval(1, 4, 1)).toThrow(/confidence = 1/);
  });
});
