/**
 * Alert and action levels from a baseline of counter data (ISO 14644-2:2015 leaves the method to
 * the user and asks that it be stated [V]). Five methods, each one function:
 *
 *   percentileOf           the p-quantile of baseline values (Hyndman & Fan 1996, definition 7)
 *   logMeanKSigmaLevel     exp(mean + k·sd) of ln(count + 1) per unit volume
 *   poissonQuantile        the smallest k with P(X ≤ k) ≥ p, X ~ Poisson(μ)
 *   negativeBinomialQuantile the same for a negative binomial with mean μ and size r
 *   classFractionLevel     a fraction of the ISO 14644-1 class limit at a size
 *
 * How many baseline points each needs is the engine's rule (src/engine/audit/levels.ts); these
 * functions refuse only what is mathematically undefined.
 */
import { finiteResult, ModelInputError, requireNumber } from './errors.ts';
import { isoClassLimit } from './iso14644.ts';
import { regularizedBeta } from './stats/beta.ts';
import { regularizedGammaQ } from './stats/gamma.ts';

function requireValues(fn: string, param: string, values: readonly number[], min: number): number[] {
  if (!Array.isArray(values) || values.length < min)
    throw new ModelInputError(fn, param, '', `an array of at least ${min} values`, values);
  return values.map((v, i) => requireNumber(fn, `${param}[${i}]`, v, '', { min: 0, max: 1e15 }));
}

/**
 * Sample quantile, Hyndman & Fan (1996), The American Statistician 50(4) 361, definition 7 (the
 * default of R's quantile() and NumPy's percentile, and spreadsheets' PERCENTILE.INC):
 *
 *   h = (n − 1) p,   Q(p) = x₍⌊h⌋₎ + (h − ⌊h⌋)(x₍⌊h⌋+1₎ − x₍⌊h⌋₎)   (order statistics from 0)
 *
 * @param values at least 1 value, each ≥ 0 and finite (concentrations, counts)
 * @param p probability, 0 ≤ p ≤ 1
 * @returns the quantile, in the values' unit
 * @throws ModelInputError for an empty array, a negative or non-finite value, p outside [0, 1]
 * @example percentileOf([1, 2, 3, 4, 5], 0.9) // 4.6
 */
export function percentileOf(values: readonly number[], p: number): number {
  const fn = 'percentileOf';
  const x = requireValues(fn, 'values', values, 1).sort((a, b) => a - b);
  const q = requireNumber(fn, 'p', p, '', { min: 0, max: 1 });
  const h = (x.length - 1) * q;
  const lo = Math.floor(h);
  const hi = Math.min(lo + 1, x.length - 1);
  return finiteResult(fn, x[lo]! + (h - lo) * (x[hi]! - x[lo]!));
}

/**
 * Level from the mean and standard deviation of log counts (a log-normal model of the baseline):
 *
 *   yᵢ = ln((cᵢ + 1) / Vᵢ),   level = exp(ȳ + k·s_y)   per m³
 *
 * cᵢ the count of point i, Vᵢ its sampled volume (m³), s_y the sample standard deviation (n − 1).
 * The added count of one keeps zero counts defined (a "started" logarithm, Tukey 1977); it raises a
 * level by at most one count per volume. Common practice for particle counts [M]; choose k (2 and 3
 * are usual for alert and action).
 *
 * @param counts cᵢ ≥ 0, at least 2 points
 * @param volumesM3 Vᵢ > 0 m³, the same length
 * @param k multiplier of s_y, 0–10
 * @returns level, particles per m³
 * @throws ModelInputError for fewer than 2 points, unequal lengths, a bad count, volume or k
 * @example logMeanKSigmaLevel([0, 1, 3], [1, 1, 1], 2) // exp(ln(8)/3 + 2·0.6931) = 8
 */
export function logMeanKSigmaLevel(
  counts: readonly number[],
  volumesM3: readonly number[],
  k: number,
): number {
  const fn = 'logMeanKSigmaLevel';
  const c = requireValues(fn, 'counts', counts, 2);
  if (!Array.isArray(volumesM3) || volumesM3.length !== c.length)
    throw new ModelInputError(fn, 'volumesM3', 'm³', `an array of ${c.length} volumes`, volumesM3);
  const v = volumesM3.map((x, i) => requireNumber(fn, `volumesM3[${i}]`, x, 'm³', { min: 1e-9, max: 1e9 }));
  const kk = requireNumber(fn, 'k', k, '', { min: 0, max: 10 });
  const y = c.map((ci, i) => Math.log((ci + 1) / v[i]!));
  const mean = y.reduce((a, b) => a + b, 0) / y.length;
  const sd = Math.sqrt(y.reduce((a, b) => a + (b - mean) ** 2, 0) / (y.length - 1));
  return finiteResult(fn, Math.exp(mean + kk * sd));
}

/** Smallest integer k in [0, ∞) with cdf(k) ≥ p, by doubling then bisection (cdf non-decreasing). */
function integerQuantile(fn: string, cdf: (k: number) => number, p: number, start: number): number {
  let hi = Math.max(1, Math.ceil(start));
  while (cdf(hi) < p) {
    hi *= 2;
    if (hi > 1e15) throw new ModelInputError(fn, 'p', '', 'a quantile below 1e15 counts', p);
  }
  let lo = -1; // cdf(-1) = 0 < p
  while (hi - lo > 1) {
    const mid = Math.floor((lo + hi) / 2);
    if (cdf(mid) >= p) hi = mid;
    else lo = mid;
  }
  return hi;
}

/**
 * Poisson quantile: the smallest k with P(X ≤ k) ≥ p for X ~ Poisson(μ), using
 * P(X ≤ k) = Q(k + 1, μ), the regularized upper incomplete gamma function (Abramowitz & Stegun
 * 1964, 26.4.21; Press et al. 2007 §6.2).
 *
 * @param mean μ ≥ 0 (expected count in one point), ≤ 1e9
 * @param p probability, 0 < p ≤ 0.999999
 * @returns k, a whole count
 * @throws ModelInputError for μ or p out of range
 * @example poissonQuantile(4, 0.95) // 8  (P(X ≤ 7) = 0.9489, P(X ≤ 8) = 0.9786)
 */
export function poissonQuantile(mean: number, p: number): number {
  const fn = 'poissonQuantile';
  const mu = requireNumber(fn, 'mean', mean, 'count', { min: 0, max: 1e9 });
  const q = requireNumber(fn, 'p', p, '', { min: 0, minExclusive: true, max: 0.999999 });
  if (mu === 0) return 0;
  return integerQuantile(fn, (k) => regularizedGammaQ(k + 1, mu), q, mu + Math.sqrt(mu) + 1);
}

/**
 * Negative-binomial quantile: the smallest k with P(X ≤ k) ≥ p for X with mean μ and size r
 * (Var X = μ + μ²/r; r → ∞ is Poisson), using P(X ≤ k) = I_{r/(r+μ)}(r, k + 1), the regularized
 * incomplete beta function (Abramowitz & Stegun 1964, 26.5.26 with the NB–binomial relation;
 * Johnson, Kemp & Kotz, Univariate Discrete Distributions, 3rd ed. 2005, §5.6).
 *
 * Fit by moments from a baseline: r = m² / (s² − m) (countDispersion's negativeBinomialK).
 *
 * @param mean μ ≥ 0, ≤ 1e9
 * @param size r, 0.01 ≤ r ≤ 1e9
 * @param p probability, 0 < p ≤ 0.999999
 * @returns k, a whole count
 * @throws ModelInputError for μ, r or p out of range, or a quantile above 1e15
 * @example negativeBinomialQuantile(4, 2, 0.95) // 11
 */
export function negativeBinomialQuantile(mean: number, size: number, p: number): number {
  const fn = 'negativeBinomialQuantile';
  const mu = requireNumber(fn, 'mean', mean, 'count', { min: 0, max: 1e9 });
  const r = requireNumber(fn, 'size', size, '', { min: 0.01, max: 1e9 });
  const q = requireNumber(fn, 'p', p, '', { min: 0, minExclusive: true, max: 0.999999 });
  if (mu === 0) return 0;
  const x = r / (r + mu);
  return integerQuantile(fn, (k) => regularizedBeta(x, r, k + 1), q, mu + Math.sqrt(mu + (mu * mu) / r) + 1);
}

/**
 * A fraction of the ISO 14644-1:2015 class limit at a size (unrounded formula value,
 * C_n = 10^N (0.1/D)^2.08):
 *
 *   level = f · C_n(D)   per m³
 *
 * @param classN ISO class 1–9
 * @param diameterM size D, 0.1–5 µm in m
 * @param fraction f, 0 < f ≤ 1
 * @returns level, particles per m³
 * @throws ModelInputError for N, D or f out of range
 * @example classFractionLevel(5, 0.5e-6, 0.5) // 1758.38 (half of 3516.76)
 */
export function classFractionLevel(classN: number, diameterM: number, fraction: number): number {
  const f = requireNumber('classFractionLevel', 'fraction', fraction, '', {
    min: 0,
    minExclusive: true,
    max: 1,
  });
  return finiteResult('classFractionLevel', f * isoClassLimit(classN, diameterM));
}
