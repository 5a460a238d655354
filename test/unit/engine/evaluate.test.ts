import { describe, expect, it } from 'vitest';
import { type DetectedFlat, evaluate, type VoidPhysics } from '../../../src/engine/evaluate.ts';
import { buildDieGrid, buildDieHits, buildEdgeClip } from '../../../src/engine/geometry.ts';
import type { Contribution } from '../../../src/engine/propagate.ts';
import { binOf } from '../../../src/engine/tables.ts';
import { createRng } from '../../../src/model/rng.ts';
import { SPECTRUM_BIN_COUNT } from '../../../src/model/spectrum.ts';
import { criticalAreaRectangle, negativeBinomialYield, poissonYield } from '../../../src/model/yield.ts';

const layout = {
  widthM: 10e-3,
  heightM: 10e-3,
  pitchXM: 10.1e-3,
  pitchYM: 10.1e-3,
  originXM: 0,
  originYM: 0,
  pad: null,
};
const grid = buildDieGrid(layout, 0.147);
const physics: VoidPhysics = {
  binRadii: () => new Float64Array(SPECTRUM_BIN_COUNT),
  reportableParticleM: () => 0.2e-6,
  criticalArea: (r) => criticalAreaRectangle(10e-3, 10e-3, r),
  dieEdgeClip: (radii) => buildEdgeClip(grid, radii, 0.15),
  poissonYield: (m) => poissonYield(m),
  negativeBinomialYield: (m, a) => negativeBinomialYield(m, a),
  bondedAreaM2: Math.PI * 0.147 ** 2,
  smallestReportableVoidM: 1e-3,
};

function contribution(over: Partial<Contribution>): Contribution {
  return {
    key: 'k',
    kind: 'tool',
    label: 'l',
    wafer: 'bottom',
    waferId: 'W',
    groupKey: 'g',
    groupLabel: 'g',
    toolId: null,
    chamber: null,
    locationId: null,
    scanId: null,
    stepSeq: null,
    lastCleanId: null,
    base: new Float64Array(SPECTRUM_BIN_COUNT),
    survivalBins: new Float64Array(SPECTRUM_BIN_COUNT).fill(1),
    areaBasisM2: physics.bondedAreaM2,
    variation: { type: 'incoming' },
    atBond: false,
    detected: null,
    ...over,
  };
}

describe('evaluate without attribution (the modelled re-clean)', () => {
  it('gives the same figures and Monte Carlo inputs as the full evaluation', () => {
    const rng = createRng(31);
    const n = 4000;
    const xM = Float64Array.from({ length: n }, () => (rng.uniform() - 0.5) * 0.2);
    const yM = Float64Array.from({ length: n }, () => (rng.uniform() - 0.5) * 0.2);
    const diameterM = Float64Array.from({ length: n }, () => 45e-9 * (1 - rng.uniform()) ** -0.5);
    const survival = Float64Array.from({ length: n }, () => rng.uniform());
    const rM = Float64Array.from(diameterM, (d) => 2e4 * d); // a stand-in void radius, m
    const { hitStart, hitDie } = buildDieHits(grid, xM, yM, rM);
    const detected: DetectedFlat = {
      xM,
      yM,
      rM,
      survival,
      source: new Uint16Array(n),
      sourceStart: Int32Array.of(0, -1),
      bin: Uint8Array.from(diameterM, (d) => binOf(d)),
      hitStart,
      hitDie,
    };
    const base = new Float64Array(SPECTRUM_BIN_COUNT);
    for (let k = 4; k < 30; k++) base[k] = 300 / (k + 1);
    const contributions = [
      contribution({
        kind: 'detected',
        detected: { xM, yM, diameterM, survival },
        variation: { type: 'detected' },
      }),
      contribution({ base }),
    ];
    // invented void radii per bin, m: 0.1 mm at bin 0, growing 20 % a bin
    const radii = Float64Array.from({ length: SPECTRUM_BIN_COUNT }, (_, k) => 1e-4 * 1.2 ** k);
    const full = evaluate(contributions, detected, physics, radii, 0.2e-6, grid, 2, true);
    const lean = evaluate(contributions, detected, physics, radii, 0.2e-6, grid, 2, false);
    // the same sums in another order: relative 1e-12
    const close = (a: number, b: number) => expect(Math.abs(a - b)).toBeLessThanOrEqual(1e-12 * Math.abs(b));
    close(lean.voids, full.voids);
    close(lean.exponent, full.exponent);
    close(lean.detectedVoids, full.detectedVoids);
    close(lean.dieKillsPoisson!, full.dieKillsPoisson!);
    close(lean.dieKillsNB!, full.dieKillsNB!);
    expect(Array.from(lean.detectedCountBins)).toEqual(Array.from(full.detectedCountBins));
    expect(Array.from(lean.detectedAreaPerParticleBins)).toEqual(
      Array.from(full.detectedAreaPerParticleBins),
    );
    expect(Array.from(lean.detSurvivePerDie!)).toEqual(Array.from(full.detSurvivePerDie!));
    expect(Array.from(lean.lambdaBins)).toEqual(Array.from(full.lambdaBins));
    // the full evaluation's per-source shares add up to its totals (what attribution needs)
    close(
      full.perContribution.reduce((s, f) => s + f.voids, 0),
      full.voids,
    );
    expect(full.detectedVoids).toBeGreaterThan(0);
    expect(full.dieKillsPoisson).toBeGreaterThan(0);
  });
});
