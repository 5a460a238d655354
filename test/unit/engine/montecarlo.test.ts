import { describe, expect, it } from 'vitest';
import { ExponentSampler, entryClass, tailBinsOf, tailShape } from '../../../src/engine/montecarlo.ts';
import { assessPair } from '../../../src/engine/pair.ts';
import { createRng } from '../../../src/model/rng.ts';
import { powerLawSpectrum, SPECTRUM_BIN_COUNT } from '../../../src/model/spectrum.ts';
import {
  counterSeries,
  H,
  line,
  pair,
  someParticles,
  standardWafer,
  T0,
} from '../../helpers/engine-inputs.ts';

describe('tailBinsOf', () => {
  it('places the same power law as the model library’s powerLawSpectrum (the per-draw copy must not drift)', () => {
    for (const [n, a, xm, floor] of [
      [12, 2.3, 45e-9, 20e-9],
      [3, 0.4, 65e-9, 20e-9],
      [1000, 7.5, 26e-9, 10e-9],
    ] as const) {
      const ours = tailBinsOf(tailShape(xm, floor), n, a, new Float64Array(SPECTRUM_BIN_COUNT));
      const model = powerLawSpectrum({ countAbove: n, atDiameterM: xm, slope: a, fromM: floor, toM: xm });
      // tolerance: relative 1e-12 (the same formula, evaluated in the same order up to rounding)
      for (let k = 0; k < SPECTRUM_BIN_COUNT; k++)
        if (model[k]! > 0) expect(ours[k]! / model[k]!).toBeCloseTo(1, 12);
        else expect(ours[k]).toBe(0);
      // hand computation: the whole tail holds n·((floor/x_m)^−α − 1)
      expect(ours.reduce((s, v) => s + v, 0) / (n * ((floor / xm) ** -a - 1))).toBeCloseTo(1, 12);
    }
  });
});

describe('ExponentSampler', () => {
  // A compound Poisson sum X = Σ_k Σ_{i ≤ N_k} a_k with N_k ~ Poisson(μ_k) has mean Σ μ_k a_k and
  // variance Σ μ_k a_k² (e.g. Feller, An Introduction to Probability Theory, vol. 1, §XII.2). Every
  // entry here has a different area, so a wrong pick among entries (alias table or CDF) moves the
  // mean; the checks allow 4 standard errors of the sample mean and 10 % on the variance
  // (the sample variance's relative standard error is about √(κ/n) ≈ 1 % here).
  function moments(detMu: Float64Array, detArea: Float64Array, mu: Float64Array, area: Float64Array) {
    const ab = 1;
    let total = 0;
    let m = 0;
    let v = 0;
    for (const [u, a] of [
      [detMu, detArea],
      [mu, area],
    ] as const)
      for (let k = 0; k < u.length; k++) {
        total += u[k]! * a[k]!;
        m += u[k]! * a[k]!;
        v += u[k]! * a[k]! * a[k]!;
      }
    // the random entries split as simulate() splits them
    let bigMean = 0;
    let bigVar = 0;
    const exactMu: number[] = [];
    const exactArea: number[] = [];
    for (let k = 0; k < mu.length; k++) {
      const c = entryClass(mu[k]!, area[k]!, total);
      expect(c).not.toBe('mean'); // every entry here matters: the moments below are exact
      if (c === 'normal') {
        bigMean += mu[k]! * area[k]!;
        bigVar += mu[k]! * area[k]! * area[k]!;
      } else if (c === 'exact') {
        exactMu.push(mu[k]!);
        exactArea.push(area[k]!);
      }
    }
    const s = new ExponentSampler(detMu, detArea, total, ab, exactMu.length);
    const rng = createRng(21);
    const n = 40_000;
    let sum = 0;
    let sum2 = 0;
    const em = Float64Array.from(exactMu);
    const ea = Float64Array.from(exactArea);
    for (let i = 0; i < n; i++) {
      const x = s.draw(rng, bigMean, bigVar, em, ea, em.length);
      sum += x;
      sum2 += x * x;
    }
    const mean = sum / n;
    return { mean, variance: sum2 / n - mean * mean, m, v, n };
  }
  const bins = (f: (k: number) => number) =>
    Float64Array.from({ length: SPECTRUM_BIN_COUNT }, (_, k) => f(k));

  it('has the compound Poisson mean and variance with detected entries only (alias table)', () => {
    const r = moments(
      bins((k) => (k >= 20 && k < 30 ? 0.3 + 0.4 * (k - 20) : 0)),
      bins((k) => 1e-3 * (k + 1)),
      bins(() => 0),
      bins(() => 0),
    );
    expect(Math.abs(r.mean - r.m)).toBeLessThan(4 * Math.sqrt(r.v / r.n));
    expect(Math.abs(r.variance / r.v - 1)).toBeLessThan(0.1);
  });

  it('has the compound Poisson mean and variance with both kinds, some entries many-disc (normal part)', () => {
    const r = moments(
      bins((k) => (k < 10 ? 50 : k < 25 ? 2 : 0)),
      bins((k) => 2e-4 * (k + 1)),
      bins((k) => (k < 15 ? 30 : k < 40 ? 0.5 : 0)),
      bins((k) => 3e-4 * (k + 1)),
    );
    expect(Math.abs(r.mean - r.m)).toBeLessThan(4 * Math.sqrt(r.v / r.n));
    expect(Math.abs(r.variance / r.v - 1)).toBeLessThan(0.1);
  });
});

describe('Monte Carlo intervals', () => {
  it('are reproducible with the seed and move with another seed', () => {
    const data = line({
      counters: { BAY: counterSeries('BAY', T0, T0 + 8 * H, [0.1e-6, 0.5e-6], () => [1000, 35]) },
    });
    const p = pair(
      'P',
      standardWafer('T', someParticles(200, 1)),
      standardWafer('B', someParticles(200, 2)),
      {
        bondTimeMs: T0 + 6 * H,
      },
    );
    const a = assessPair(p, data, { asOfMs: T0 + 7 * H });
    const b = assessPair(p, data, { asOfMs: T0 + 7 * H });
    const c = assessPair(p, data, { asOfMs: T0 + 7 * H, config: { seed: 7 } });
    expect(b.figures).toEqual(a.figures);
    expect(c.figures.voids.value).toBe(a.figures.voids.value); // analytic values do not depend on the seed
    expect(JSON.stringify(c.figures)).not.toBe(JSON.stringify(a.figures));
    expect(c.seed).toBe(7);
  });
});
