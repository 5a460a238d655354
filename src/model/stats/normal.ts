/**
 * The standard normal distribution: cumulative distribution and survival function, with the
 * logarithm of the survival function for likelihoods that truncate a normal law far in its tail.
 *
 * Through the incomplete gamma function: for z ≥ 0, P(Z > z) = ½ Q(½, z²/2), because Z² ~ χ²(1)
 * (Abramowitz & Stegun 1964, 26.2.30 with 26.4.19; Press et al. 2007, §6.2 — erfc(x) = Q(½, x²)).
 * Q keeps its relative precision deep in the tail (continued fraction), so P(Z > 8) ≈ 6.2·10⁻¹⁶ is
 * exact to about 14 digits instead of rounding to 0 as 1 − Φ would.
 */
import { finiteResult, requireNumber } from '../errors.ts';
import { regularizedGammaP, regularizedGammaQ } from './gamma.ts';

/** |z| beyond which the tail probability is below the smallest double (e^(−z²/2) underflows). */
const Z_UNDERFLOW = 38.5;

/**
 * Standard normal survival function (upper tail) P(Z > z).
 *
 * Formula: z ≥ 0: ½ Q(½, z²/2); z < 0: 1 − ½ Q(½, z²/2) = ½ + ½ P(½, z²/2)
 * (Abramowitz & Stegun 1964, 26.2.30; Q, P the regularized incomplete gamma functions).
 *
 * @param z standard normal deviate, dimensionless, finite
 * @returns probability in [0, 1] (full relative precision in the upper tail)
 * @throws ModelInputError for a non-finite z
 * @example normalSurvival(1.959963984540054) // 0.025 (A&S Table 26.1)
 */
export function normalSurvival(z: number): number {
  requireNumber('normalSurvival', 'z', z, '');
  if (z >= Z_UNDERFLOW) return 0;
  if (z <= -Z_UNDERFLOW) return 1;
  const h = (z * z) / 2;
  if (z >= 0) return 0.5 * regularizedGammaQ(0.5, h);
  return 0.5 + 0.5 * regularizedGammaP(0.5, h);
}

/**
 * Standard normal cumulative distribution function Φ(z) = P(Z ≤ z) = P(Z > −z).
 *
 * @param z standard normal deviate, dimensionless, finite
 * @returns probability in [0, 1] (full relative precision in the lower tail)
 * @throws ModelInputError for a non-finite z
 * @example normalCdf(-1.959963984540054) // 0.025 (A&S Table 26.1)
 */
export function normalCdf(z: number): number {
  requireNumber('normalCdf', 'z', z, '');
  return normalSurvival(-z);
}

/**
 * Natural logarithm of the standard normal survival function, ln P(Z > z), finite for every finite z:
 * beyond the range where P(Z > z) is a positive double it uses the asymptotic (Mills-ratio) series
 * ln P(Z > z) = −z²/2 − ln z − ½ ln 2π + ln(1 − 1/z² + 3/z⁴ − 15/z⁶ + 105/z⁸ − 945/z¹⁰) (Abramowitz &
 * Stegun 1964, 26.2.12), whose next term (10395/z¹²) is below 2·10⁻¹⁵ there (z ≥ 37.5).
 *
 * @param z standard normal deviate, dimensionless, finite
 * @returns ln P(Z > z) ≤ 0
 * @throws ModelInputError for a non-finite z, or one so large that z² overflows (|z| > about 1.3·10¹⁵⁴)
 * @example logNormalSurvival(0) // −0.6931471805599453 (ln ½)
 */
export function logNormalSurvival(z: number): number {
  requireNumber('logNormalSurvival', 'z', z, '');
  if (z < Z_UNDERFLOW - 1) return Math.log(normalSurvival(z));
  const z2 = z * z;
  const u = 1 / z2;
  const series = 1 + u * (-1 + u * (3 + u * (-15 + u * (105 - 945 * u))));
  return finiteResult(
    'logNormalSurvival',
    -z2 / 2 - Math.log(z) - 0.5 * Math.log(2 * Math.PI) + Math.log(series),
  );
}
