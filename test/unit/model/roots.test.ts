/**
 * brentRoot (src/model/roots.ts, Brent 1973 ch. 4) against roots known in closed form or published,
 * on smooth and discontinuous functions, and its refusals.
 */
import { describe, expect, it } from 'vitest';
import { ModelInputError } from '../../../src/model/errors.ts';
import { bisectRoot, brentRoot } from '../../../src/model/roots.ts';

describe('brentRoot', () => {
  it('finds √2 of x² − 2 on [0, 2] (hand computation: √2 = 1.4142135623730951)', () => {
    const r = brentRoot((x) => x * x - 2, 0, 2);
    // tolerance: the default 1e-12·max(1, |a|, |b|) = 2e-12 on x
    expect(Math.abs(r.root - Math.SQRT2)).toBeLessThan(2e-12);
    expect(r.xTolerance).toBe(2e-12);
  });

  it('finds the fixed point of cos (the Dottie number 0.7390851332151607, by iteration of cos)', () => {
    let x = 1;
    for (let i = 0; i < 200; i++) x = Math.cos(x); // hand computation: the iteration contracts (|sin| < 0.68)
    const r = brentRoot((t) => Math.cos(t) - t, 0, 1, { xTolerance: 1e-14 });
    expect(Math.abs(r.root - 0.7390851332151607)).toBeLessThan(1e-13);
    expect(Math.abs(r.root - x)).toBeLessThan(1e-13);
  });

  it("finds Wallis's root of x³ − 2x − 5 = 0 (2.0945514815423265) superlinearly", () => {
    const r = brentRoot((x) => x ** 3 - 2 * x - 5, 2, 3, { xTolerance: 1e-13 });
    expect(Math.abs(r.root - 2.0945514815423265)).toBeLessThan(1e-12);
    // bisection alone would need log2(1/1e-13) ≈ 44 steps; interpolation needs far fewer
    expect(r.evaluations).toBeLessThan(15);
  });

  it('finds the jump of a step function within its tolerance, keeping a sign change', () => {
    const jump = 3.217;
    const f = (x: number) => (x <= jump ? 1 : -1);
    const r = brentRoot(f, 0, 10, { xTolerance: 1e-6 });
    expect(Math.abs(r.root - jump)).toBeLessThan(1e-6);
    expect(Math.sign(r.fRoot)).not.toBe(Math.sign(r.fOther));
    expect(Math.abs(r.root - r.other)).toBeLessThanOrEqual(1e-6 + 1e-12);
  });

  it('returns an end where f is zero', () => {
    expect(brentRoot((x) => x - 1, 1, 5).root).toBe(1);
  });

  it('refuses ends of the same sign, a = b, a non-function and a non-finite f', () => {
    expect(() => brentRoot((x) => x * x + 1, -1, 1)).toThrow(ModelInputError);
    expect(() => brentRoot((x) => x * x + 1, -1, 1)).toThrow(/opposite sign/);
    expect(() => brentRoot((x) => x, 1, 1)).toThrow(ModelInputError);
    expect(() => brentRoot(3 as unknown as (x: number) => number, 0, 1)).toThrow(/a function/);
    expect(() => brentRoot((x) => (x > 0.5 ? Number.NaN : -1), 0, 1)).toThrow(/finite/);
    expect(() =>
      brentRoot((x) => (x <= 0.3 ? 1 : -1), 0, 1, { maxIterations: 5, xTolerance: 1e-15 }),
    ).toThrow(/iterations/);
  });
});

describe('bisectRoot', () => {
  it('halves to the tolerance: ⌈log2(2 / 1e-3)⌉ = 11 halvings for √2 on [0, 2] (hand computation)', () => {
    const r = bisectRoot((x) => x * x - 2, 0, 2, { xTolerance: 1e-3 });
    expect(r.evaluations).toBe(13);
    expect(Math.abs(r.root - Math.SQRT2)).toBeLessThanOrEqual(1e-3);
    expect(Math.sign(r.fRoot)).not.toBe(Math.sign(r.fOther));
  });

  it('finds the jump of a step function, the final bracket straddling it', () => {
    const jump = 7.3;
    const r = bisectRoot((x) => (x < jump ? -2 : 5), 0, 100, { xTolerance: 0.01 });
    expect(Math.min(r.root, r.other)).toBeLessThan(jump);
    expect(Math.max(r.root, r.other)).toBeGreaterThanOrEqual(jump);
    expect(Math.abs(r.root - r.other)).toBeLessThanOrEqual(0.01);
  });

  it('refuses as brentRoot does', () => {
    expect(() => bisectRoot((x) => x * x + 1, -1, 1)).toThrow(/opposite sign/);
    expect(() => bisectRoot((x) => x, 2, 2)).toThrow(ModelInputError);
    expect(() => bisectRoot((x) => (x < 0.3 ? -1 : 1), 0, 1, { xTolerance: 1e-9, maxIterations: 3 })).toThrow(
      /iterations/,
    );
  });
});
