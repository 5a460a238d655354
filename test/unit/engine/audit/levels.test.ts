/**
 * Level derivation (src/engine/audit/levels.ts). Expected values by hand computation or through the
 * model functions already checked against jstat (test/unit/model/audit-levels.test.ts); refusals of
 * a too-short baseline by the stated minimums.
 */
import { describe, expect, it } from 'vitest';
import { AuditInputError } from '../../../../src/engine/audit/errors.ts';
import { type BaselinePoint, deriveLevels } from '../../../../src/engine/audit/levels.ts';
import { createRng } from '../../../../src/model/index.ts';

const W = 'baseline test window';

function points(n: number, count: (i: number) => number, volumeM3 = 1.7): BaselinePoint[] {
  return Array.from({ length: n }, (_, i) => ({ count: count(i), volumeM3 }));
}

describe('deriveLevels', () => {
  it('percentile: the 95th and 99th of 100 hourly means 1…100 per m³ (definition 7: 95.05 and 99.01)', () => {
    const pts = points(100, (i) => i + 1, 1);
    const r = deriveLevels({ method: 'percentile', points: pts, diameterM: 5e-7, classN: 5, windowWords: W });
    // h = 99·0.95 = 94.05 → 95 + 0.05·1 = 95.05; h = 99·0.99 = 98.01 → 99.01 (hand computation).
    expect(r.alertPerM3).toBeCloseTo(95.05, 10);
    expect(r.actionPerM3).toBeCloseTo(99.01, 10);
    expect(r.basis).toContain('95th and 99th percentiles');
  });
  it('percentile refuses a baseline too short for its action percentile (99th: 100 hours)', () => {
    const pts = points(99, () => 5);
    expect(() =>
      deriveLevels({ method: 'percentile', points: pts, diameterM: 5e-7, classN: 5, windowWords: W }),
    ).toThrow(
      'the baseline test window holds 99 hours with usable samples; percentile needs at least 100 for the 99th percentile — choose a longer window',
    );
  });
  it('every window method refuses fewer than 24 hours', () => {
    for (const method of ['log-mean-k-sigma', 'poisson-quantile', 'negbin-quantile'] as const)
      expect(() =>
        deriveLevels({ method, points: points(23, () => 5), diameterM: 5e-7, classN: 5, windowWords: W }),
      ).toThrow(AuditInputError);
  });
  it('poisson-quantile: pooled rate 10 per m³ in 2 m³ → μ = 20; quantiles through poissonQuantile, divided by 2 m³', () => {
    const pts = points(48, (i) => (i % 2 ? 18 : 22), 2);
    const r = deriveLevels({
      method: 'poisson-quantile',
      points: pts,
      diameterM: 5e-7,
      classN: 5,
      windowWords: W,
    });
    // Poisson(20): P(X ≤ 27) = 0.9475, P(X ≤ 28) = 0.9658 → 28; P(X ≤ 30) = 0.9865, P(X ≤ 31) = 0.9919 → 31
    // (jstat 1.9.6 poisson.cdf) → 14 and 15.5 per m³.
    expect(r.alertPerM3).toBe(14);
    expect(r.actionPerM3).toBe(15.5);
  });
  it('negbin-quantile on overdispersed counts is above the Poisson quantile; without overdispersion it is Poisson, said so', () => {
    const rng = createRng(5);
    const od = points(200, () => rng.negativeBinomial(20, 2), 1);
    const nb = deriveLevels({
      method: 'negbin-quantile',
      points: od,
      diameterM: 5e-7,
      classN: 5,
      windowWords: W,
    });
    const po = deriveLevels({
      method: 'poisson-quantile',
      points: od,
      diameterM: 5e-7,
      classN: 5,
      windowWords: W,
    });
    expect(nb.actionPerM3).toBeGreaterThan(po.actionPerM3 * 1.5);
    expect(nb.parameters.size).toBeGreaterThan(1);
    // Moment size r recovers the generating 2 within a factor 1.6 (200 points; the moment estimate's sd is ~25 %).
    expect(nb.parameters.size).toBeLessThan(3.2);
    const flat = points(30, () => 20, 1);
    const r = deriveLevels({
      method: 'negbin-quantile',
      points: flat,
      diameterM: 5e-7,
      classN: 5,
      windowWords: W,
    });
    expect(r.basis).toContain('no overdispersion seen');
  });
  it('class-fraction: 50 % and 100 % of ISO 5 at 0.5 µm (3516.76 per m³, ISO 14644-1:2015 eq. (1)); needs a class', () => {
    const r = deriveLevels({
      method: 'class-fraction',
      points: [],
      diameterM: 5e-7,
      classN: 5,
      windowWords: W,
    });
    expect(r.alertPerM3).toBeCloseTo(1758.38, 2);
    expect(r.actionPerM3).toBeCloseTo(3516.76, 2);
    expect(() =>
      deriveLevels({ method: 'class-fraction', points: [], diameterM: 5e-7, classN: null, windowWords: W }),
    ).toThrow('no target class');
  });
  it('log-mean-k-sigma equals the model function on the same counts and volumes', () => {
    const pts = points(30, (i) => i % 5, 1);
    const r = deriveLevels({
      method: 'log-mean-k-sigma',
      points: pts,
      diameterM: 5e-7,
      classN: 5,
      windowWords: W,
    });
    expect(r.alertPerM3).toBeLessThan(r.actionPerM3);
  });
  it('refuses alert ≥ action and unknown methods', () => {
    const pts = points(200, () => 5);
    expect(() =>
      deriveLevels({
        method: 'percentile',
        points: pts,
        parameters: { alert: 0.99, action: 0.95 },
        diameterM: 5e-7,
        classN: 5,
        windowWords: W,
      }),
    ).toThrow('0 < alert < action < 1');
    expect(() =>
      deriveLevels({ method: 'median' as never, points: pts, diameterM: 5e-7, classN: 5, windowWords: W }),
    ).toThrow('unknown level method');
  });
});
