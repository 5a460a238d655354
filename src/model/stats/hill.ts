/**
 * Power-law (Pareto) tail exponents of particle sizes from a scan: the Hill estimator with its
 * exact chi-square interval, and the maximum-likelihood exponent of a power law truncated at an
 * upper size.
 *
 * Model: sizes x ≥ x_m with survival P(X > x) = (x / x_m)^(−α) (a cumulative slope α; the
 * differential density falls as x^(−α−1)). α is the same slope as the cumulative slope of a
 * counter spectrum or of ISO 14644-1 (2.08 there).
 */
import { finiteResult, ModelInputError, requireNumber, requireOneOf, requirePositive } from '../errors.ts';
import { chiSquareQuantile } from './chi-square.ts';

export type HillEstimatorForm = 'mle' | 'unbiased';

export interface HillEstimate {
  /** Estimated cumulative power-law exponent α̂ (dimensionless). */
  alpha: number;
  /** Approximate standard error α̂ / √n. */
  se: number;
  /** Lower limit of the exact confidence interval of α. */
  lower: number;
  /** Upper limit of the exact confidence interval of α. */
  upper: number;
  /** Sizes used (those ≥ the threshold). */
  n: number;
  /** Sizes left out because they lie below the threshold. */
  excluded: number;
  /** S = Σ ln(x_i / x_m) over the sizes used. */
  sumLogExcess: number;
  confidence: number;
  estimator: HillEstimatorForm;
}

function requireSizes(fn: string, sizes: readonly number[]): void {
  if (!Array.isArray(sizes)) throw new ModelInputError(fn, 'sizes', 'm', 'an array of diameters', sizes);
  sizes.forEach((x, i) => {
    requirePositive(fn, `sizes[${i}]`, x, 'm');
  });
}

function requireConfidence(fn: string, c: number): number {
  return requireNumber(fn, 'confidence', c, '', { min: 0, max: 1, minExclusive: true, maxExclusive: true });
}

/**
 * Hill (maximum-likelihood) estimator of a power-law tail exponent, with exact interval.
 *
 * Formula (Clauset, Shalizi & Newman, SIAM Review 51 (2009) 661, eqs. 3.1 and 3.2, continuous case):
 *   S = Σ ln(x_i / x_m) over the n sizes x_i ≥ x_m
 *   α̂ = n / S                  (estimator 'mle', the default: the maximum-likelihood value)
 *   α̂ = (n − 1) / S            (estimator 'unbiased': E[α̂] = α; needs n ≥ 2)
 *   SE ≈ α̂ / √n
 *   exact interval: 2 α S ~ χ²(2n), so α ∈ [χ²(a/2; 2n), χ²(1 − a/2; 2n)] / (2S), a = 1 − confidence
 *   (S is a sum of n exponential variables of rate α; the interval does not depend on the form).
 *
 * @param sizes diameters x_i in metres, each finite and > 0; those below thresholdM are left out
 *   (and counted in `excluded`), since the model holds only above the detection threshold
 * @param thresholdM x_m, the lower end of the power law (scan threshold), metres, > 0
 * @param confidence two-sided confidence level, 0 < c < 1 (default 0.95)
 * @param options.estimator 'mle' (default) or 'unbiased'
 * @throws ModelInputError for bad numbers, fewer than 1 size (2 for 'unbiased') at or above the
 *   threshold, or S = 0 (every size equal to the threshold: the exponent is unbounded)
 * @example hillEstimator([1, 2, 4, 8], 1) // α̂ = 0.96180, interval [0.26206, 2.10808]
 */
export function hillEstimator(
  sizes: readonly number[],
  thresholdM: number,
  confidence = 0.95,
  options: { estimator?: HillEstimatorForm } = {},
): HillEstimate {
  const fn = 'hillEstimator';
  requireSizes(fn, sizes);
  const xm = requirePositive(fn, 'thresholdM', thresholdM, 'm');
  requireConfidence(fn, confidence);
  const estimator = requireOneOf(fn, 'options.estimator', options.estimator ?? 'mle', [
    'mle',
    'unbiased',
  ] as const);
  let n = 0;
  let s = 0;
  for (const x of sizes) {
    if (x < xm) continue;
    n++;
    s += Math.log(x / xm);
  }
  const minN = estimator === 'unbiased' ? 2 : 1;
  if (n < minN)
    throw new ModelInputError(fn, 'sizes', 'm', `at least ${minN} size(s) ≥ thresholdM = ${xm} m`, n);
  if (!(s > 0))
    throw new ModelInputError(fn, 'sizes', 'm', 'at least one size above thresholdM', sizes.length);
  return { ...hillCore(n, s, confidence, estimator), excluded: sizes.length - n };
}

function hillCore(
  n: number,
  s: number,
  confidence: number,
  estimator: HillEstimatorForm,
): Omit<HillEstimate, 'excluded'> {
  // Sizes a hair above the threshold make s so small that α overflows: refused, never Infinity out.
  const fn = 'hillEstimator';
  // A threshold far below the sizes (x / x_m overflowing) makes S infinite: refused as well.
  finiteResult(fn, s, 'sumLogExcess');
  const alpha = finiteResult(fn, (estimator === 'unbiased' ? n - 1 : n) / s, 'alpha');
  const a = 1 - confidence;
  return {
    alpha,
    se: alpha / Math.sqrt(n),
    lower: finiteResult(fn, chiSquareQuantile(a / 2, 2 * n) / (2 * s), 'lower'),
    upper: finiteResult(fn, chiSquareQuantile(1 - a / 2, 2 * n) / (2 * s), 'upper'),
    n,
    sumLogExcess: s,
    confidence,
    estimator,
  };
}

/**
 * The Hill estimate from its sufficient statistics: the count n of sizes at or above the threshold
 * and S = Σ ln(x_i / x_m) over them — the same formulas as hillEstimator (Clauset, Shalizi & Newman
 * 2009, eqs. 3.1, 3.2; exact interval 2αS ~ χ²(2n)), for callers that already hold n and S (a scan
 * of tens of thousands of particles whose logarithms were taken once).
 *
 * @param n sizes at or above the threshold, an integer ≥ 1 (≥ 2 for 'unbiased')
 * @param sumLogExcess S, dimensionless, > 0
 * @param confidence two-sided confidence level, 0 < c < 1 (default 0.95)
 * @param options.estimator 'mle' (default) or 'unbiased'
 * @throws ModelInputError for a bad n, S or confidence
 * @example hillFromSums(4, Math.log(64), 0.95).alpha // 0.96180, as hillEstimator([1, 2, 4, 8], 1)
 */
export function hillFromSums(
  n: number,
  sumLogExcess: number,
  confidence = 0.95,
  options: { estimator?: HillEstimatorForm } = {},
): Omit<HillEstimate, 'excluded'> {
  const fn = 'hillFromSums';
  const estimator = requireOneOf(fn, 'options.estimator', options.estimator ?? 'mle', [
    'mle',
    'unbiased',
  ] as const);
  requireNumber(fn, 'n', n, '', { min: estimator === 'unbiased' ? 2 : 1, integer: true });
  requireNumber(fn, 'sumLogExcess', sumLogExcess, '', { min: 0, minExclusive: true });
  requireConfidence(fn, confidence);
  return hillCore(n, sumLogExcess, confidence, estimator);
}

export interface TruncatedPowerLawEstimate {
  /** Maximum-likelihood exponent α̂ (may be ≤ 0 when sizes crowd toward the upper bound). */
  alpha: number;
  /** Standard error from the Fisher information, 1 / √(n · Var_α̂[ln X]). */
  se: number;
  /** Lower limit of the likelihood-ratio (profile) confidence interval. */
  lower: number;
  /** Upper limit of the likelihood-ratio confidence interval. */
  upper: number;
  n: number;
  /** Sizes left out because they lie outside [lowerM, upperM]. */
  excluded: number;
  /** Maximised log-likelihood of the sizes used (density per metre). */
  logLikelihood: number;
  confidence: number;
}

/*
 * The truncated power law in y = ln(x / L) ∈ [0, c], c = ln(U / L), is a truncated exponential
 * law, f_Y(y) = e^(−αy) / Z(α) with Z(α) = (1 − e^(−cα)) / α (Z(0) = c). It is an exponential
 * family in α, so the log-likelihood is concave, the score equation reads "model mean of Y =
 * sample mean of Y", and the Fisher information is n·Var(Y).
 */

/** ln Z(α) with Z = (1 − e^(−u)) / α, u = cα; stable for all real α. */
function logNormaliser(alpha: number, c: number): number {
  const u = c * alpha;
  if (u === 0) return Math.log(c);
  if (u < -700) return Math.log(c) - u - Math.log(-u); // (e^(−u) − 1)/(−u) ≈ e^(−u)/(−u)
  return Math.log(c) + Math.log(-Math.expm1(-u) / u);
}

/** E[Y] under the truncated law: 1/α − c / (e^(cα) − 1), series near α = 0. */
function meanLogExcess(alpha: number, c: number): number {
  const u = c * alpha;
  if (Math.abs(u) < 0.05) {
    const u2 = u * u;
    return c * (0.5 - u / 12 + (u * u2) / 720 - (u * u2 * u2) / 30240);
  }
  return 1 / alpha - c / Math.expm1(u);
}

/** Var[Y] under the truncated law: c²·[1/u² − 1/(4 sinh²(u/2))], series near u = 0. */
function varianceLogExcess(alpha: number, c: number): number {
  const u = c * alpha;
  if (Math.abs(u) < 0.05) {
    const u2 = u * u;
    return c * c * (1 / 12 - u2 / 240 + (u2 * u2) / 6048);
  }
  const sh = Math.sinh(u / 2);
  return c * c * (1 / (u * u) - 1 / (4 * sh * sh));
}

/** Bisection for a decreasing function g on [lo, hi] with g(lo) > 0 > g(hi). */
function bisectDecreasing(g: (a: number) => number, lo: number, hi: number): number {
  let a = lo;
  let b = hi;
  for (let i = 0; i < 400; i++) {
    const mid = 0.5 * (a + b);
    if (mid === a || mid === b) break;
    if (g(mid) > 0) a = mid;
    else b = mid;
    if (b - a <= 1e-15 * Math.max(Math.abs(a), Math.abs(b), 1e-300)) break;
  }
  return 0.5 * (a + b);
}

/**
 * Maximum-likelihood exponent of a power law truncated at an upper size (truncated Pareto).
 *
 * Model: density f(x) = α x^(−α−1) / (L^(−α) − U^(−α)) on L ≤ x ≤ U (cumulative slope α).
 * Score equation (Aban, Meerschaert & Panorska, J. Am. Stat. Assoc. 101 (2006) 270, eq. for α̂
 * with the truncation points fixed at known L and U, r = L/U):
 *   n/α + n r^α ln r / (1 − r^α) − Σ ln(x_i / L) = 0,
 * i.e. 1/α − c/(e^(cα) − 1) = mean of ln(x_i / L), c = ln(U/L); solved by bisection (the left side
 * falls strictly with α over all reals, so the root is unique). As U → ∞ this is the Hill estimator.
 * Standard error from the Fisher information; the interval is the likelihood-ratio interval
 * {α : 2[ℓ(α̂) − ℓ(α)] ≤ χ²(confidence; 1)} (the log-likelihood is concave).
 *
 * L and U are taken as known (the scan threshold and the largest size the instrument reports, or
 * the top of the size grid); voidcast does not estimate them from the sample extremes.
 *
 * @param sizes diameters in metres, each finite and > 0; those outside [lowerM, upperM] are left out
 * @param lowerM L, lower end of the power law (scan threshold), metres, > 0
 * @param upperM U, upper truncation size, metres, > lowerM
 * @param confidence two-sided confidence level, 0 < c < 1 (default 0.95)
 * @throws ModelInputError for bad numbers, no size in range, or every size at one bound (the
 *   exponent is unbounded: +∞ when all sit at L, −∞ when all sit at U)
 * @example hillEstimatorTruncated([1, 2, 4, 8], 1, 1e30).alpha // ≈ 0.96180 (the Hill value)
 */
export function hillEstimatorTruncated(
  sizes: readonly number[],
  lowerM: number,
  upperM: number,
  confidence = 0.95,
): TruncatedPowerLawEstimate {
  const fn = 'hillEstimatorTruncated';
  requireSizes(fn, sizes);
  const L = requirePositive(fn, 'lowerM', lowerM, 'm');
  const U = requireNumber(fn, 'upperM', upperM, 'm', { min: L, minExclusive: true });
  requireConfidence(fn, confidence);
  const c = Math.log(U / L);
  let n = 0;
  let sumY = 0;
  let sumLnX = 0;
  for (const x of sizes) {
    if (x < L || x > U) continue;
    n++;
    sumY += Math.log(x / L);
    sumLnX += Math.log(x);
  }
  if (n < 1) throw new ModelInputError(fn, 'sizes', 'm', `at least 1 size in [${L}, ${U}] m`, 0);
  const m = sumY / n;
  if (!(m > 0) || !(m < c))
    throw new ModelInputError(fn, 'sizes', 'm', 'sizes not all at one truncation bound', sizes.length);

  const score = (a: number) => meanLogExcess(a, c) - m; // decreasing in a
  // Bracket: h(0) = c/2, h(α) < 1/α for α > 0, so the root lies in (0, 1/m] when m < c/2;
  // otherwise at α ≤ 0, found by doubling toward −∞ (h → c there).
  let lo: number;
  let hi: number;
  if (score(0) > 0) {
    lo = 0;
    hi = 1 / m;
  } else {
    hi = 0;
    lo = -1 / (c - m);
    while (score(lo) <= 0) lo *= 2;
  }
  const alpha = bisectDecreasing(score, lo, hi);
  const logLik = (a: number) => -a * sumY - n * logNormaliser(a, c) - sumLnX;
  const lMax = logLik(alpha);
  const se = 1 / Math.sqrt(n * varianceLogExcess(alpha, c));
  const crit = chiSquareQuantile(confidence, 1);
  const deficit = (a: number) => crit - 2 * (lMax - logLik(a)); // > 0 inside the interval
  let step = se;
  while (deficit(alpha + step) > 0) step *= 2;
  const upper = bisectDecreasing(deficit, alpha, alpha + step);
  step = se;
  while (deficit(alpha - step) > 0) step *= 2;
  const lower = bisectDecreasing((a) => -deficit(a), alpha - step, alpha);
  return {
    alpha: finiteResult(fn, alpha, 'alpha'),
    se: finiteResult(fn, se, 'se'),
    lower: finiteResult(fn, lower, 'lower'),
    upper: finiteResult(fn, upper, 'upper'),
    n,
    excluded: sizes.length - n,
    logLikelihood: finiteResult(fn, lMax, 'logLikelihood'),
    confidence,
  };
}
