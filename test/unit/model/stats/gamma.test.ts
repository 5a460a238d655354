import { describe, expect, it } from 'vitest';
import { ModelInputError } from '../../../../src/model/errors.ts';
import {
  logGamma,
  logGammaPrefactor,
  regularizedGammaP,
  regularizedGammaQ,
} from '../../../../src/model/stats/gamma.ts';
import { jStat } from './jstat.ts';

const rel = (a: number, b: number) => Math.abs(a - b) / Math.max(Math.abs(b), Number.MIN_VALUE);

describe('logGamma', () => {
  it('equals ln((n − 1)!) at the integers (exact factorials)', () => {
    let f = 1;
    for (let n = 1; n <= 25; n++) {
      if (n > 1) f *= n - 1;
      // Tolerance 1e-14 relative: (n−1)! is exact in double up to 22!, and Press et al. 2007 §6.1
      // state a relative error below 1e-15 for this Lanczos form.
      expect(rel(logGamma(n), Math.log(f))).toBeLessThan(1e-14);
    }
  });

  it('gives ln Γ(½) = ln √π and ln Γ(3/2) = ln(√π / 2) (Abramowitz & Stegun 1964, §6.1; equation numbers 6.1.8–6.1.9 from memory)', () => {
    expect(rel(logGamma(0.5), Math.log(Math.sqrt(Math.PI)))).toBeLessThan(1e-14);
    expect(rel(logGamma(1.5), Math.log(Math.sqrt(Math.PI) / 2))).toBeLessThan(1e-13);
  });

  it('agrees with jstat.gammaln', () => {
    // jstat uses a Lanczos series of its own; the two agree to 4e-13 relative on this grid.
    for (const x of [1e-5, 0.01, 0.3, 1.5, 2.5, 7, 33.3, 100, 171.5, 1000, 1e6])
      expect(rel(logGamma(x), jStat.gammaln(x))).toBeLessThan(1e-12);
  });

  it('stays finite for the smallest positive x: ln Γ(x) → −ln x (Γ(x) ~ 1/x)', () => {
    expect(logGamma(Number.MIN_VALUE)).toBeCloseTo(-Math.log(Number.MIN_VALUE), 10);
    expect(logGamma(1e-300)).toBeCloseTo(300 * Math.LN10, 10);
  });

  it('satisfies the recurrence ln Γ(x + 1) = ln Γ(x) + ln x (invariant)', () => {
    for (const x of [0.001, 0.2, 0.9, 3.3, 12.5, 80, 4000])
      expect(Math.abs(logGamma(x + 1) - logGamma(x) - Math.log(x))).toBeLessThan(
        1e-12 * Math.max(1, logGamma(x + 1)),
      );
  });

  it('rejects x ≤ 0 and non-finite x with ModelInputError naming the function and parameter', () => {
    for (const bad of [0, -1, Number.NaN, Number.POSITIVE_INFINITY, Number.NEGATIVE_INFINITY]) {
      expect(() => logGamma(bad)).toThrow(ModelInputError);
      expect(() => logGamma(bad)).toThrow(/logGamma: x = .* allowed > 0/);
    }
  });
});

describe('regularizedGammaP / regularizedGammaQ', () => {
  it('gives P(1, x) = 1 − e^(−x) and Q(1, x) = e^(−x) (exponential law, exact)', () => {
    for (const x of [1e-8, 0.01, 0.5, 1, 2, 10, 50, 300]) {
      expect(rel(regularizedGammaP(1, x), -Math.expm1(-x))).toBeLessThan(1e-13);
      expect(rel(regularizedGammaQ(1, x), Math.exp(-x))).toBeLessThan(1e-12); // keeps e⁻³⁰⁰ to 12 digits
    }
  });

  it('gives Q(n, x) = e^(−x) Σ_{j<n} x^j / j! for integer n (Poisson–gamma identity, exact sum)', () => {
    for (const n of [2, 3, 7, 15, 40]) {
      for (const x of [0.3, 2, 6.5, 20, 45]) {
        let term = Math.exp(-x);
        let sum = 0;
        for (let j = 0; j < n; j++) {
          sum += term;
          term *= x / (j + 1);
        }
        // 1e-12 relative: the direct sum itself carries a few ulps per term.
        expect(rel(regularizedGammaQ(n, x), sum)).toBeLessThan(1e-12);
        expect(Math.abs(regularizedGammaP(n, x) - (1 - sum))).toBeLessThan(1e-13);
      }
    }
  });

  it('agrees with jstat.lowRegGamma over a grid of a and x', () => {
    // 1e-9 absolute: jstat's own series/continued fraction stops near 1e-10 (measured max
    // difference 5e-11 on this grid), ours is closer to 1e-15.
    for (const a of [0.05, 0.1, 0.5, 1, 2, 5, 10, 20, 50, 100])
      for (const x of [0.001, 0.01, 0.1, 0.5, 1, 2, 5, 10, 20, 50, 100, 200])
        expect(Math.abs(regularizedGammaP(a, x) - jStat.lowRegGamma(a, x))).toBeLessThan(1e-9);
  });

  it('stays accurate for large shapes (reference: mpmath 1.3.0 at 30 digits; SciPy 1.17.1 gammainc)', () => {
    // mpmath.gammainc(1e4, 0, 1e4, regularized=True) = 0.50132980833995520038
    expect(rel(regularizedGammaP(1e4, 1e4), 0.5013298083399552)).toBeLessThan(1e-12);
    // mpmath.gammainc(1e6, 0, 1e6 + 1000, regularized=True) = 0.84134478636834029163
    expect(rel(regularizedGammaP(1e6, 1e6 + 1000), 0.8413447863683403)).toBeLessThan(1e-12);
    // scipy.special.gammainc(1e9, 1e9 + 3e4) = 0.8286094125981586 (1e-11: both lose a few digits here)
    expect(rel(regularizedGammaP(1e9, 1e9 + 3e4), 0.8286094125981586)).toBeLessThan(1e-11);
    // scipy.special.gammainc(1e9, 1e9 - 3e4) = 0.17139112367528195
    expect(rel(regularizedGammaP(1e9, 1e9 - 3e4), 0.17139112367528195)).toBeLessThan(1e-11);
  });

  it('keeps P + Q = 1, P rising with x, and the limits P(a, 0) = 0, Q(a, 0) = 1 (invariants)', () => {
    for (const a of [0.05, 0.7, 3, 30, 3000]) {
      expect(regularizedGammaP(a, 0)).toBe(0);
      expect(regularizedGammaQ(a, 0)).toBe(1);
      let prev = 0;
      for (const f of [0.01, 0.1, 0.5, 0.9, 1, 1.1, 2, 5, 20]) {
        const x = a * f;
        const p = regularizedGammaP(a, x);
        expect(p).toBeGreaterThanOrEqual(prev);
        expect(Math.abs(p + regularizedGammaQ(a, x) - 1)).toBeLessThan(1e-14);
        prev = p;
      }
    }
  });

  it('rejects bad a and x with ModelInputError naming the function, parameter and range', () => {
    for (const fn of [regularizedGammaP, regularizedGammaQ]) {
      for (const a of [0, 5e-324, -2, 2e9, Number.NaN, Number.POSITIVE_INFINITY])
        expect(() => fn(a, 1)).toThrow(new RegExp(`${fn.name}: a = .*allowed ≥ 1e-300 and ≤ 1000000000`));
      for (const x of [-1e-9, Number.NaN, Number.POSITIVE_INFINITY])
        expect(() => fn(1, x)).toThrow(new RegExp(`${fn.name}: x = .*allowed ≥ 0`));
    }
  });
});

describe('logGammaPrefactor', () => {
  it('equals a ln x − x − ln Γ(a) computed directly, on both sides of the Stirling switch at a = 10', () => {
    // Direct form loses ~|a ln x|·1e-16 absolutely; 1e-11 absolute covers a ≤ 1000 here.
    for (const a of [0.3, 2, 9.99, 10, 37.5, 1000])
      for (const f of [0.01, 0.4, 0.9, 1, 1.2, 1.6, 5]) {
        const x = a * f;
        expect(Math.abs(logGammaPrefactor(a, x) - (a * Math.log(x) - x - logGamma(a)))).toBeLessThan(1e-11);
      }
    expect(logGammaPrefactor(1, 2)).toBeCloseTo(Math.log(2) - 2, 15);
  });

  it('rejects bad a and x with ModelInputError', () => {
    expect(() => logGammaPrefactor(0, 1)).toThrow(/logGammaPrefactor: a = 0/);
    expect(() => logGammaPrefactor(1, 0)).toThrow(/logGammaPrefactor: x = 0 is out of range; allowed > 0/);
    expect(() => logGammaPrefactor(1, Number.NaN)).toThrow(ModelInputError);
  });
});
