import { describe, expect, it } from 'vitest';
import { tailBins } from '../../../src/engine/montecarlo.ts';
import { assessPair } from '../../../src/engine/pair.ts';
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

describe('tailBins', () => {
  it('places the same power law as the model library’s powerLawSpectrum (the per-draw copy must not drift)', () => {
    for (const [n, a, xm, floor] of [
      [12, 2.3, 45e-9, 20e-9],
      [3, 0.4, 65e-9, 20e-9],
      [1000, 7.5, 26e-9, 10e-9],
    ] as const) {
      const ours = tailBins(n, a, xm, floor, new Float64Array(SPECTRUM_BIN_COUNT));
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
