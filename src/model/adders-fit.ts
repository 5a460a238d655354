/**
 * Adders per wafer pass of a tool, from the new defects each pass left (methods.md §2 of the
 * project reference): the mean count per pass with its exact Poisson interval, the size slope by
 * maximum likelihood, and the dispersion between passes.
 */
import { ModelInputError, requireNumber, requirePositive } from './errors.ts';
import { type CountDispersion, countDispersion } from './stats/dispersion.ts';
import { garwoodInterval } from './stats/garwood.ts';
import { hillFromSums } from './stats/hill.ts';

export interface AddersPerPassFit {
  /** k, the passes. */
  passes: number;
  /** Adders ≥ the reference size on each pass. */
  countsPerPass: number[];
  /** Σ n over the passes. */
  total: number;
  /** Mean adders per pass ≥ the reference size, Σn / k, and its interval (Garwood of Σn, / k). */
  meanPerPass: number;
  lowerPerPass: number;
  upperPerPass: number;
  referenceM: number;
  /** Hill MLE of the cumulative slope α over all adders ≥ the reference, its SE α/√n and exact interval; null with no adder or all at the reference. */
  slope: number | null;
  slopeSe: number | null;
  slopeLow: number | null;
  slopeHigh: number | null;
  /** Sizes below the reference left out (they are not counted either). */
  excluded: number;
  /** Dispersion of the per-pass counts (null for a single pass). */
  dispersion: CountDispersion | null;
  confidence: number;
  method: string;
}

const METHOD =
  'adders per pass: Σn/k with the Garwood interval of Σn divided by k (Garwood 1936); slope: Hill maximum likelihood with SE α/√n and exact interval (Clauset, Shalizi & Newman 2009, eqs. 3.1–3.2); dispersion: variance-to-mean ratio of the per-pass counts';

/**
 * Fits adders per pass from the sizes of the new defects of each pass.
 *
 * Formulas (methods.md §2): per-pass count nᵢ = adders with d ≥ d_ref; mean m = Σnᵢ / k with the
 * Garwood interval [½χ²(a/2; 2Σn), ½χ²(1 − a/2; 2Σn + 2)] / k (Garwood 1936; exact for a Poisson
 * total, not widened for overdispersion — the dispersion index says when it should be); slope
 * α̂ = N / Σ ln(d/d_ref) over all N adders ≥ d_ref (Hill; Clauset, Shalizi & Newman 2009, eq. 3.1),
 * SE α̂/√N (eq. 3.2) and the exact interval 2αS ~ χ²(2N); dispersion: countDispersion of the nᵢ.
 *
 * @param passes one array of new-defect diameters (m, each > 0) per pass
 * @param referenceM d_ref, the size the count is stated at and the slope starts from, m, > 0
 * @param confidence two-sided level of the intervals (default 0.95)
 * @throws ModelInputError for no pass, a bad size, reference or level
 * @example fitAddersPerPass([[50e-9, 100e-9], [60e-9]], 50e-9).meanPerPass // 1.5
 */
export function fitAddersPerPass(
  passes: readonly ArrayLike<number>[],
  referenceM: number,
  confidence = 0.95,
): AddersPerPassFit {
  const fn = 'fitAddersPerPass';
  if (!Array.isArray(passes) || passes.length === 0)
    throw new ModelInputError(fn, 'passes', '', 'an array of at least one pass', passes);
  const ref = requirePositive(fn, 'referenceM', referenceM, 'm');
  requireNumber(fn, 'confidence', confidence, '', { min: 0, max: 1, minExclusive: true, maxExclusive: true });
  const counts: number[] = [];
  let total = 0;
  let sumLog = 0;
  let excluded = 0;
  passes.forEach((sizes, p) => {
    if (!sizes || typeof sizes.length !== 'number')
      throw new ModelInputError(fn, `passes[${p}]`, 'm', 'an array of diameters', sizes);
    let c = 0;
    for (let i = 0; i < sizes.length; i++) {
      const d = requirePositive(fn, `passes[${p}][${i}]`, sizes[i], 'm');
      if (d < ref) {
        excluded++;
        continue;
      }
      c++;
      sumLog += Math.log(d / ref);
    }
    counts.push(c);
    total += c;
  });
  const k = passes.length;
  const g = garwoodInterval(total, confidence);
  const hill = total >= 1 && sumLog > 0 ? hillFromSums(total, sumLog, confidence) : null;
  return {
    passes: k,
    countsPerPass: counts,
    total,
    meanPerPass: total / k,
    lowerPerPass: g.lower / k,
    upperPerPass: g.upper / k,
    referenceM: ref,
    slope: hill?.alpha ?? null,
    slopeSe: hill?.se ?? null,
    slopeLow: hill?.lower ?? null,
    slopeHigh: hill?.upper ?? null,
    excluded,
    dispersion: k >= 2 ? countDispersion(counts) : null,
    confidence,
    method: METHOD,
  };
}
