/**
 * The two fits of calibration from void inspections (methods.md §4):
 *
 * 1. The void-size constant, from explained voids. The assessment predicts a particle's void radius
 *    R_pred(d; W) from the product's plates and the work of adhesion W (physics.ts
 *    particleVoidRadius → src/model/void.ts voidRadius): R ∝ W^(−1/4) in the thick-plate regime,
 *    R ∝ W^(−1) in the small-gap one, the regime itself moving with W. With y = ln R_obs and
 *    μ(θ) = ln R_pred(d; e^θ), the model is y = μ(θ) + ε, ε ~ N(0, σ²): a one-parameter least-squares
 *    problem in θ = ln W, which in either regime alone is the textbook regression of methods.md §4.
 *    One thing is added: an inspection reports a void only when it is at least its smallest reportable
 *    size, so an explained void's size is observed only above c = ln(D_min/2) — a truncated sample, and
 *    plain least squares on it would take the voids that happened to come out large as the rule
 *    (biasing W low when many particles sit near the limit). The fit maximises the truncated-normal
 *    likelihood instead (Cohen 1991, *Truncated and Censored Samples*; the truncated regression of
 *    Hausman & Wise 1977):
 *      ℓ(θ, σ) = Σ_j [ −ln σ − ½ ((y_j − μ_j(θ))/σ)² − ln P(Z > (c_j − μ_j(θ))/σ) ],
 *    σ profiled out for each θ (Brent's search in ln σ), θ by a scan of the profile over W from
 *    1/1000 to 1000 × the typed value and Brent's search around its best point. With no void
 *    near its limit the last term vanishes and this is exactly least squares on ln R.
 *    Interval: the profile's curvature gives SE(θ̂) (observed information, a second difference); the
 *    95 % interval is θ̂ ± t(0.975; n − 1) · SE · √(n/(n − 1)) — which, untruncated, is the classical
 *    t interval of the least-squares coefficient with the residual scatter s² = S/(n − 1). Checked by
 *    recovering known energies from synthetic pairs (test/unit/engine/learn/calibration-fit.test.ts).
 *    The radius multiplier: the geometric mean over the matches of R_pred(Ŵ)/R_pred(W_typed).
 *
 * 2. Voids no scanned particle explains. Per pair the unexplained count U_i is Poisson with mean
 *    μ_i + ρ, μ_i the assessment's expected reportable voids from the sources the scans do not see
 *    (the tail below the threshold, tool adders, waits, an unscanned wafer's incoming level), ρ what
 *    none of its sources explains (bubbles, bonding-front defects, particles from nowhere it models).
 *    ΣU has the exact Garwood interval [L, H] (Garwood 1936); with μ taken as known,
 *    ρ̂ = max(0, (ΣU − Σμ)/n) with interval [max(0, (L − Σμ)/n), max(0, (H − Σμ)/n)]. ρ̂ is what an
 *    assessment may add as a source of its own without counting the modelled sources twice.
 *    The tail's own prediction (and the unscanned sources') is compared with the observed rate: they
 *    disagree when the prediction lies outside the observed 95 % interval (an exact Poisson test at 5 %).
 */
import { garwoodInterval } from '../../model/stats/garwood.ts';
import { logNormalSurvival } from '../../model/stats/normal.ts';
import { studentTQuantile } from '../../model/stats/student-t.ts';
import { fmtCount, fmtSize } from '../format.ts';
import type { FittedUnexplainedVoids, FittedVoidSize } from '../parameter-set-types.ts';
import { particleVoidRadius, productWorkOfAdhesion } from '../physics.ts';
import type { ProductInput } from '../types.ts';
import type { SizeMatch, UnexplainedFitResult, VoidSizeFitResult } from './calibration-types.ts';

/** Fewest explained voids a void-size fit rests on: below it the fit says so and proposes nothing. */
export const MIN_MATCHES_FOR_FIT = 5;
/** Fewest inspected pairs an unexplained-void rate rests on. */
export const MIN_PAIRS_FOR_RATE = 5;

/** The model's range of W (src/model/void.ts): 0 < W ≤ 100 J/m². */
const W_MAX = 100;
const GOLDEN = (Math.sqrt(5) - 1) / 2;

/**
 * Minimum of a unimodal f on [a, b] by Brent's method: golden-section steps with parabolic
 * interpolation where it is safe (Brent 1973, *Algorithms for Minimization without Derivatives*,
 * ch. 5; Press et al. 2007, §10.3), to an absolute tolerance `tol` in x.
 */
function brentMin(f: (x: number) => number, a: number, b: number, tol: number): { x: number; f: number } {
  const C = 1 - GOLDEN; // 0.381966…
  let x = a + C * (b - a);
  let w = x;
  let v = x;
  let fx = f(x);
  let fw = fx;
  let fv = fx;
  let d = 0;
  let e = 0;
  for (let iter = 0; iter < 200; iter++) {
    const m = 0.5 * (a + b);
    const tol1 = tol + 1e-12 * Math.abs(x);
    const tol2 = 2 * tol1;
    if (Math.abs(x - m) <= tol2 - 0.5 * (b - a)) break;
    let parabolic = false;
    if (Math.abs(e) > tol1) {
      const r = (x - w) * (fx - fv);
      let q = (x - v) * (fx - fw);
      let p = (x - v) * q - (x - w) * r;
      q = 2 * (q - r);
      if (q > 0) p = -p;
      else q = -q;
      if (Math.abs(p) < Math.abs(0.5 * q * e) && p > q * (a - x) && p < q * (b - x)) {
        e = d;
        d = p / q;
        const u = x + d;
        if (u - a < tol2 || b - u < tol2) d = x < m ? tol1 : -tol1;
        parabolic = true;
      }
    }
    if (!parabolic) {
      e = (x < m ? b : a) - x;
      d = C * e;
    }
    const u = Math.abs(d) >= tol1 ? x + d : x + (d > 0 ? tol1 : -tol1);
    const fu = f(u);
    if (fu <= fx) {
      if (u < x) b = x;
      else a = x;
      v = w;
      fv = fw;
      w = x;
      fw = fx;
      x = u;
      fx = fu;
    } else {
      if (u < x) a = u;
      else b = u;
      if (fu <= fw || w === x) {
        v = w;
        fv = fw;
        w = u;
        fw = fu;
      } else if (fu <= fv || v === x || v === w) {
        v = u;
        fv = fu;
      }
    }
  }
  return { x, f: fx };
}

export interface VoidSizeFitArgs {
  productId: string;
  product: ProductInput;
  /** The assessment's small-gap factor (its config), so the fit uses the assessment's radii. */
  smallGapFactor: number;
  matches: readonly SizeMatch[];
  /** Ids of the data the fit rests on (inspections, pairs). */
  data: string[];
  minMatches?: number;
  fittedAtMs: number;
}

/** The void-size fit (see the module comment). */
export function fitVoidSize(a: VoidSizeFitArgs): VoidSizeFitResult {
  const { product, matches } = a;
  const n = matches.length;
  const minMatches = a.minMatches ?? MIN_MATCHES_FOR_FIT;
  const radius = particleVoidRadius(product);
  const f = a.smallGapFactor;
  const W0 = productWorkOfAdhesion(product);
  const perSurface = product.surfacePrep.convention === 'per-surface';
  const toEnergy = (W: number) => (perSurface ? W / 2 : W);
  const y = Float64Array.from(matches, (m) => Math.log(m.observedRadiusM));
  const c = Float64Array.from(matches, (m) => Math.log(m.truncationRadiusM));
  const d = Float64Array.from(matches, (m) => m.particleDiameterM);
  const mu = (theta: number, out: Float64Array) => {
    const W = Math.min(Math.exp(theta), W_MAX); // e^(ln 100) may round just above 100
    for (let j = 0; j < n; j++) out[j] = Math.log(radius(d[j]!, W, f).radiusM);
  };
  const mu0 = new Float64Array(n);
  mu(Math.log(W0), mu0);
  const base: VoidSizeFitResult = {
    productId: a.productId,
    n,
    fitted: null,
    typedEnergyJm2: product.surfacePrep.energyJm2,
    multiplierLow: null,
    multiplierHigh: null,
    thickPlate: 0,
    smallGap: 0,
    residualSigma: null,
    residuals: matches.map((m, j) => ({
      pairId: m.pairId,
      typed: y[j]! - mu0[j]!,
      fitted: null,
      particleDiameterM: m.particleDiameterM,
      observedRadiusM: m.observedRadiusM,
    })),
    note: null,
  };
  if (n < minMatches)
    return {
      ...base,
      note: `${n} explained void${n === 1 ? '' : 's'} for ${a.productId}: a void-size fit needs at least ${minMatches}; nothing proposed.`,
    };

  // Negative log-likelihood at (θ, ln σ), and its profile over σ.
  const m = new Float64Array(n);
  const nll = (lnSigma: number) => {
    const s = Math.exp(lnSigma);
    let sum = n * lnSigma;
    for (let j = 0; j < n; j++) {
      const z = (y[j]! - m[j]!) / s;
      sum += 0.5 * z * z + logNormalSurvival((c[j]! - m[j]!) / s);
    }
    return sum;
  };
  const profile = (theta: number): { value: number; lnSigma: number } => {
    mu(theta, m);
    const best = brentMin(nll, Math.log(1e-4), Math.log(10), 1e-8);
    return { value: best.f, lnSigma: best.x };
  };
  const lo = Math.log(W0 / 1000);
  const hi = Math.log(Math.min(W0 * 1000, W_MAX));
  const steps = 48;
  let bestK = 0;
  let bestV = Number.POSITIVE_INFINITY;
  for (let k = 0; k <= steps; k++) {
    const v = profile(lo + ((hi - lo) * k) / steps).value;
    if (v < bestV) {
      bestV = v;
      bestK = k;
    }
  }
  const h = (hi - lo) / steps;
  const opt = brentMin(
    (t) => profile(t).value,
    Math.max(lo, lo + (bestK - 1) * h),
    Math.min(hi, lo + (bestK + 1) * h),
    1e-8,
  );
  const theta = opt.x;
  if (theta - lo < 1e-6 || hi - theta < 1e-6)
    return {
      ...base,
      note: `The ${n} explained voids of ${a.productId} put the energy at the edge of the searched range (${fmtCount(toEnergy(Math.exp(lo)))}–${fmtCount(toEnergy(Math.exp(hi)))} J/m²): no estimate inside the model's range; nothing proposed.`,
    };
  // Curvature of the profile by a second difference; the profile is not a parabola (it is ~ (n/2) ln S),
  // so the step is taken again at a tenth of the first estimate of SE (relative error ≈ 10⁻²/(2n)).
  const curvatureAt = (h: number) =>
    (profile(theta + h).value - 2 * opt.f + profile(theta - h).value) / (h * h);
  let curvature = curvatureAt(0.02);
  if (curvature > 0) curvature = curvatureAt(Math.max(1e-4, 0.1 / Math.sqrt(curvature)));
  const fitSigma = Math.exp(profile(theta).lnSigma);
  if (!(curvature > 0))
    return {
      ...base,
      note: `The likelihood of the ${n} explained voids of ${a.productId} is flat at its maximum: no interval; nothing proposed.`,
    };
  const se = 1 / Math.sqrt(curvature);
  const half = studentTQuantile(0.975, n - 1) * se * Math.sqrt(n / (n - 1));
  const thetaLow = Math.max(theta - half, Math.log(Number.MIN_VALUE));
  const thetaHigh = Math.min(theta + half, Math.log(W_MAX));

  const muFit = new Float64Array(n);
  mu(theta, muFit);
  let thick = 0;
  for (let j = 0; j < n; j++)
    if (radius(d[j]!, Math.min(Math.exp(theta), W_MAX), f).regime === 'thick-plate') thick++;
  const multiplierAt = (t: number) => {
    const mt = new Float64Array(n);
    mu(t, mt);
    let s = 0;
    for (let j = 0; j < n; j++) s += mt[j]! - mu0[j]!;
    return Math.exp(s / n);
  };
  const W = Math.exp(theta);
  const fitted: FittedVoidSize = {
    productId: a.productId,
    energyJm2: toEnergy(W),
    energyLowJm2: toEnergy(Math.exp(thetaLow)),
    energyHighJm2: toEnergy(Math.exp(thetaHigh)),
    radiusMultiplier: multiplierAt(theta),
    method:
      'Truncated-normal maximum likelihood of ln R_obs on ln R_pred(d; W) of the assessment’s void model, ' +
      'voids observed only above the inspection’s smallest size (Cohen 1991); 95 % interval θ̂ ± t(0.975; n−1)·SE·√(n/(n−1)) ' +
      'from the observed information',
    data: a.data,
    n,
    fittedAtMs: a.fittedAtMs,
  };
  return {
    ...base,
    fitted,
    // a higher W makes smaller voids: the multiplier's interval runs the other way
    multiplierLow: multiplierAt(thetaHigh),
    multiplierHigh: multiplierAt(thetaLow),
    thickPlate: thick,
    smallGap: n - thick,
    residualSigma: fitSigma,
    residuals: base.residuals.map((r, j) => ({ ...r, fitted: y[j]! - muFit[j]! })),
  };
}

export interface UnexplainedPair {
  pairId: string;
  /** Unexplained voids observed inside the bonded area. */
  unexplained: number;
  /** Their equivalent diameters, m. */
  diametersM: number[];
  /** The assessment's expected reportable voids from the tail alone and from every unscanned source. */
  tailVoids: number;
  unscannedVoids: number;
}

export interface UnexplainedFitArgs {
  productId: string;
  pairs: readonly UnexplainedPair[];
  /** The inspections' smallest reportable void (largest over the pairs), m, for the words. */
  smallestVoidM: number;
  data: string[];
  minPairs?: number;
  fittedAtMs: number;
}

/** The unexplained-void rate and its comparison with the tail (see the module comment). */
export function fitUnexplained(a: UnexplainedFitArgs): UnexplainedFitResult {
  const n = a.pairs.length;
  const minPairs = a.minPairs ?? MIN_PAIRS_FOR_RATE;
  const N = a.pairs.reduce((s, p) => s + p.unexplained, 0);
  const tail = n ? a.pairs.reduce((s, p) => s + p.tailVoids, 0) / n : 0;
  const unscanned = n ? a.pairs.reduce((s, p) => s + p.unscannedVoids, 0) / n : 0;
  const g = garwoodInterval(N, 0.95);
  const per = n ? { value: N / n, low: g.lower / n, high: g.upper / n, confidence: 0.95 } : null;
  const outside = (v: number) => per !== null && (v < per.low || v > per.high);
  const size = `≥ ${fmtSize(a.smallestVoidM)}`;
  const observedPerPair = per ?? { value: 0, low: 0, high: 0, confidence: 0.95 };
  const base: UnexplainedFitResult = {
    productId: a.productId,
    pairs: n,
    observed: N,
    observedPerPair,
    tailPerPair: tail,
    unscannedPerPair: unscanned,
    tailDisagrees: outside(tail),
    unscannedDisagrees: outside(unscanned),
    fitted: null,
    note: null,
    comparison: '',
  };
  if (n < minPairs)
    return {
      ...base,
      note: `${n} inspected pair${n === 1 ? '' : 's'} of ${a.productId}: an unexplained-void rate needs at least ${minPairs}; nothing proposed.`,
      comparison: 'Too few pairs to compare.',
    };
  const words = (v: number) => `${fmtCount(v)} per pair`;
  const obs = `${words(observedPerPair.value)} [${fmtCount(observedPerPair.low)}–${fmtCount(observedPerPair.high)}]`;
  const comparison =
    `Observed unexplained voids ${size}: ${obs} over ${n} pairs. ` +
    `The undetected tail predicts ${words(tail)}${base.tailDisagrees ? ' — outside the observed interval: they disagree' : ', inside the observed interval'}; ` +
    `every source the scans do not see (tail, tool adders, waits) predicts ${words(unscanned)}${base.unscannedDisagrees ? ' — outside the observed interval: they disagree' : ', inside the observed interval'}.`;
  const sumMu = unscanned * n;
  const rate = Math.max(0, (N - sumMu) / n);
  if (!(rate > 0))
    return {
      ...base,
      comparison,
      note: `The assessment's own unscanned sources account for the ${N} unexplained voids of ${a.productId} (they predict ${fmtCount(sumMu)}): no source of its own proposed.`,
    };
  const diameters = a.pairs.flatMap((p) => p.diametersM);
  const meanArea = diameters.reduce((s, x) => s + (Math.PI * x * x) / 4, 0) / diameters.length;
  const meanDiameter = diameters.reduce((s, x) => s + x, 0) / diameters.length;
  const fitted: FittedUnexplainedVoids = {
    productId: a.productId,
    ratePerPair: rate,
    rateLowPerPair: Math.max(0, (g.lower - sumMu) / n),
    rateHighPerPair: Math.max(0, (g.upper - sumMu) / n),
    meanAreaM2: meanArea,
    meanDiameterM: meanDiameter,
    method:
      `Reportable voids (${size}) no scanned particle explains, beyond what the assessment's unscanned sources predict: ` +
      '(ΣU − Σμ)/n with the Garwood (1936) 95 % interval of ΣU; mean size of the unexplained voids',
    data: a.data,
    n,
    fittedAtMs: a.fittedAtMs,
  };
  const zero = fitted.rateLowPerPair === 0 ? ' (its interval reaches 0)' : '';
  return {
    ...base,
    comparison: `${comparison} What no source explains: ${words(rate)} [${fmtCount(fitted.rateLowPerPair)}–${fmtCount(fitted.rateHighPerPair)}]${zero}.`,
    fitted,
  };
}
