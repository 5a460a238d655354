/**
 * Confidence intervals for a binomial proportion: the Wilson score interval and the exact
 * Clopper–Pearson interval. Brown, Cai & DasGupta, "Interval estimation for a binomial
 * proportion", Statistical Science 16 (2001) 101–133, compare their coverage: Wilson stays close to
 * the nominal level on average; Clopper–Pearson never falls below it (conservative).
 */
import { ModelInputError, requireNumber } from '../errors.ts';
import { betaQuantile } from './beta.ts';
import { chiSquareQuantile } from './chi-square.ts';

export interface BinomialInterval {
  /** x / n. */
  estimate: number;
  lower: number;
  upper: number;
  confidence: number;
  method: 'wilson' | 'clopper-pearson';
}

function requireCounts(fn: string, x: number, n: number, confidence: number): void {
  requireNumber(fn, 'n', n, 'trials', { min: 1, max: 1e9, integer: true });
  requireNumber(fn, 'x', x, 'successes', { min: 0, integer: true });
  if (x > n) throw new ModelInputError(fn, 'x', 'successes', `an integer ≤ n = ${n}`, x);
  requireNumber(fn, 'confidence', confidence, '', { min: 0, max: 1, minExclusive: true, maxExclusive: true });
}

/**
 * Wilson score interval for a binomial proportion.
 *
 * Formula (Wilson, JASA 22 (1927) 209; Brown, Cai & DasGupta 2001, eq. 4), p̂ = x/n, z the
 * two-sided normal quantile (z² = χ²(confidence; 1)):
 *   centre = (p̂ + z²/2n) / (1 + z²/n),   half-width = z √(p̂(1 − p̂)/n + z²/4n²) / (1 + z²/n).
 * Valid for any n ≥ 1 and 0 ≤ x ≤ n; the limits stay inside [0, 1].
 *
 * @param x successes, integer 0 ≤ x ≤ n
 * @param n trials, integer 1 ≤ n ≤ 10⁹
 * @param confidence two-sided level, 0 < c < 1 (default 0.95)
 * @throws ModelInputError for bad counts or level
 * @example wilsonInterval(81, 263) // [0.2553, 0.3662] (Newcombe 1998, Table II, example a)
 */
export function wilsonInterval(x: number, n: number, confidence = 0.95): BinomialInterval {
  requireCounts('wilsonInterval', x, n, confidence);
  const z2 = chiSquareQuantile(confidence, 1);
  const p = x / n;
  const denom = 1 + z2 / n;
  const centre = (p + z2 / (2 * n)) / denom;
  const half = (Math.sqrt(z2) * Math.sqrt((p * (1 - p)) / n + z2 / (4 * n * n))) / denom;
  return {
    estimate: p,
    lower: x === 0 ? 0 : Math.max(0, centre - half),
    upper: x === n ? 1 : Math.min(1, centre + half),
    confidence,
    method: 'wilson',
  };
}

/**
 * Clopper–Pearson ("exact") interval for a binomial proportion.
 *
 * Formula (Clopper & Pearson, Biometrika 26 (1934) 404; Brown, Cai & DasGupta 2001, §2.1), a = 1 −
 * confidence, B(p; α, β) the beta quantile:
 *   lower = B(a/2; x, n − x + 1)   (0 when x = 0),
 *   upper = B(1 − a/2; x + 1, n − x)   (1 when x = n).
 * Its coverage is at least the nominal level for every true proportion.
 *
 * @param x successes, integer 0 ≤ x ≤ n
 * @param n trials, integer 1 ≤ n ≤ 10⁹
 * @param confidence two-sided level, 0 < c < 1 (default 0.95)
 * @throws ModelInputError for bad counts or level
 * @example clopperPearsonInterval(81, 263) // [0.2527, 0.3676] (Newcombe 1998, Table II, example a)
 */
export function clopperPearsonInterval(x: number, n: number, confidence = 0.95): BinomialInterval {
  requireCounts('clopperPearsonInterval', x, n, confidence);
  const a = 1 - confidence;
  return {
    estimate: x / n,
    lower: x === 0 ? 0 : betaQuantile(a / 2, x, n - x + 1),
    upper: x === n ? 1 : betaQuantile(1 - a / 2, x + 1, n - x),
    confidence,
    method: 'clopper-pearson',
  };
}
