/**
 * Exact (Garwood) confidence limits for the mean of a Poisson count.
 *
 * Garwood, F. (1936), "Fiducial limits for the Poisson distribution", Biometrika 28, 437–442.
 * The limits use the identity P(N ≥ n | µ) = P(χ²(2n) ≤ 2µ) between the Poisson and the
 * chi-square distributions, so they are exact in the sense of guaranteeing at least the nominal
 * coverage (they are conservative for a discrete count).
 */
import { requireNumber } from '../errors.ts';
import { chiSquareQuantile } from './chi-square.ts';

/** Largest count accepted (2n + 2 must stay within the chi-square degrees-of-freedom range). */
export const GARWOOD_MAX_COUNT = 1e8;

export interface PoissonInterval {
  /** Lower confidence limit of the Poisson mean µ (same basis as the count: per wafer, per sample). */
  lower: number;
  /** Upper confidence limit of the Poisson mean µ. */
  upper: number;
  /** The confidence level used, e.g. 0.95. */
  confidence: number;
}

function requireCount(fn: string, n: number): number {
  return requireNumber(fn, 'n', n, 'count', { min: 0, max: GARWOOD_MAX_COUNT, integer: true });
}

function requireConfidence(fn: string, c: number): number {
  return requireNumber(fn, 'confidence', c, '', { min: 0, max: 1, minExclusive: true, maxExclusive: true });
}

/**
 * Garwood exact two-sided confidence interval for a Poisson mean from one observed count n.
 *
 * Formula (α = 1 − confidence):
 *   lower = ½ χ²(α/2; 2n)       (0 when n = 0)
 *   upper = ½ χ²(1 − α/2; 2n + 2)
 * where χ²(p; k) is the chi-square quantile.
 *
 * @param n observed count, an integer 0 ≤ n ≤ 10⁸
 * @param confidence two-sided confidence level, 0 < confidence < 1 (default 0.95)
 * @returns { lower, upper, confidence } for the mean count µ
 * @throws ModelInputError when n is not a non-negative integer in range, or confidence ∉ (0, 1)
 * @example garwoodInterval(10) // { lower: 4.7954, upper: 18.3904, confidence: 0.95 } (rounded)
 */
export function garwoodInterval(n: number, confidence = 0.95): PoissonInterval {
  requireCount('garwoodInterval', n);
  requireConfidence('garwoodInterval', confidence);
  const alpha = 1 - confidence;
  const lower = n === 0 ? 0 : 0.5 * chiSquareQuantile(alpha / 2, 2 * n);
  const upper = 0.5 * chiSquareQuantile(1 - alpha / 2, 2 * n + 2);
  return { lower, upper, confidence };
}

/**
 * One-sided exact upper confidence limit for a Poisson mean from one observed count n:
 * the µ_U with P(N ≤ n | µ_U) = 1 − confidence.
 *
 * Formula: µ_U = ½ χ²(confidence; 2n + 2) (Garwood 1936). For n = 0 this is −ln(1 − confidence),
 * e.g. 2.9957 at 95 % (the "rule of three").
 *
 * @param n observed count, an integer 0 ≤ n ≤ 10⁸
 * @param confidence one-sided confidence level, 0 < confidence < 1 (default 0.95)
 * @returns the upper limit of the mean count µ
 * @throws ModelInputError when n is not a non-negative integer in range, or confidence ∉ (0, 1)
 * @example poissonUpperOneSided(0, 0.95) // 2.995732273553991
 */
export function poissonUpperOneSided(n: number, confidence = 0.95): number {
  requireCount('poissonUpperOneSided', n);
  requireConfidence('poissonUpperOneSided', confidence);
  return 0.5 * chiSquareQuantile(confidence, 2 * n + 2);
}
