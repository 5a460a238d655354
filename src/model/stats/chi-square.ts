/**
 * The chi-square distribution: cumulative distribution, survival function and quantile.
 *
 * χ²(k) is the gamma law with shape k/2 and scale 2, so F(x; k) = P(k/2, x/2) with P the
 * regularized lower incomplete gamma function (Press et al. 2007, §6.2 and §6.14). The degrees of
 * freedom k need not be an integer.
 */
import { requireNumber } from '../errors.ts';
import { logGamma, logGammaPrefactor, regularizedGammaP, regularizedGammaQ } from './gamma.ts';

/** Smallest degrees of freedom accepted (below it the quantile underflows for ordinary p). */
export const CHI_SQUARE_MIN_DF = 0.1;
/** Largest degrees of freedom accepted (twice the largest gamma shape, GAMMA_MAX_SHAPE). */
export const CHI_SQUARE_MAX_DF = 2e9;

function requireDf(fn: string, k: number): number {
  return requireNumber(fn, 'k', k, 'degrees of freedom', { min: CHI_SQUARE_MIN_DF, max: CHI_SQUARE_MAX_DF });
}

/**
 * Chi-square cumulative distribution function F(x; k) = P(X ≤ x) for X ~ χ²(k).
 *
 * Formula: F(x; k) = P(k/2, x/2), the regularized lower incomplete gamma function
 * (Press et al. 2007, §6.14.8).
 *
 * @param x value, dimensionless, finite and ≥ 0
 * @param k degrees of freedom, 0.1 ≤ k ≤ 2·10⁹ (non-integer allowed)
 * @returns probability in [0, 1]
 * @throws ModelInputError when x or k is non-finite or out of range
 * @example chiSquareCdf(3.841458820694124, 1) // 0.95 (NIST/SEMATECH e-Handbook Table 1.4.2.7)
 */
export function chiSquareCdf(x: number, k: number): number {
  requireNumber('chiSquareCdf', 'x', x, '', { min: 0 });
  requireDf('chiSquareCdf', k);
  return regularizedGammaP(k / 2, x / 2);
}

/**
 * Chi-square survival function (upper tail) Q(x; k) = P(X > x) = 1 − F(x; k), computed directly
 * (continued fraction) so that small tail probabilities keep their relative precision. This is
 * the p-value of a chi-square test statistic x on k degrees of freedom.
 *
 * @param x value, dimensionless, finite and ≥ 0
 * @param k degrees of freedom, 0.1 ≤ k ≤ 2·10⁹
 * @returns probability in [0, 1]
 * @throws ModelInputError when x or k is non-finite or out of range
 * @example chiSquareSurvival(2 * Math.log(20), 2) // 0.05 (χ²(2) is exponential with mean 2)
 */
export function chiSquareSurvival(x: number, k: number): number {
  requireNumber('chiSquareSurvival', 'x', x, '', { min: 0 });
  requireDf('chiSquareSurvival', k);
  return regularizedGammaQ(k / 2, x / 2);
}

/**
 * Standard normal quantile by Abramowitz & Stegun (1964) eq. 26.2.23 (|error| < 4.5·10⁻⁴).
 * Used only as the Wilson–Hilferty starting value; the Halley iteration then converges to full
 * precision, so this approximation never limits the result.
 */
function approxNormalQuantile(p: number): number {
  const q = p < 0.5 ? p : 1 - p;
  const t = Math.sqrt(-2 * Math.log(q));
  const z =
    t - (2.515517 + t * (0.802853 + t * 0.010328)) / (1 + t * (1.432788 + t * (0.189269 + t * 0.001308)));
  return p < 0.5 ? -z : z;
}

/**
 * Starting value for the gamma(a) quantile y (y = x/2 for χ²): the Wilson–Hilferty cube-root
 * normal approximation (Wilson & Hilferty 1931) χ²_p ≈ k·[1 − 2/(9k) + z_p √(2/(9k))]³ where it is
 * positive and the upper tail is not of a very small k; otherwise the small-x limit of the series,
 * P(a, y) ≈ y^a / Γ(a + 1), i.e. y ≈ [p Γ(a + 1)]^(1/a).
 */
function startValue(p: number, a: number): number {
  const k = 2 * a;
  const c = 2 / (9 * k);
  const base = 1 - c + approxNormalQuantile(p) * Math.sqrt(c);
  if (base > 0 && (k >= 1 || p >= 0.5)) return (k * base ** 3) / 2;
  return Math.exp((Math.log(p) + logGamma(a + 1)) / a);
}

/**
 * Chi-square quantile (inverse CDF): the x ≥ 0 with F(x; k) = p.
 *
 * Method: Wilson–Hilferty starting value, then Halley's iteration on P(k/2, y) − p in y = x/2
 * (as in Press et al. 2007, §6.2.1, invgammp), with the root kept inside a bracket [lo, hi] that
 * every evaluation narrows; a step that leaves the bracket is replaced by bisection (geometric
 * when the bracket spans more than a decade), so convergence is guaranteed. For p > ½ the upper
 * tail Q(k/2, y) − (1 − p) is solved instead, which keeps relative precision for p near 1.
 * Result accurate to about 10⁻¹³ relative (limited by P itself). A quantile below the smallest
 * positive double (p tiny with k small) underflows to 0.
 *
 * @param p probability, 0 < p < 1 (exclusive)
 * @param k degrees of freedom, 0.1 ≤ k ≤ 2·10⁹ (non-integer allowed)
 * @returns x ≥ 0
 * @throws ModelInputError when p or k is non-finite or out of range
 * @example chiSquareQuantile(0.95, 10) // 18.307038053275146 (NIST/SEMATECH e-Handbook Table 1.4.2.7: 18.307)
 */
export function chiSquareQuantile(p: number, k: number): number {
  requireNumber('chiSquareQuantile', 'p', p, '', { min: 0, max: 1, minExclusive: true, maxExclusive: true });
  requireDf('chiSquareQuantile', k);
  return 2 * gammaQuantile(p, k / 2);
}

/** y with P(a, y) = p, 0 < p < 1. */
function gammaQuantile(p: number, a: number): number {
  const upper = p > 0.5;
  const q = 1 - p; // exact for p > ½ (Sterbenz)
  // f(y) increases with y in both forms: P(a, y) − p, or (1 − p) − Q(a, y).
  const f = (y: number) => (upper ? q - regularizedGammaQ(a, y) : regularizedGammaP(a, y) - p);
  let lo = 0;
  let hi = Number.POSITIVE_INFINITY;
  let y = startValue(p, a);
  if (y === 0) return 0; // the quantile underflows
  let previousAbsF = Number.POSITIVE_INFINITY;
  for (let iter = 0; iter < 300; iter++) {
    if (y === 0) return 0; // bisection toward 0 underflowed: the quantile is below the smallest double
    const fy = f(y);
    // Converged when f is within the precision of the target tail probability itself.
    if (Math.abs(fy) <= 1e-13 * (upper ? q : p)) return y;
    if (fy < 0) lo = y;
    else hi = y;
    // Halley step. P'(y) = y^(a−1) e^(−y) / Γ(a);  P''/P' = (a − 1)/y − 1.
    const dens = Math.exp(logGammaPrefactor(a, y)) / y;
    let next = Number.NaN;
    if (dens > 0 && Number.isFinite(dens)) {
      const t = fy / dens;
      next = y - t / (1 - 0.5 * Math.min(1, t * ((a - 1) / y - 1)));
      if (Math.abs(next - y) <= 4 * Number.EPSILON * y) return next;
    }
    // Safeguard: leave the Halley step for bisection when it jumps out of the bracket or when
    // |f| did not at least halve (Halley crawling where the density is tiny, far from the root).
    const stalled = Math.abs(fy) > 0.5 * previousAbsF;
    if (!(next > lo && next < hi) || stalled) {
      // Expand or shrink geometrically when one side is still open (fast across many decades).
      if (!Number.isFinite(hi)) next = Math.max(4 * y, Math.sqrt(y));
      else if (lo === 0) next = Math.min(hi / 4, hi * hi);
      else if (hi / lo > 10) next = Math.sqrt(lo * hi);
      else next = 0.5 * (lo + hi);
    }
    if (Number.isFinite(hi) && hi - lo <= 4 * Number.EPSILON * hi) return next;
    previousAbsF = Math.abs(fy);
    y = next;
  }
  return y;
}
