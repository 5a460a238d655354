/**
 * countDispersion: variance-to-mean ratio, Poisson dispersion test, negative-binomial k by moments.
 * Sources: hand computation; the test statistic's χ²(N − 1) law under Poisson counts (Cochran 1954)
 * and the negative-binomial variance m + m²/k (Anscombe 1950) checked by simulation with the model
 * library's seeded generator.
 */
import { describe, expect, it } from 'vitest';
import { createRng } from '../../../../src/model/rng.ts';
import { chiSquareSurvival } from '../../../../src/model/stats/chi-square.ts';
import { countDispersion } from '../../../../src/model/stats/dispersion.ts';

describe('countDispersion', () => {
  it('hand computation: [2, 4, 6, 8] → mean 5, variance 20/3, index 4/3, k = 25/(20/3 − 5) = 15', () => {
    const d = countDispersion([2, 4, 6, 8]);
    expect(d.mean).toBe(5);
    expect(d.variance).toBeCloseTo(20 / 3, 14);
    expect(d.index).toBeCloseTo(4 / 3, 14);
    expect(d.negativeBinomialK).toBeCloseTo(15, 12);
    expect(d.pValue).toBeCloseTo(chiSquareSurvival(4, 3), 14);
  });

  it('no overdispersion seen → k null; all zeros → index null', () => {
    expect(countDispersion([5, 5, 5]).negativeBinomialK).toBeNull();
    expect(countDispersion([5, 5, 5]).index).toBe(0);
    expect(countDispersion([0, 0]).index).toBeNull();
  });

  it('Poisson counts: the test rejects at 5 % about 5 % of the time (400 seeded sets of 20 counts)', () => {
    // Binomial SD of the rejection rate at 0.05 over 400 sets: 0.011; band ±3 SD plus 0.01 for the
    // χ² approximation of a discrete statistic at mean 8.
    const rng = createRng(2026);
    let rejected = 0;
    for (let r = 0; r < 400; r++) {
      const c = Array.from({ length: 20 }, () => rng.poisson(8));
      if (countDispersion(c).pValue! < 0.05) rejected++;
    }
    expect(Math.abs(rejected / 400 - 0.05)).toBeLessThan(3 * 0.011 + 0.01);
  });

  it('negative-binomial counts: k by moments recovers k = 2 from 4000 counts of mean 10 (within 15 %)', () => {
    // SE of the moment k at m = 10, k = 2, N = 4000 is ≈ 5 % (delta method, hand estimate); 15 % = 3 SE.
    const rng = createRng(7);
    const c = Array.from({ length: 4000 }, () => rng.negativeBinomial(10, 2));
    const d = countDispersion(c);
    expect(Math.abs(d.negativeBinomialK! / 2 - 1)).toBeLessThan(0.15);
    expect(d.pValue!).toBeLessThan(1e-6);
  });

  it('refuses fewer than 2 counts and a negative count', () => {
    expect(() => countDispersion([3])).toThrow(/countDispersion: counts = \[3\]/);
    expect(() => countDispersion([3, -1])).toThrow(/counts\[1\] = -1/);
  });
});
