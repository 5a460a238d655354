/**
 * Control charts for counts (src/model/control-charts.ts). Sources beside each expected value:
 * the NIST/SEMATECH e-Handbook §6.3.3.1 (c and u charts), Laney 2002 (u′), §6.3.2 (run rules),
 * hand computation where no published worked example is recalled (said so).
 */
import { describe, expect, it } from 'vitest';
import { ModelInputError } from '../../../src/model/errors.ts';
import {
  cChartLimits,
  chartRuleFlags,
  createRng,
  laneyUPrime,
  uChartLimits,
} from '../../../src/model/index.ts';

describe('c chart (NIST/SEMATECH e-Handbook §6.3.3.1)', () => {
  it('the handbook’s worked example: c̄ = 16 defects per wafer gives LCL 4 and UCL 28 [M, as recalled]', () => {
    // 16 ± 3·4: exact in floating point.
    expect(cChartLimits(16)).toEqual({ centre: 16, lcl: 4, ucl: 28 });
  });
  it('clips a negative lower limit at 0 (hand computation: 2 − 3√2 < 0)', () => {
    const l = cChartLimits(2);
    expect(l.lcl).toBe(0);
    // 2 + 3√2 = 6.242640687…; tolerance 1e-12 (one rounding of sqrt and one add).
    expect(l.ucl).toBeCloseTo(6.242640687119285, 12);
  });
  it('refuses a negative mean', () => {
    expect(() => cChartLimits(-1)).toThrow(ModelInputError);
  });
});

describe('u chart (NIST/SEMATECH §6.3.3.1: ū ± 3√(ū/nᵢ))', () => {
  it('hand computation: ū = 2 per m³, nᵢ = 8 m³ → 2 ± 3·0.5 = [0.5, 3.5]', () => {
    expect(uChartLimits(2, 8)).toEqual({ centre: 2, lcl: 0.5, ucl: 3.5 });
  });
  it('limits narrow as the volume grows (√(1/n) scaling)', () => {
    const a = uChartLimits(10, 1);
    const b = uChartLimits(10, 4);
    // Half-width 3√10 at n = 1, 3√10/2 at n = 4.
    expect((a.ucl - a.centre) / (b.ucl - b.centre)).toBeCloseTo(2, 12);
  });
  it('refuses a zero exposure', () => {
    expect(() => uChartLimits(1, 0)).toThrow(ModelInputError);
  });
});

describe('Laney u′ (Quality Engineering 14(4) 2002)', () => {
  it('hand computation on four subgroups (no published worked example recalled, so computed by hand)', () => {
    // counts 1, 3, 2, 10 on equal exposures 1: ū = 16/4 = 4, σ_u = √4 = 2,
    // z = (1−4)/2, (3−4)/2, (2−4)/2, (10−4)/2 = −1.5, −0.5, −1, 3;
    // moving ranges 1, 0.5, 4 → mean 5.5/3 = 1.8333…; σ_z = 1.8333…/1.128 = 1.625296…;
    // UCL = 4 + 3·2·σ_z = 13.75177…; LCL = max(0, 4 − 9.75177…) = 0; X² = 2.25 + 0.25 + 1 + 9 = 12.5.
    const r = laneyUPrime([1, 3, 2, 10], [1, 1, 1, 1]);
    expect(r.centre).toBe(4);
    expect(r.z).toEqual([-1.5, -0.5, -1, 3]);
    // Tolerance 1e-12: a handful of floating-point operations on numbers of order 1–10.
    expect(r.sigmaZ).toBeCloseTo(5.5 / 3 / 1.128, 12);
    expect(r.ucl[0]).toBeCloseTo(4 + 6 * (5.5 / 3 / 1.128), 12);
    expect(r.lcl[0]).toBe(0);
    expect(r.pearsonX2).toBe(12.5);
    expect(r.degreesOfFreedom).toBe(3);
  });
  it('unequal exposures: hand computation', () => {
    // counts 2, 9 on exposures 1, 4: ū = 11/5 = 2.2; σ₁ = √2.2, σ₂ = √0.55;
    // z₁ = (2 − 2.2)/√2.2, z₂ = (2.25 − 2.2)/√0.55; σ_z = |z₂ − z₁| / 1.128.
    const r = laneyUPrime([2, 9], [1, 4]);
    const z1 = -0.2 / Math.sqrt(2.2);
    const z2 = 0.05 / Math.sqrt(0.55);
    expect(r.centre).toBeCloseTo(2.2, 14);
    expect(r.sigmaZ).toBeCloseTo(Math.abs(z2 - z1) / 1.128, 12);
    expect(r.ucl[1]).toBeCloseTo(2.2 + 3 * Math.sqrt(0.55) * r.sigmaZ, 12);
  });
  it('reduces to the u chart when σ_z = 1 (the definition): limits = ū ± 3√(ū/nᵢ)·σ_z exactly', () => {
    const r = laneyUPrime([3, 7, 4, 9, 1, 6], [1, 2, 1, 2, 1, 2]);
    r.ucl.forEach((ucl, i) => {
      const u = uChartLimits(r.centre, [1, 2, 1, 2, 1, 2][i]!);
      expect(ucl - r.centre).toBeCloseTo((u.ucl - u.centre) * r.sigmaZ, 12);
    });
  });
  it('σ_z is about 1 for Poisson counts and grows with overdispersion (simulation, seeded)', () => {
    const rng = createRng(7);
    const n: number[] = Array(400).fill(2);
    const pois = n.map(() => rng.poisson(20));
    // For independent normal z, E|zᵢ − zᵢ₋₁| = 2/√π = 1.128 = d₂, so E[σ_z] = 1; at mean 20 the Poisson is
    // close to normal. Tolerance 0.1: the sd of σ_z over 400 points is about 0.04 (2.5 sd).
    expect(Math.abs(laneyUPrime(pois, n).sigmaZ - 1)).toBeLessThan(0.1);
    // Gamma-mixed (negative-binomial) counts with independent rates: σ_z clearly above 1.
    const mixed = n.map(() => rng.poisson(20 * (rng.uniform() < 0.5 ? 0.3 : 1.7)));
    expect(laneyUPrime(mixed, n).sigmaZ).toBeGreaterThan(1.5);
  });
  it('refuses one subgroup and unequal lengths', () => {
    expect(() => laneyUPrime([1], [1])).toThrow(ModelInputError);
    expect(() => laneyUPrime([1, 2], [1])).toThrow(ModelInputError);
  });
});

describe('run rules (Western Electric rules, NIST/SEMATECH §6.3.2)', () => {
  it('beyond 3 sigma', () => {
    expect(chartRuleFlags([0, 3.5, -3.01, 2.9])).toEqual([
      [],
      ['beyond-limit'],
      ['beyond-limit'],
      ['2-of-3-beyond-2-sigma'],
    ]);
    // Exactly 3 is on the limit, not beyond it.
    expect(chartRuleFlags([0, 0, 3])).toEqual([[], [], []]);
  });
  it('2 of 3 beyond 2 sigma on one side (flags the point completing it)', () => {
    expect(chartRuleFlags([2.5, 0, 2.1])[2]).toEqual(['2-of-3-beyond-2-sigma']);
    expect(chartRuleFlags([2.5, 0, -2.1])[2]).toEqual([]);
  });
  it('8 in a row on one side: the 8th and later points; the centre breaks a run', () => {
    const f = chartRuleFlags([0.1, 0.2, 0.1, 0.3, 0.1, 0.2, 0.1, 0.4, 0.5, 0, 0.1]);
    expect(f[6]).toEqual([]);
    expect(f[7]).toEqual(['run-of-8-above']);
    expect(f[8]).toEqual(['run-of-8-above']);
    expect(f[10]).toEqual([]);
    expect(chartRuleFlags(Array(8).fill(-1))[7]).toEqual(['run-of-8-below']);
  });
});
