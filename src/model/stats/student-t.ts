/**
 * Student's t distribution with a whole number of degrees of freedom: cumulative distribution and
 * quantile, for intervals of a mean (or a least-squares coefficient) whose scatter is estimated from
 * the same residuals.
 *
 * The cumulative distribution uses the finite trigonometric series of Abramowitz & Stegun (1964),
 * 26.7.3 (ν odd) and 26.7.4 (ν even), exact for whole ν: with θ = arctan(t/√ν),
 *   A(t|ν) = P(|T| ≤ t) =
 *     ν odd:  (2/π) [θ + sin θ (cos θ + (2/3) cos³θ + … + (2·4…(ν−3))/(1·3…(ν−2)) cos^(ν−2)θ)]   (ν = 1: 2θ/π)
 *     ν even: sin θ [1 + ½ cos²θ + (1·3)/(2·4) cos⁴θ + … + (1·3…(ν−3))/(2·4…(ν−2)) cos^(ν−2)θ]
 * and the quantile inverts it by bisection (A rises with t).
 */
import { requireNumber } from '../errors.ts';

/** Largest degrees of freedom accepted (the series has about ν/2 terms). */
export const STUDENT_T_MAX_DF = 1e6;

function requireDf(fn: string, nu: number): number {
  return requireNumber(fn, 'nu', nu, 'degrees of freedom', { min: 1, max: STUDENT_T_MAX_DF, integer: true });
}

/** A(t|ν) = P(|T| ≤ t) for t ≥ 0 (Abramowitz & Stegun 26.7.3–4). */
function centralProbability(t: number, nu: number): number {
  if (t === 0) return 0;
  if (!Number.isFinite(t)) return 1;
  const theta = Math.atan(t / Math.sqrt(nu));
  const s = Math.sin(theta);
  const c = Math.cos(theta);
  const c2 = c * c;
  if (nu % 2 === 1) {
    if (nu === 1) return (2 * theta) / Math.PI;
    // cos θ · Σ_{k=0}^{(ν−3)/2} [2·4…(2k)]/[1·3…(2k+1)] cos^(2k) θ
    let term = c;
    let sum = c;
    for (let k = 1; k <= (nu - 3) / 2; k++) {
      term *= (c2 * (2 * k)) / (2 * k + 1);
      sum += term;
      if (term < 1e-17 * sum) break;
    }
    return Math.min(1, (2 / Math.PI) * (theta + s * sum));
  }
  // Σ_{k=0}^{(ν−2)/2} [1·3…(2k−1)]/[2·4…(2k)] cos^(2k) θ
  let term = 1;
  let sum = 1;
  for (let k = 1; k <= (nu - 2) / 2; k++) {
    term *= (c2 * (2 * k - 1)) / (2 * k);
    sum += term;
    if (term < 1e-17 * sum) break;
  }
  return Math.min(1, s * sum);
}

/**
 * Student's t cumulative distribution function F(t; ν) = P(T ≤ t), ν a whole number.
 *
 * Formula: F = ½ + ½ A(t|ν) for t ≥ 0 and ½ − ½ A(|t| |ν) for t < 0, with A the finite series of
 * Abramowitz & Stegun (1964) 26.7.3 (ν odd) and 26.7.4 (ν even).
 *
 * @param t value, dimensionless, finite
 * @param nu degrees of freedom ν, a whole number 1 ≤ ν ≤ 10⁶
 * @returns probability in [0, 1]
 * @throws ModelInputError for a non-finite t or a ν that is not a whole number in range
 * @example studentTCdf(1, 1) // 0.75 (Cauchy: ½ + arctan(1)/π)
 */
export function studentTCdf(t: number, nu: number): number {
  requireNumber('studentTCdf', 't', t, '');
  requireDf('studentTCdf', nu);
  const a = centralProbability(Math.abs(t), nu);
  return t >= 0 ? 0.5 + 0.5 * a : 0.5 - 0.5 * a;
}

/**
 * Student's t quantile: the t with F(t; ν) = p, ν a whole number.
 *
 * Method: bisection on the cumulative distribution above (monotone in t) in a bracket that starts
 * at [0, 1] and doubles until it holds the quantile, to a relative width of 10⁻¹⁴; the lower half
 * by symmetry, t_p = −t_(1−p).
 *
 * @param p probability, 0 < p < 1 (exclusive)
 * @param nu degrees of freedom ν, a whole number 1 ≤ ν ≤ 10⁶
 * @returns t
 * @throws ModelInputError when p ∉ (0, 1) or ν is not a whole number in range
 * @example studentTQuantile(0.975, 10) // 2.2281388519649385 (NIST/SEMATECH e-Handbook Table 1.4.2.7.2: 2.228)
 */
export function studentTQuantile(p: number, nu: number): number {
  requireNumber('studentTQuantile', 'p', p, '', { min: 0, max: 1, minExclusive: true, maxExclusive: true });
  requireDf('studentTQuantile', nu);
  if (p === 0.5) return 0;
  const upper = p > 0.5;
  // P(|T| ≤ t) = 2p − 1 for the upper half; the lower half mirrors it.
  const target = upper ? 2 * p - 1 : 1 - 2 * p;
  let lo = 0;
  let hi = 1;
  while (centralProbability(hi, nu) < target) {
    lo = hi;
    hi *= 2;
    if (hi > 1e300) break;
  }
  for (let i = 0; i < 2000 && hi - lo > 1e-14 * hi; i++) {
    const mid = 0.5 * (lo + hi);
    if (centralProbability(mid, nu) < target) lo = mid;
    else hi = mid;
  }
  const t = 0.5 * (lo + hi);
  return upper ? t : -t;
}
