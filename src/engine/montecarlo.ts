/**
 * Intervals by seeded Monte Carlo over the uncertain inputs together with counting noise.
 *
 * Each draw:
 * - the deposition velocity factor ~ lognormal, median 1, 95 % within ×/÷ depositionUncertaintyFactor
 *   (one factor for all waits of the pair: the uncertainty is in the physics, common to every wait);
 * - the small-gap void constant ~ lognormal around its nominal, 95 % within ×/÷ smallGapUncertaintyFactor,
 *   taken at the nearest point of a fixed grid of 41 log-spaced values (physics.ts caches the radii
 *   there; the grid step is 0.112 in ln f, i.e. at most ±5.8 % in f, small against a factor-3 spread);
 * - each tool's adder level ~ lognormal, median its stated level, 95 % within ×/÷ its uncertainty factor
 *   (one factor per tool per draw: a tool's mean level is what is uncertain);
 * - each scan tail's Hill slope α ~ Gamma(n, 1/S): the distribution of the exact pivot 2αS ~ χ²(2n)
 *   of Clauset, Shalizi & Newman (2009), so α lands in its exact interval with the stated probability
 *   (a tail with too few particles for a fit keeps the assumed slope);
 * then counting noise: reportable voids ~ Poisson(expected voids) (detected particles' Bernoulli
 * survivals are taken as Poisson: the same mean and a variance at least as large, the conservative
 * side); for the unbonded area the particle count of each bin ~ Poisson and the Boolean exponent is
 * taken over the drawn discs; each die is killed with its probability (Bernoulli per die), the random
 * part of the negative-binomial form drawn as Poisson with the die mean scaled by a wafer-level
 * Gamma(α, 1/α) factor — the gamma–Poisson mixture that defines it (Stapper).
 * Detected particles keep their nominal radii (their positions are fixed).
 */
import { quantileSorted } from 'simple-statistics';
import { createRng } from '../model/rng.ts';
import { SPECTRUM_BIN_COUNT } from '../model/spectrum.ts';
import type { Evaluation, VoidPhysics } from './evaluate.ts';
import { fractionAbove } from './evaluate.ts';
import type { Contribution, PropagationPhysics } from './propagate.ts';
import type { AssessConfig, Estimate } from './types.ts';

const Z975 = 1.959963984540054;

/** The small-gap factor grid (ln-spaced, 41 points over ±4σ) shared by the Monte Carlo and physics.ts. */
export function smallGapGrid(cfg: AssessConfig): Float64Array {
  const sigma = Math.log(Math.max(cfg.smallGapUncertaintyFactor, 1)) / Z975;
  const out = new Float64Array(41);
  for (let i = 0; i < 41; i++) out[i] = cfg.smallGapFactor * Math.exp(sigma * (-4 + (8 * i) / 40));
  return out;
}

export interface DrawSet {
  voids: Float64Array;
  unbondedFraction: Float64Array;
  killsPoisson: Float64Array | null;
  killsNB: Float64Array | null;
}

/** Void physics at each point of the small-gap grid (radii, reportable fraction, critical areas). */
export interface GridPhysics {
  radii: Float64Array[];
  frac: Float64Array[];
  acrit: Float64Array[];
}

export function buildGridPhysics(physics: VoidPhysics, grid: Float64Array, hasDies: boolean): GridPhysics {
  const radii: Float64Array[] = [];
  const frac: Float64Array[] = [];
  const acrit: Float64Array[] = [];
  for (const f of grid) {
    const r = physics.binRadii(f);
    radii.push(r);
    frac.push(fractionAbove(physics.reportableParticleM(f)));
    const a = new Float64Array(SPECTRUM_BIN_COUNT);
    if (hasDies) for (let k = 0; k < SPECTRUM_BIN_COUNT; k++) a[k] = physics.criticalArea(r[k]!);
    acrit.push(a);
  }
  return { radii, frac, acrit };
}

export function simulate(args: {
  contributions: Contribution[];
  evaluation: Evaluation;
  physics: VoidPhysics;
  propagation: PropagationPhysics;
  grid: GridPhysics;
  config: AssessConfig;
  clusterAlpha: number;
  /** Sub-seed so that scenarios of one pair draw independent streams (deterministic). */
  stream: number;
}): DrawSet {
  const { contributions, evaluation: ev, physics, propagation, grid, config: cfg } = args;
  const rng = createRng((cfg.seed * 1009 + args.stream) % Number.MAX_SAFE_INTEGER);
  const nDraws = cfg.draws;
  const ab = physics.bondedAreaM2;
  const sigDep = Math.log(Math.max(cfg.depositionUncertaintyFactor, 1)) / Z975;
  const sigGap = Math.log(Math.max(cfg.smallGapUncertaintyFactor, 1)) / Z975;
  const gridN = grid.radii.length;

  // Fixed per-contribution densities (per m², per bin) for the non-tail random sources.
  const fixedDens: (Float64Array | null)[] = contributions.map((c, i) => {
    if (c.detected || c.variation.type === 'tail') return null;
    const s = ev.perContribution[i]!.spectrum;
    const d = new Float64Array(SPECTRUM_BIN_COUNT);
    for (let k = 0; k < SPECTRUM_BIN_COUNT; k++) d[k] = s[k]! / c.areaBasisM2;
    return d;
  });
  const toolKeys = [
    ...new Set(contributions.flatMap((c) => (c.variation.type === 'tool' ? [c.variation.toolKey] : []))),
  ];
  const toolSigma = new Map<string, number>();
  for (const c of contributions)
    if (c.variation.type === 'tool')
      toolSigma.set(c.variation.toolKey, Math.log(Math.max(c.variation.uncertaintyFactor, 1)) / Z975);

  const nDies = ev.dieCount;
  const det = ev.detSurvivePerDie;
  const voids = new Float64Array(nDraws);
  const unb = new Float64Array(nDraws);
  const kP = det ? new Float64Array(nDraws) : null;
  const kNB = det ? new Float64Array(nDraws) : null;
  const lam = new Float64Array(SPECTRUM_BIN_COUNT);
  const toolF = new Map<string, number>();
  const alpha = args.clusterAlpha;

  for (let t = 0; t < nDraws; t++) {
    const depF = Math.exp(sigDep * rng.normal());
    const z = rng.normal();
    const gi = Math.min(gridN - 1, Math.max(0, Math.round(((sigGap > 0 ? z : 0) + 4) * ((gridN - 1) / 8))));
    const radii = grid.radii[gi]!;
    const frac = grid.frac[gi]!;
    const acrit = grid.acrit[gi]!;
    for (const key of toolKeys) toolF.set(key, Math.exp(toolSigma.get(key)! * rng.normal()));
    lam.fill(0);
    for (let i = 0; i < contributions.length; i++) {
      const c = contributions[i]!;
      const v = c.variation;
      if (c.detected) continue;
      if (v.type === 'tail') {
        const a = v.fixedAlpha ?? rng.gamma(v.n, 1 / v.sumLog);
        const s = propagation.tailSpectrum(v.n, a, v.thresholdM, v.floorM);
        for (let k = 0; k < SPECTRUM_BIN_COUNT; k++) lam[k]! += (s[k]! * c.survivalBins[k]!) / c.areaBasisM2;
        continue;
      }
      const f = v.type === 'wait' ? depF : v.type === 'tool' ? toolF.get(v.toolKey)! : 1;
      const d = fixedDens[i]!;
      for (let k = 0; k < SPECTRUM_BIN_COUNT; k++) lam[k]! += d[k]! * f;
    }
    let meanVoids = ev.detectedVoids;
    let expo = 0;
    let m = 0;
    for (let k = 0; k < SPECTRUM_BIN_COUNT; k++) {
      const l = lam[k]!;
      const r = radii[k]!;
      meanVoids += l * ab * frac[k]!;
      m += l * acrit[k]!;
      if (l > 0) expo += rng.poisson(l * ab) * Math.PI * r * r;
      const dc = ev.detectedCountBins[k]!;
      if (dc > 0) expo += rng.poisson(dc) * ev.detectedAreaPerParticleBins[k]!;
    }
    voids[t] = rng.poisson(meanVoids);
    unb[t] = -Math.expm1(-expo / ab);
    if (det && kP && kNB) {
      const qP = Math.exp(-m);
      const g = alpha > 0 ? rng.gamma(alpha, 1 / alpha) : 1;
      const qNB = Math.exp(-m * g);
      let nP = 0;
      let nNB = 0;
      for (let d = 0; d < nDies; d++) {
        const sd = det[d]!;
        if (rng.uniform() >= sd * qP) nP++;
        if (rng.uniform() >= sd * qNB) nNB++;
      }
      kP[t] = nP;
      kNB[t] = nNB;
    }
  }
  return { voids, unbondedFraction: unb, killsPoisson: kP, killsNB: kNB };
}

/** Sorted copy. */
export function sorted(a: Float64Array): Float64Array {
  return Float64Array.from(a).sort();
}

/** Two-sided interval [q((1−c)/2), q((1+c)/2)] around an analytic value. */
export function estimateFrom(value: number, sortedDraws: Float64Array, confidence: number): Estimate {
  const arr = Array.from(sortedDraws);
  return {
    value,
    low: Math.min(value, quantileSorted(arr, (1 - confidence) / 2)),
    high: Math.max(value, quantileSorted(arr, (1 + confidence) / 2)),
    confidence,
  };
}

/** One-sided bound: the upper c-quantile (upper = true) or the lower (1 − c)-quantile. */
export function boundFrom(sortedDraws: Float64Array, confidence: number, upper: boolean): number {
  return quantileSorted(Array.from(sortedDraws), upper ? confidence : 1 - confidence);
}
