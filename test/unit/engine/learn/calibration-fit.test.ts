/**
 * The calibration's fits recover the parameters they were generated with (seeded repetitions: bias
 * within a stated tolerance, interval coverage near nominal). The void sizes are drawn from the
 * model library's void radius (src/model/void.ts, called directly here, not through the engine) at a
 * known energy, with a log-normal sizing error, and kept only above an inspection's smallest void —
 * the truncation the fit has to undo.
 */
import { describe, expect, it } from 'vitest';
import {
  fitUnexplained,
  fitVoidSize,
  MIN_MATCHES_FOR_FIT,
} from '../../../../src/engine/learn/calibration-fit.ts';
import type { SizeMatch } from '../../../../src/engine/learn/calibration-types.ts';
import { createRng, type Rng } from '../../../../src/model/rng.ts';
import { voidRadius } from '../../../../src/model/void.ts';
import { product } from '../../../helpers/engine-inputs.ts';

/** Typed γ 0.8 J/m² per surface on two 775 µm plates (E' 155.4 GPa). */
const PRODUCT = product({ surfacePrep: { name: 'hybrid', energyJm2: 0.8, convention: 'per-surface' } });
const D_MIN = 0.1e-3;

/** The true radius, straight from the model library (two 775 µm plates, W = 2γ). */
function trueRadius(d: number, gamma: number): number {
  return voidRadius({
    heightM: d,
    workOfAdhesionJm2: 2 * gamma,
    model: 'two-plate',
    top: { thicknessM: 775e-6, plateModulusPa: 155.4e9 },
    bottom: { thicknessM: 775e-6, plateModulusPa: 155.4e9 },
  }).radiusM;
}

/** n explained voids: sizes from `size(rng)`, observed × exp(σ Z), kept when ≥ D_MIN. */
function sample(rng: Rng, n: number, gamma: number, sigma: number, size: (r: Rng) => number): SizeMatch[] {
  const out: SizeMatch[] = [];
  while (out.length < n) {
    const d = size(rng);
    const r = trueRadius(d, gamma) * Math.exp(sigma * rng.normal());
    if (2 * r < D_MIN) continue;
    out.push({
      pairId: 'P',
      lotId: 'L',
      productId: PRODUCT.productId,
      observedRadiusM: r,
      particleDiameterM: d,
      truncationRadiusM: D_MIN / 2,
    });
  }
  return out;
}

/**
 * Scan-like sizes: a cumulative power law of slope 1.5 from 60 nm, below 0.4 µm (redrawn above): the
 * small-gap regime for every energy near the truth (the crossover is at h ≈ 0.49 µm for W = 1 J/m²,
 * models.md §2), and many voids near D_MIN.
 */
const scanSizes = (r: Rng) => {
  for (;;) {
    const d = 60e-9 * r.uniform() ** (-1 / 1.5);
    if (d < 0.4e-6) return d;
  }
};
/** Large particles, 1.5–6 µm, log-uniform (thick-plate regime). */
const largeSizes = (r: Rng) => 1.5e-6 * 4 ** r.uniform();

function recover(
  gamma: number,
  n: number,
  sigma: number,
  size: (r: Rng) => number,
  reps: number,
  seed: number,
) {
  let bias = 0;
  let covered = 0;
  let fits = 0;
  let thick = 0;
  for (let k = 0; k < reps; k++) {
    const f = fitVoidSize({
      productId: PRODUCT.productId,
      product: PRODUCT,
      smallGapFactor: 1,
      matches: sample(createRng(seed + k), n, gamma, sigma, size),
      data: [],
      fittedAtMs: 0,
    });
    if (!f.fitted) continue;
    fits++;
    thick += f.thickPlate / f.n;
    bias += Math.log(f.fitted.energyJm2 / gamma);
    if (f.fitted.energyLowJm2 <= gamma && gamma <= f.fitted.energyHighJm2) covered++;
  }
  return { fits, meanLogBias: bias / fits, coverage: covered / fits, thickShare: thick / fits };
}

describe('fitVoidSize', () => {
  it('recovers γ = 0.5 J/m² (typed 0.8) from small-gap voids near the reporting limit: bias and 95 % coverage', () => {
    // 300 repetitions of 20 voids, sizing error 15 % (log-normal). SE of ln γ̂ per fit ≈ 0.15/√20 =
    // 0.034, of the mean over 300 ≈ 0.002: |bias| < 0.01 is ≈ 5 SE. Coverage: binomial SE at 0.95 over
    // 300 is 1.3 %, so the band [0.91, 0.99] is ±3 SE.
    const r = recover(0.5, 20, 0.15, scanSizes, 300, 1000);
    expect(r.fits).toBe(300);
    expect(r.thickShare).toBe(0); // every void here is in the small-gap regime
    expect(Math.abs(r.meanLogBias)).toBeLessThan(0.01);
    expect(r.coverage).toBeGreaterThanOrEqual(0.91);
    expect(r.coverage).toBeLessThanOrEqual(0.99);
  });

  it('recovers γ = 2 J/m² from thick-plate voids (R ∝ W^(−1/4)): bias and 95 % coverage', () => {
    // ln R moves by ¼ ln W here, so SE of ln γ̂ ≈ 4 · 0.15/√15 = 0.15 per fit, 0.009 over 300:
    // |bias| < 0.04 is ≈ 4.5 SE. Coverage band as above.
    const r = recover(2, 15, 0.15, largeSizes, 300, 5000);
    expect(r.fits).toBe(300);
    expect(r.thickShare).toBe(1);
    expect(Math.abs(r.meanLogBias)).toBeLessThan(0.04);
    expect(r.coverage).toBeGreaterThanOrEqual(0.91);
    expect(r.coverage).toBeLessThanOrEqual(0.99);
  });

  it('states the radius multiplier: (W_typed/Ŵ) in the small-gap regime, (W_typed/Ŵ)^¼ in the thick-plate one', () => {
    // R_small ∝ 1/W and R_thick ∝ W^(−1/4) (models.md §2): the multiplier follows exactly.
    const small = fitVoidSize({
      productId: 'HB-1',
      product: PRODUCT,
      smallGapFactor: 1,
      matches: sample(createRng(7), 12, 0.5, 0.1, scanSizes),
      data: [],
      fittedAtMs: 0,
    }).fitted!;
    expect(small.radiusMultiplier).toBeCloseTo(0.8 / small.energyJm2, 10);
    const thick = fitVoidSize({
      productId: 'HB-1',
      product: PRODUCT,
      smallGapFactor: 1,
      matches: sample(createRng(8), 12, 2, 0.1, largeSizes),
      data: [],
      fittedAtMs: 0,
    }).fitted!;
    expect(thick.radiusMultiplier).toBeCloseTo((0.8 / thick.energyJm2) ** 0.25, 10);
  });

  it('reduces to least squares on ln R when no void is near the limit (closed form in one regime)', () => {
    // Small-gap only and nothing truncated: ln W = mean(ln R_pred(W0) − ln R_obs) + ln W0 exactly
    // (R ∝ 1/W), and the t interval has half-width t(0.975; n−1)·s/√n with s² = S/(n − 1).
    const m = sample(createRng(9), 10, 0.5, 0.1, scanSizes).map((x) => ({ ...x, truncationRadiusM: 1e-12 }));
    const f = fitVoidSize({
      productId: 'HB-1',
      product: PRODUCT,
      smallGapFactor: 1,
      matches: m,
      data: [],
      fittedAtMs: 0,
    });
    const W0 = 1.6;
    const res = m.map((x) => Math.log(trueRadius(x.particleDiameterM, 0.8)) - Math.log(x.observedRadiusM));
    const mean = res.reduce((a, b) => a + b, 0) / res.length;
    const lnW = Math.log(W0) + mean;
    expect(Math.log(2 * f.fitted!.energyJm2)).toBeCloseTo(lnW, 6);
    const s = Math.sqrt(res.reduce((a, b) => a + (b - mean) ** 2, 0) / (res.length - 1));
    const half = (2.262157162798205 * s) / Math.sqrt(res.length); // t(0.975; 9), SciPy 1.17.1
    // The fit takes the curvature by a second difference at a tenth of SE: relative error ≈ 10⁻²/(2n)
    // = 5·10⁻⁴ here, so 10⁻³ relative.
    expect(Math.abs(Math.log(f.fitted!.energyHighJm2 / f.fitted!.energyJm2) / half - 1)).toBeLessThan(1e-3);
    expect(Math.abs(Math.log(f.fitted!.energyJm2 / f.fitted!.energyLowJm2) / half - 1)).toBeLessThan(1e-3);
  });

  it('says so and proposes nothing below the fewest matches', () => {
    const f = fitVoidSize({
      productId: 'HB-1',
      product: PRODUCT,
      smallGapFactor: 1,
      matches: sample(createRng(3), MIN_MATCHES_FOR_FIT - 1, 0.5, 0.1, scanSizes),
      data: [],
      fittedAtMs: 0,
    });
    expect(f.fitted).toBeNull();
    expect(f.note).toMatch(/4 explained voids for HB-1: a void-size fit needs at least 5; nothing proposed/);
    expect(f.residuals).toHaveLength(4);
  });
});

describe('fitUnexplained', () => {
  /** Pairs with unscanned-source means μ_i and extra rate ρ: U_i ~ Poisson(μ_i + ρ). */
  function pairs(rng: Rng, n: number, rho: number) {
    return Array.from({ length: n }, (_, i) => {
      const mu = 0.5 + (i % 5) * 0.25;
      return {
        pairId: `P${i}`,
        unexplained: rng.poisson(mu + rho),
        diametersM: [0.3e-3],
        tailVoids: 0.01,
        unscannedVoids: mu,
      };
    });
  }

  it('recovers the rate no source explains (ρ = 1.5 per pair over 24 pairs): bias and coverage of its Garwood interval', () => {
    // Per fit SE(ρ̂) = √(Σ(μ+ρ))/n ≈ 0.32; over 2000 repetitions the mean's SE is 0.007: |bias| < 0.03.
    // Garwood is exact-conservative, so coverage ≥ 95 % less Monte Carlo error (SE 0.5 % over 2000):
    // band [0.94, 0.99].
    let bias = 0;
    let covered = 0;
    const reps = 2000;
    for (let k = 0; k < reps; k++) {
      const f = fitUnexplained({
        productId: 'HB-1',
        pairs: pairs(createRng(100 + k), 24, 1.5),
        smallestVoidM: 0.1e-3,
        data: [],
        fittedAtMs: 0,
      });
      const rate = f.fitted?.ratePerPair ?? 0;
      bias += rate - 1.5;
      if (f.fitted && f.fitted.rateLowPerPair <= 1.5 && 1.5 <= f.fitted.rateHighPerPair) covered++;
    }
    expect(Math.abs(bias / reps)).toBeLessThan(0.03);
    expect(covered / reps).toBeGreaterThanOrEqual(0.94);
    expect(covered / reps).toBeLessThanOrEqual(0.99);
  });

  it('compares with the tail: they disagree when the tail’s prediction lies outside the observed interval', () => {
    const base = { productId: 'HB-1', smallestVoidM: 0.1e-3, data: [], fittedAtMs: 0 };
    const ps = Array.from({ length: 10 }, (_, i) => ({
      pairId: `P${i}`,
      unexplained: 3,
      diametersM: [0.2e-3, 0.4e-3, 0.3e-3],
      tailVoids: 0.02,
      unscannedVoids: 2.9,
    }));
    const f = fitUnexplained({ ...base, pairs: ps });
    // 30 voids over 10 pairs: Garwood 95 % [20.24, 42.83] (½χ²(0.025; 60), ½χ²(0.975; 62)) → per pair [2.02, 4.28]
    expect(f.observedPerPair.low).toBeCloseTo(2.0241, 3);
    expect(f.observedPerPair.high).toBeCloseTo(4.2827, 3);
    expect(f.tailDisagrees).toBe(true);
    expect(f.unscannedDisagrees).toBe(false);
    expect(f.comparison).toMatch(
      /undetected tail predicts 0\.02 per pair — outside the observed interval: they disagree/,
    );
    // excess 0.1 per pair, interval clipped at 0; mean area and diameter of the unexplained voids
    expect(f.fitted!.ratePerPair).toBeCloseTo(0.1, 12);
    expect(f.fitted!.rateLowPerPair).toBe(0);
    expect(f.fitted!.meanDiameterM).toBeCloseTo(0.3e-3, 15);
    expect(f.fitted!.meanAreaM2).toBeCloseTo((Math.PI / 4) * ((0.04 + 0.16 + 0.09) / 3) * 1e-6, 18);
  });

  it('proposes nothing when the assessment’s own sources account for the voids, or with too few pairs', () => {
    const base = { productId: 'HB-1', smallestVoidM: 0.1e-3, data: [], fittedAtMs: 0 };
    const covered = fitUnexplained({
      ...base,
      pairs: Array.from({ length: 6 }, (_, i) => ({
        pairId: `P${i}`,
        unexplained: 1,
        diametersM: [2e-4],
        tailVoids: 0,
        unscannedVoids: 2,
      })),
    });
    expect(covered.fitted).toBeNull();
    expect(covered.note).toMatch(/own unscanned sources account for the 6 unexplained voids/);
    const few = fitUnexplained({
      ...base,
      pairs: [
        {
          pairId: 'P',
          unexplained: 4,
          diametersM: [2e-4, 2e-4, 2e-4, 2e-4],
          tailVoids: 0,
          unscannedVoids: 0,
        },
      ],
    });
    expect(few.fitted).toBeNull();
    expect(few.note).toMatch(/1 inspected pair of HB-1: an unexplained-void rate needs at least 5/);
  });
});
