import { describe, expect, it } from 'vitest';
import { ModelInputError } from '../../../../src/model/errors.ts';
import { logNormalSurvival, normalCdf, normalSurvival } from '../../../../src/model/stats/normal.ts';
import { jStat } from './jstat.ts';

describe('normalCdf and normalSurvival', () => {
  it('reproduce Abramowitz & Stegun Table 26.1 quantiles (1.644854 → 0.95, 1.959964 → 0.975, 2.575829 → 0.995)', () => {
    // A&S 26.1 prints these to 6 decimals of z; 1e-9 is far below what a 6-decimal z moves Φ.
    expect(normalCdf(1.6448536269514722)).toBeCloseTo(0.95, 12);
    expect(normalCdf(1.959963984540054)).toBeCloseTo(0.975, 12);
    expect(normalCdf(2.5758293035489004)).toBeCloseTo(0.995, 12);
    expect(normalSurvival(1.959963984540054)).toBeCloseTo(0.025, 13);
    expect(normalCdf(0)).toBe(0.5);
  });

  it('agree with jstat 1.9.6 normal.cdf over −8…8 (absolute 1e-12: jstat is good to about 1e-14 there)', () => {
    for (let z = -8; z <= 8; z += 0.173)
      expect(Math.abs(normalCdf(z) - jStat.normal.cdf(z, 0, 1))).toBeLessThan(1e-12);
  });

  it('keep relative precision in the upper tail: P(Z > 8) = 6.22096057427178e-16 (mpmath 1.3.0 erfc(8/√2)/2)', () => {
    // 1 − Φ(8) in doubles would be 6.66e-16 or 0; the incomplete-gamma form keeps ~14 digits.
    expect(Math.abs(normalSurvival(8) / 6.22096057427178e-16 - 1)).toBeLessThan(1e-12);
    expect(normalSurvival(40)).toBe(0);
    expect(normalSurvival(-40)).toBe(1);
  });

  it('are symmetric: Φ(z) + Φ(−z) = 1 (invariant, to rounding)', () => {
    for (const z of [0.1, 0.7, 1.3, 2.9, 5.5]) expect(normalCdf(z) + normalCdf(-z)).toBeCloseTo(1, 15);
  });

  it('refuse a non-finite z with the function, parameter and range named', () => {
    expect(() => normalCdf(Number.NaN)).toThrow(ModelInputError);
    expect(() => normalSurvival(Number.POSITIVE_INFINITY)).toThrow(/normalSurvival.*z/);
  });
});

describe('logNormalSurvival', () => {
  it('equals ln of normalSurvival where that is a positive double (relative 1e-13)', () => {
    for (const z of [-5, -1, 0, 1, 3, 10, 25, 37]) {
      const a = logNormalSurvival(z);
      const b = Math.log(normalSurvival(z));
      expect(Math.abs(a - b)).toBeLessThan(1e-13 * Math.max(1, Math.abs(b)));
    }
  });

  it('is continuous where it switches to the Mills-ratio series (z = 37.5, jump < 1e-12 relative)', () => {
    const below = logNormalSurvival(37.5 - 1e-9);
    const above = logNormalSurvival(37.5 + 1e-9);
    // d/dz ln Q ≈ −z: a step of 2e-9 in z moves it by ≈ 7.5e-8.
    expect(Math.abs(below - above)).toBeLessThan(1e-7);
  });

  it('stays finite and falls like −z²/2 far out (z = 100: −5000 − ln 100 − ½ ln 2π + ln(1 − 10⁻⁴ + …))', () => {
    // hand computation of the leading terms: −5000 − 4.605170186 − 0.918938533 − 1.0001e-4
    expect(logNormalSurvival(100)).toBeCloseTo(-5005.524208719, 6);
  });

  it('refuses a non-finite z, and a z so large that z² overflows (−∞ would leave the function)', () => {
    expect(() => logNormalSurvival(Number.NaN)).toThrow(/logNormalSurvival: z = NaN/);
    expect(() => logNormalSurvival(1e308)).toThrow(/logNormalSurvival: result = -Infinity/);
  });
});
