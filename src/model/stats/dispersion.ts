/**
 * Overdispersion of counts between passes, wafers or samples: is the spread larger than a Poisson
 * law allows, and by how much (methods.md §2 of the project reference: "compare the variance of
 * per-pass counts to the mean; a negative-binomial fit gives the clustering parameter").
 */
import { ModelInputError, requireNumber } from '../errors.ts';
import { chiSquareSurvival } from './chi-square.ts';

export interface CountDispersion {
  /** Number of counts. */
  n: number;
  mean: number;
  /** Sample variance (divisor n − 1). */
  variance: number;
  /** Variance-to-mean ratio s²/m (1 for Poisson); null when the mean is 0. */
  index: number | null;
  /**
   * P(χ²(n − 1) ≥ (n − 1)·s²/m): the upper-tail p-value of the Poisson dispersion test (small:
   * overdispersed). null when the mean is 0.
   */
  pValue: number | null;
  /**
   * Negative-binomial clustering parameter by moments, k = m² / (s² − m) (variance m + m²/k);
   * null when s² ≤ m (no overdispersion seen: Poisson, k = ∞) or the mean is 0.
   */
  negativeBinomialK: number | null;
}

/**
 * Dispersion of a set of counts: variance-to-mean ratio, the Poisson dispersion test and the
 * negative-binomial clustering parameter by the method of moments.
 *
 * Formulas: m = Σ nᵢ / N, s² = Σ (nᵢ − m)² / (N − 1), index D = s²/m; under a Poisson law
 * (N − 1) D is approximately χ²(N − 1) (Fisher's index of dispersion test; Cochran, Biometrics 10
 * (1954) 417); the moment estimate of the negative-binomial k from Var = m + m²/k is
 * k = m²/(s² − m) (Anscombe, Biometrika 37 (1950) 358). The moment estimate is biased and very
 * uncertain for few counts — a note, not a fit: with fewer than about ten counts, read it only as
 * "clustered" vs "not".
 *
 * @param counts counts, each a finite number ≥ 0 (integers for the test to hold), at least 2
 * @throws ModelInputError for fewer than 2 counts or a bad count
 * @example countDispersion([2, 4, 6, 8]) // mean 5, variance 6.667, index 1.333, k 15
 */
export function countDispersion(counts: readonly number[]): CountDispersion {
  const fn = 'countDispersion';
  if (!Array.isArray(counts) || counts.length < 2)
    throw new ModelInputError(fn, 'counts', '', 'an array of at least 2 counts', counts);
  counts.forEach((c, i) => {
    requireNumber(fn, `counts[${i}]`, c, '', { min: 0 });
  });
  const n = counts.length;
  let sum = 0;
  for (const c of counts) sum += c;
  const mean = sum / n;
  let ss = 0;
  for (const c of counts) ss += (c - mean) ** 2;
  const variance = ss / (n - 1);
  if (mean === 0) return { n, mean, variance, index: null, pValue: null, negativeBinomialK: null };
  const index = variance / mean;
  return {
    n,
    mean,
    variance,
    index,
    pValue: chiSquareSurvival((n - 1) * index, n - 1),
    negativeBinomialK: variance > mean ? (mean * mean) / (variance - mean) : null,
  };
}
