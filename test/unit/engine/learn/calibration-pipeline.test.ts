/**
 * Calibration end to end on synthetic bonded pairs generated with a known interface energy and a
 * known rate of voids no particle explains: scanned particles on both wafers, a clean that removes
 * some of them (each survives with the model library's clean survival), the top wafer flipped,
 * turned and shifted onto the bottom (positions mapped by hand here, independently of the engine's
 * geometry), each surviving particle's void from the model library's void radius at the TRUE energy
 * (not the typed one the product states), inspection errors in position and size, the inspection's
 * reporting limit, and unexplained voids added at random. The calibration (assessment → discs →
 * matching → fits) must recover both parameters: seeded repetitions, coverage and bias stated.
 */
import { describe, expect, it } from 'vitest';
import { calibrate } from '../../../../src/engine/learn/calibration.ts';
import type { CalibrationLotInput, InspectionInput } from '../../../../src/engine/learn/calibration-types.ts';
import type { PairInput } from '../../../../src/engine/types.ts';
import { cleanSurvival } from '../../../../src/model/clean.ts';
import { createRng, type Rng } from '../../../../src/model/rng.ts';
import { voidRadius } from '../../../../src/model/void.ts';
import { clean, H, line, pair, product, scan, step, T0, wafer } from '../../../helpers/engine-inputs.ts';

const TRUE_GAMMA = 0.5; // J/m² per surface; the product types 0.85
const TRUE_RATE = 1.2; // unexplained voids per pair
const D_MIN = 0.1e-3;
const SIGMA_POS = 0.05e-3;
const SIGMA_SIZE = 0.1;
const PAIRS = 6;
const PER_WAFER = 30;
// A gentle clean, so that many particles large enough to make reportable voids survive it.
const CLEAN = clean('PBC', { maxEfficiency: 0.9, halfSizeM: 60e-9, widthDecades: 0.3 });
const PLACE = { rotationRad: 0.3, offsetXM: 0.4e-3, offsetYM: -0.2e-3 };

function trueRadius(d: number): number {
  return voidRadius({
    heightM: d,
    workOfAdhesionJm2: 2 * TRUE_GAMMA,
    model: 'two-plate',
    top: { thicknessM: 775e-6, plateModulusPa: 155.4e9 },
    bottom: { thicknessM: 775e-6, plateModulusPa: 155.4e9 },
  }).radiusM;
}

function survives(rng: Rng, d: number): boolean {
  const s = cleanSurvival(d, {
    d50M: CLEAN.halfSizeM,
    maxEfficiency: CLEAN.maxEfficiency,
    steepness: 1 / (CLEAN.widthDecades * Math.LN10),
  });
  return rng.uniform() < s;
}

/** The top wafer's (x, y) in the bond frame, by hand: flip about y, turn by θ, shift. */
function topToBond(x: number, y: number): [number, number] {
  const fx = -x;
  const c = Math.cos(PLACE.rotationRad);
  const s = Math.sin(PLACE.rotationRad);
  return [c * fx - s * y + PLACE.offsetXM, s * fx + c * y + PLACE.offsetYM];
}

function particles(rng: Rng) {
  const x: number[] = [];
  const y: number[] = [];
  const d: number[] = [];
  for (let i = 0; i < PER_WAFER; i++) {
    const r = 0.14 * Math.sqrt(rng.uniform());
    const t = 2 * Math.PI * rng.uniform();
    x.push(r * Math.cos(t));
    y.push(r * Math.sin(t));
    d.push(Math.min(45e-9 * rng.uniform() ** (-1 / 1.5), 2e-6));
  }
  return { x, y, d };
}

function syntheticLot(seed: number): CalibrationLotInput {
  const rng = createRng(seed);
  const pairs: PairInput[] = [];
  const inspections: Record<string, InspectionInput[]> = {};
  for (let p = 0; p < PAIRS; p++) {
    const id = `P-${p}`;
    const tp = particles(rng);
    const bp = particles(rng);
    const route = [
      step(0, 'clean', T0 + H, T0 + 1.2 * H, { cleanId: 'PBC' }),
      step(1, 'bond', T0 + 2 * H, T0 + 2.1 * H),
    ];
    pairs.push(
      pair(
        id,
        wafer(`${id}-T`, scan(`S-${id}-T`, T0, tp.x, tp.y, tp.d), route),
        wafer(`${id}-B`, scan(`S-${id}-B`, T0, bp.x, bp.y, bp.d), route),
        {
          ...PLACE,
          bonderToolId: null,
          bondTimeMs: T0 + 2 * H,
        },
      ),
    );
    const vx: number[] = [];
    const vy: number[] = [];
    const vd: number[] = [];
    const report = (x: number, y: number, dTrue: number) => {
      const D = dTrue * Math.exp(SIGMA_SIZE * rng.normal());
      const ox = x + SIGMA_POS * rng.normal();
      const oy = y + SIGMA_POS * rng.normal();
      if (D < D_MIN || Math.hypot(ox, oy) > 0.15) return;
      vx.push(ox);
      vy.push(oy);
      vd.push(D);
    };
    for (let i = 0; i < PER_WAFER; i++) {
      if (survives(rng, tp.d[i]!)) {
        const [bx, by] = topToBond(tp.x[i]!, tp.y[i]!);
        report(bx, by, 2 * trueRadius(tp.d[i]!));
      }
      if (survives(rng, bp.d[i]!)) report(bp.x[i]!, bp.y[i]!, 2 * trueRadius(bp.d[i]!));
    }
    for (let k = rng.poisson(TRUE_RATE); k > 0; k--) {
      const r = 0.14 * Math.sqrt(rng.uniform());
      const t = 2 * Math.PI * rng.uniform();
      report(r * Math.cos(t), r * Math.sin(t), 0.3e-3 * Math.exp(0.3 * rng.normal()));
    }
    inspections[id] = [
      {
        inspectionId: `${id}-SAM`,
        pairId: id,
        method: 'acoustic',
        stage: 'after-anneal',
        toolId: 'SAM',
        smallestVoidM: D_MIN,
        positionSigmaM: SIGMA_POS,
        timeMs: T0 + 5 * H,
        voids: {
          count: vx.length,
          xM: Float64Array.from(vx),
          yM: Float64Array.from(vy),
          diameterM: Float64Array.from(vd),
          classes: vx.map(() => 'unknown'),
        },
      },
    ];
  }
  return {
    lot: { lotId: `L-${seed}`, productId: 'HB-1', pairs },
    line: line({ tools: {}, cleans: { PBC: CLEAN }, products: { 'HB-1': product() } }),
    asOfMs: T0 + 6 * H,
    inspections,
  };
}

describe('calibration on synthetic pairs with a known energy and unexplained rate', () => {
  it('recovers γ = 0.5 J/m² (typed 0.85) and 1.2 unexplained voids per pair', () => {
    // 12 seeded lots of 6 pairs. Each 95 % interval should hold the truth; P(≤ 9 of 12 | 0.95) = 2 %,
    // so ≥ 10 of 12 is required. Bias: SE of ln γ̂ per lot ≈ 0.1/√40 ≈ 0.016 (sizing error over
    // ~40 explained voids), over 12 lots ≈ 0.005, so |mean| < 0.03 leaves room for the few chance
    // matches; the rate's SE per lot ≈ √(1.2·6)/6 = 0.45, over 12 ≈ 0.13: |mean bias| < 0.4 (3 SE).
    const reps = 12;
    let gammaIn = 0;
    let rateIn = 0;
    let lnBias = 0;
    let rateBias = 0;
    let explained = 0;
    for (let k = 0; k < reps; k++) {
      const r = calibrate([syntheticLot(100 + k)], { draws: 40, nowMs: 0 });
      const p = r.products[0]!;
      const v = p.voidSize.fitted!;
      const u = p.unexplained.fitted!;
      explained += p.voidSize.n;
      if (v.energyLowJm2 <= TRUE_GAMMA && TRUE_GAMMA <= v.energyHighJm2) gammaIn++;
      if (u.rateLowPerPair <= TRUE_RATE && TRUE_RATE <= u.rateHighPerPair) rateIn++;
      lnBias += Math.log(v.energyJm2 / TRUE_GAMMA) / reps;
      rateBias += (u.ratePerPair - TRUE_RATE) / reps;
      // the multiplier says the voids are larger than the typed energy predicts
      expect(v.radiusMultiplier).toBeGreaterThan(1);
    }
    expect(explained / reps).toBeGreaterThan(20);
    expect(gammaIn).toBeGreaterThanOrEqual(10);
    expect(rateIn).toBeGreaterThanOrEqual(10);
    expect(Math.abs(lnBias)).toBeLessThan(0.03);
    expect(Math.abs(rateBias)).toBeLessThan(0.4);
  }, 60_000);
});
