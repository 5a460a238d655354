/**
 * fitRemovalParticles / removalCurveBand: the removal curve fitted on individual particles.
 *
 * Sources of expected values: the two-size closed form of logistic regression (with two distinct
 * sizes the model is saturated: σ(a + b xⱼ) equals the observed removed fraction fⱼ, and the
 * observed information Σ nⱼ fⱼ(1 − fⱼ)[1 xⱼ; xⱼ xⱼ²] inverts by hand — methods.md §3 [D]); the
 * log-likelihood written out directly in this file, its numerical derivatives (an independent
 * reference for the maximum and the information); and recovery of known parameters from particles
 * simulated with the model library's seeded generator (bias and interval coverage over 200
 * repetitions).
 */
import { describe, expect, it } from 'vitest';
import { ModelInputError } from '../../../src/model/errors.ts';
import { fitRemovalParticles, removalCurveBand } from '../../../src/model/removal-fit.ts';
import { createRng, type Rng } from '../../../src/model/rng.ts';

const nm = 1e-9;
const logit = (p: number) => Math.log(p / (1 - p));

/** The log-likelihood written out: Σ y ln(E σ) + (1 − y) ln(1 − E σ), σ = 1/(1 + (d50/d)^k). */
function directLogLik(d: number[], y: number[], e: number, d50: number, k: number): number {
  let l = 0;
  d.forEach((di, i) => {
    const p = e / (1 + (d50 / di) ** k);
    l += y[i] ? Math.log(p) : Math.log(1 - p);
  });
  return l;
}

/** n particles: sizes log-uniform in [lo, hi], removed with probability E/(1 + (d50/d)^k). */
function simulate(rng: Rng, n: number, lo: number, hi: number, t: { e: number; d50: number; k: number }) {
  const d: number[] = [];
  const y: number[] = [];
  for (let i = 0; i < n; i++) {
    const di = lo * (hi / lo) ** rng.uniform();
    d.push(di);
    y.push(rng.uniform() < t.e / (1 + (t.d50 / di) ** t.k) ? 1 : 0);
  }
  return { d, y };
}

describe('fitRemovalParticles — closed forms', () => {
  it('two sizes, E_max fixed at 1: the exact solution and its information (hand computation)', () => {
    // 40 particles at 30 nm (10 removed, f₁ = 0.25), 60 at 90 nm (48 removed, f₂ = 0.8).
    const d = [...Array(40).fill(30 * nm), ...Array(60).fill(90 * nm)];
    const y = [...Array(10).fill(1), ...Array(30).fill(0), ...Array(48).fill(1), ...Array(12).fill(0)];
    const f = fitRemovalParticles(d, y, { maxEfficiency: 1 });
    const dx = Math.log(3);
    const k = (logit(0.8) - logit(0.25)) / dx;
    expect(f.steepness).toBeCloseTo(k, 9);
    expect(Math.log(f.d50M)).toBeCloseTo(Math.log(30 * nm) - logit(0.25) / k, 9);
    expect(f.widthDecades).toBeCloseTo(1 / (k * Math.LN10), 9);
    expect(f.maxEfficiencyFitted).toBe(false);
    expect(f.maxEfficiencyNote).toMatch(/fixed at 1 as asked/);
    // Var(k) = [1/(n₁f₁(1 − f₁)) + 1/(n₂f₂(1 − f₂))] / Δx²
    const varK = (1 / (40 * 0.25 * 0.75) + 1 / (60 * 0.8 * 0.2)) / (dx * dx);
    expect(f.seSteepness).toBeCloseTo(Math.sqrt(varK), 8);
    // The fitted curve passes through both observed fractions.
    const band = removalCurveBand(f, [30 * nm, 90 * nm]);
    expect(band[0]!.efficiency).toBeCloseTo(0.25, 9);
    expect(band[1]!.efficiency).toBeCloseTo(0.8, 9);
    // logit-scale band at a data size: SE of logit f₁ = 1/√(n₁ f₁(1 − f₁)) (saturated model).
    const z = 1.959963984540054;
    expect(logit(band[0]!.upper)).toBeCloseTo(logit(0.25) + z / Math.sqrt(40 * 0.25 * 0.75), 6);
  });

  it('the doc example: 1/4 removed at 30 nm, 3/4 at 90 nm → k = 2, d50 = √(30·90) nm', () => {
    const f = fitRemovalParticles(
      [30, 30, 30, 30, 90, 90, 90, 90].map((v) => v * nm),
      [1, 0, 0, 0, 1, 1, 1, 0],
      {
        maxEfficiency: 1,
      },
    );
    expect(f.steepness).toBeCloseTo(2, 10);
    expect(f.d50M / nm).toBeCloseTo(Math.sqrt(2700), 8);
  });
});

describe('fitRemovalParticles — against the directly written likelihood', () => {
  const rng = createRng(404);
  const { d, y } = simulate(rng, 3000, 30 * nm, 1000 * nm, { e: 0.96, d50: 60 * nm, k: 2.5 });
  const f = fitRemovalParticles(d, y, { maxEfficiency: 'fit' });

  it('is a maximum: moving any parameter by a small step lowers the likelihood', () => {
    expect(f.maxEfficiencyFitted).toBe(true);
    // 'auto' fits E_max here too: sizes reach 1 µm, far onto the plateau (d95 ≈ 195 nm).
    expect(fitRemovalParticles(d, y).maxEfficiencyFitted).toBe(true);
    const l0 = directLogLik(d, y, f.maxEfficiency, f.d50M, f.steepness);
    expect(l0).toBeCloseTo(f.logLikelihood, 6);
    for (const [de, dd, dk] of [
      [1e-4, 0, 0],
      [-1e-4, 0, 0],
      [0, 1.001, 1],
      [0, 0.999, 1],
      [0, 1, 1.001],
      [0, 1, 0.999],
    ] as const)
      expect(directLogLik(d, y, f.maxEfficiency + de, f.d50M * dd, f.steepness * dk)).toBeLessThan(l0);
  });

  it('its standard errors equal those of a numerical Hessian of the direct likelihood (within 1 %)', () => {
    // Parameters (ln d50, k, E); central differences with steps 1e-4 (relative error ~1e-6 here).
    const p0 = [Math.log(f.d50M), f.steepness, f.maxEfficiency];
    const h = [1e-4, 1e-4, 1e-5];
    const L = (p: number[]) => directLogLik(d, y, p[2]!, Math.exp(p[0]!), p[1]!);
    const H = [0, 1, 2].map((i) =>
      [0, 1, 2].map((j) => {
        const at = (si: number, sj: number) => {
          const p = [...p0];
          p[i]! += si * h[i]!;
          p[j]! += sj * h[j]!;
          return L(p);
        };
        return -(at(1, 1) - at(1, -1) - at(-1, 1) + at(-1, -1)) / (4 * h[i]! * h[j]!);
      }),
    );
    // Invert the 3 × 3 information by cofactors (independent of the library's inverse).
    const [a, b, c] = H as [number[], number[], number[]];
    const det =
      a[0]! * (b[1]! * c[2]! - b[2]! * c[1]!) -
      a[1]! * (b[0]! * c[2]! - b[2]! * c[0]!) +
      a[2]! * (b[0]! * c[1]! - b[1]! * c[0]!);
    const v00 = (b[1]! * c[2]! - b[2]! * c[1]!) / det;
    const v11 = (a[0]! * c[2]! - a[2]! * c[0]!) / det;
    const v22 = (a[0]! * b[1]! - a[1]! * b[0]!) / det;
    expect(f.seLnD50 / Math.sqrt(v00)).toBeCloseTo(1, 2);
    expect(f.seSteepness / Math.sqrt(v11)).toBeCloseTo(1, 2);
    expect(f.seMaxEfficiency! / Math.sqrt(v22)).toBeCloseTo(1, 2);
  });
});

/** Coverage band for 200 repetitions at a nominal 0.95: ± 3 binomial SD (√(0.95·0.05/200) = 0.0154). */
const COVERAGE_BAND: [number, number] = [0.95 - 3 * 0.0154, 0.95 + 3 * 0.0154];

describe('fitRemovalParticles — recovery of known parameters (200 seeded repetitions)', () => {
  it('E_max, d50 and w from 2000 particles spanning the curve: small bias, nominal coverage', () => {
    const truth = { e: 0.97, d50: 60 * nm, k: 2.5 };
    const w = 1 / (truth.k * Math.LN10);
    const rng = createRng(9001);
    const reps = 200;
    const lnD50: number[] = [];
    const es: number[] = [];
    let covD50 = 0;
    let covW = 0;
    let covE = 0;
    for (let r = 0; r < reps; r++) {
      const { d, y } = simulate(rng, 2000, 30 * nm, 1000 * nm, truth);
      const f = fitRemovalParticles(d, y, { maxEfficiency: 'fit' });
      expect(f.maxEfficiencyFitted).toBe(true);
      lnD50.push(Math.log(f.d50M / truth.d50));
      es.push(f.maxEfficiency);
      if (f.d50LowM <= truth.d50 && truth.d50 <= f.d50HighM) covD50++;
      if (f.widthLowDecades <= w && w <= f.widthHighDecades) covW++;
      if (f.maxEfficiencyLow! <= truth.e && truth.e <= f.maxEfficiencyHigh!) covE++;
    }
    const mean = (v: number[]) => v.reduce((s, x) => s + x, 0) / v.length;
    const sd = (v: number[]) => Math.sqrt(v.reduce((s, x) => s + (x - mean(v)) ** 2, 0) / (v.length - 1));
    // Bias: the mean over 200 fits within 3 SE of the truth, plus 1 % for the O(1/n) bias of a MLE.
    expect(Math.abs(mean(lnD50))).toBeLessThan((3 * sd(lnD50)) / Math.sqrt(reps) + 0.01);
    expect(Math.abs(mean(es) - truth.e)).toBeLessThan((3 * sd(es)) / Math.sqrt(reps) + 0.002);
    for (const c of [covD50, covW, covE]) {
      expect(c / reps).toBeGreaterThanOrEqual(COVERAGE_BAND[0]);
      expect(c / reps).toBeLessThanOrEqual(COVERAGE_BAND[1]);
    }
  });

  it("sizes that never reach the plateau: 'auto' fixes E_max at 1, says so, and d50 is still covered", () => {
    const truth = { e: 1, d50: 50 * nm, k: 3 };
    const rng = createRng(9002);
    const reps = 200;
    let cov = 0;
    for (let r = 0; r < reps; r++) {
      const { d, y } = simulate(rng, 600, 20 * nm, 80 * nm, truth);
      const f = fitRemovalParticles(d, y);
      expect(f.maxEfficiencyFitted).toBe(false);
      expect(f.maxEfficiency).toBe(1);
      expect(f.maxEfficiencyNote).toMatch(/E_max fixed at 1/);
      if (f.d50LowM <= truth.d50 && truth.d50 <= f.d50HighM) cov++;
    }
    expect(cov / reps).toBeGreaterThanOrEqual(COVERAGE_BAND[0]);
    expect(cov / reps).toBeLessThanOrEqual(COVERAGE_BAND[1]);
  });

  it('the curve band covers the true PRE at 50, 100 and 300 nm at about the nominal rate', () => {
    const truth = { e: 0.97, d50: 60 * nm, k: 2.5 };
    const rng = createRng(9003);
    const sizes = [50 * nm, 100 * nm, 300 * nm];
    const hits = [0, 0, 0];
    const reps = 200;
    for (let r = 0; r < reps; r++) {
      const { d, y } = simulate(rng, 2000, 30 * nm, 1000 * nm, truth);
      const band = removalCurveBand(fitRemovalParticles(d, y, { maxEfficiency: 'fit' }), sizes);
      band.forEach((b, i) => {
        const t = truth.e / (1 + (truth.d50 / sizes[i]!) ** truth.k);
        if (b.lower <= t && t <= b.upper) hits[i]!++;
      });
    }
    for (const h of hits) {
      expect(h / reps).toBeGreaterThanOrEqual(COVERAGE_BAND[0]);
      expect(h / reps).toBeLessThanOrEqual(COVERAGE_BAND[1]);
    }
  });
});

describe('fitRemovalParticles — data that cannot determine a curve', () => {
  it('refuses complete separation, one outcome only, one size, and mismatched arrays', () => {
    expect(() => fitRemovalParticles([30 * nm, 40 * nm, 80 * nm, 90 * nm], [0, 0, 1, 1])).toThrow(
      /do not separate removed from surviving particles/,
    );
    expect(() => fitRemovalParticles([30 * nm, 90 * nm], [1, 1])).toThrow(
      /at least one removed and one surviving/,
    );
    expect(() => fitRemovalParticles([50 * nm, 50 * nm], [1, 0])).toThrow(/at least 2 distinct sizes/);
    expect(() => fitRemovalParticles([50 * nm], [1, 0])).toThrow(ModelInputError);
    expect(() => fitRemovalParticles([50 * nm, -1], [1, 0])).toThrow(/diametersM\[1\] = -1 m/);
  });
});

describe('removalCurveBand — bad input', () => {
  it('refuses a missing or malformed fit, sizes that are not an array, a bad size or level', () => {
    // The doc example's fit (1/4 removed at 30 nm, 3/4 at 90 nm, E_max fixed at 1).
    const fit = fitRemovalParticles(
      [30, 30, 30, 30, 90, 90, 90, 90].map((v) => v * nm),
      [1, 0, 0, 0, 1, 1, 1, 0],
      { maxEfficiency: 1 },
    );
    const sizes = [50 * nm];
    expect(() => removalCurveBand(null as unknown as typeof fit, sizes)).toThrow(
      /removalCurveBand: fit = null is out of range/,
    );
    expect(() => removalCurveBand({ ...fit, referenceM: 0 }, sizes)).toThrow(/fit.referenceM = 0 m/);
    expect(() => removalCurveBand({ ...fit, b: Number.NaN }, sizes)).toThrow(/fit.b = NaN/);
    expect(() => removalCurveBand({ ...fit, covariance: [[1]] }, sizes)).toThrow(
      /fit.covariance = \[\[1\]\] is out of range; allowed a 2 × 2 or 3 × 3 matrix/,
    );
    expect(() =>
      removalCurveBand(
        {
          ...fit,
          covariance: [
            [1, 0],
            [0, Number.POSITIVE_INFINITY],
          ],
        },
        sizes,
      ),
    ).toThrow(/fit.covariance\[1\]\[1\] = Infinity/);
    expect(() => removalCurveBand(fit, 5e-8 as unknown as number[])).toThrow(/diametersM = 5e-8 m/);
    expect(() => removalCurveBand(fit, [Number.NaN])).toThrow(/diametersM\[0\] = NaN m/);
    expect(() => removalCurveBand(fit, sizes, 1)).toThrow(/removalCurveBand: confidence = 1/);
    // A valid call still answers (the same fit, unchanged).
    expect(removalCurveBand(fit, sizes)[0]!.efficiency).toBeGreaterThan(0);
  });
});
