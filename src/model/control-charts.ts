/**
 * Control charts for counts: the c chart, the u chart for unequal areas of opportunity (sampled
 * air volumes), and Laney's u′ chart for overdispersed counts; run rules that flag points.
 *
 * Sources: NIST/SEMATECH e-Handbook of Statistical Methods (2012), §6.3.3.1 "Counts control
 * charts" (c chart: c̄ ± 3√c̄; u chart: ū ± 3√(ū/nᵢ)) and §6.3.2 (the Western Electric run rules)
 * [V]; D. B. Laney, "Improved control charts for attributes", Quality Engineering 14(4) (2002)
 * 531–537 (u′: z-scores zᵢ = (uᵢ − ū)/σ_uᵢ, σ_z = mean moving range of z / 1.128, limits
 * ū ± 3 σ_uᵢ σ_z) [V]. 1.128 is d₂ for subgroups of two (ASTM STP 15D; NIST §6.3.2).
 *
 * A negative lower limit is shown as 0 (counts cannot be negative), as the handbook does.
 */
import { finiteResult, ModelInputError, requireNumber } from './errors.ts';

/** Centre line and 3-sigma limits of one point. */
export interface ChartLimits {
  centre: number;
  lcl: number;
  ucl: number;
}

/**
 * c chart limits for counts in subgroups of equal size (NIST/SEMATECH e-Handbook §6.3.3.1).
 *
 *   UCL = c̄ + 3√c̄,   centre c̄,   LCL = max(0, c̄ − 3√c̄)
 *
 * c̄ the mean count per subgroup (dimensionless count). Valid for Poisson counts.
 *
 * @param meanCount c̄ ≥ 0
 * @returns { centre, lcl, ucl } in counts per subgroup
 * @throws ModelInputError when c̄ is negative or not finite
 * @example cChartLimits(16) // { centre: 16, lcl: 4, ucl: 28 }
 */
export function cChartLimits(meanCount: number): ChartLimits {
  const c = requireNumber('cChartLimits', 'meanCount', meanCount, '', { min: 0, max: 1e15 });
  const h = 3 * Math.sqrt(c);
  return { centre: c, lcl: Math.max(0, c - h), ucl: c + h };
}

/**
 * u chart limits for one subgroup with area of opportunity nᵢ (NIST/SEMATECH §6.3.3.1).
 *
 *   UCL = ū + 3√(ū/nᵢ),   centre ū,   LCL = max(0, ū − 3√(ū/nᵢ))
 *
 * ū the pooled rate Σcᵢ / Σnᵢ (counts per unit of opportunity); nᵢ the subgroup's opportunity in
 * the same unit (voidcast: the sampled air volume in m³, so ū is particles per m³).
 *
 * @param meanRate ū ≥ 0, counts per unit
 * @param exposure nᵢ > 0, units
 * @returns { centre, lcl, ucl } in counts per unit
 * @throws ModelInputError when ū is negative, nᵢ not > 0, or either is not finite
 * @example uChartLimits(2, 8) // { centre: 2, lcl: 0, ucl: 3.5 }
 */
export function uChartLimits(meanRate: number, exposure: number): ChartLimits {
  const fn = 'uChartLimits';
  const u = requireNumber(fn, 'meanRate', meanRate, 'per unit', { min: 0, max: 1e15 });
  const n = requireNumber(fn, 'exposure', exposure, 'unit', { min: 0, minExclusive: true, max: 1e15 });
  const h = finiteResult(fn, 3 * Math.sqrt(u / n));
  return { centre: u, lcl: Math.max(0, u - h), ucl: u + h };
}

/** Result of laneyUPrime. */
export interface LaneyUPrime {
  /** Pooled rate ū = Σc / Σn. */
  centre: number;
  /** σ_z: mean moving range of the z-scores / 1.128 (0 when every z is equal). */
  sigmaZ: number;
  /** z-scores zᵢ = (uᵢ − ū) / √(ū/nᵢ) (0 when ū = 0). */
  z: number[];
  /** Per point: ū ± 3 √(ū/nᵢ) σ_z, the lower limit at least 0. */
  lcl: number[];
  ucl: number[];
  /** Pearson's dispersion statistic X² = Σ zᵢ² and its degrees of freedom N − 1. */
  pearsonX2: number;
  degreesOfFreedom: number;
}

function requireCountsAndExposures(fn: string, counts: readonly number[], exposures: readonly number[]) {
  if (!Array.isArray(counts) || counts.length < 2)
    throw new ModelInputError(fn, 'counts', '', 'an array of at least 2 counts', counts);
  if (!Array.isArray(exposures) || exposures.length !== counts.length)
    throw new ModelInputError(fn, 'exposures', 'unit', `an array of ${counts.length} exposures`, exposures);
  const c = counts.map((v, i) => requireNumber(fn, `counts[${i}]`, v, '', { min: 0, max: 1e15 }));
  const n = exposures.map((v, i) =>
    requireNumber(fn, `exposures[${i}]`, v, 'unit', { min: 1e-12, minExclusive: false, max: 1e15 }),
  );
  return { c, n };
}

/**
 * Laney's u′ chart (Laney 2002, Quality Engineering 14(4) 531):
 *
 *   ū = Σcᵢ / Σnᵢ,   σ_uᵢ = √(ū/nᵢ),   zᵢ = (cᵢ/nᵢ − ū) / σ_uᵢ
 *   σ_z = (1/(N − 1)) Σ |zᵢ − zᵢ₋₁| / 1.128
 *   UCLᵢ = ū + 3 σ_uᵢ σ_z,   LCLᵢ = max(0, ū − 3 σ_uᵢ σ_z)
 *
 * σ_z > 1 widens the u chart's limits for counts more variable than Poisson (between-subgroup
 * variation the u chart mistakes for signals); σ_z = 1 gives the u chart. Also returns Pearson's
 * X² = Σ zᵢ² (≈ χ²(N − 1) for Poisson counts), which the audit uses to decide between u and u′.
 * With ū = 0 (no counts at all) every z is 0 and the limits collapse to 0.
 *
 * @param counts cᵢ ≥ 0, at least 2 subgroups
 * @param exposures nᵢ ≥ 1e-12 units, the same length
 * @throws ModelInputError for fewer than 2 subgroups, unequal lengths, a negative count or exposure
 * @example laneyUPrime([1, 3, 2, 10], [1, 1, 1, 1]) // ū 4, z [−1.5, −0.5, −1, 3], σ_z = (5.5/3)/1.128 = 1.6253, UCL 13.752
 */
export function laneyUPrime(counts: readonly number[], exposures: readonly number[]): LaneyUPrime {
  const fn = 'laneyUPrime';
  const { c, n } = requireCountsAndExposures(fn, counts, exposures);
  const N = c.length;
  let sc = 0;
  let sn = 0;
  for (let i = 0; i < N; i++) {
    sc += c[i]!;
    sn += n[i]!;
  }
  const u = finiteResult(fn, sc / sn, 'ū');
  const z = c.map((ci, i) => (u > 0 ? (ci / n[i]! - u) / Math.sqrt(u / n[i]!) : 0));
  let mr = 0;
  for (let i = 1; i < N; i++) mr += Math.abs(z[i]! - z[i - 1]!);
  const sigmaZ = finiteResult(fn, mr / (N - 1) / 1.128, 'σ_z');
  const lcl: number[] = [];
  const ucl: number[] = [];
  for (let i = 0; i < N; i++) {
    const h = finiteResult(fn, 3 * Math.sqrt(u / n[i]!) * sigmaZ, 'limit');
    lcl.push(Math.max(0, u - h));
    ucl.push(u + h);
  }
  const pearsonX2 = finiteResult(
    fn,
    z.reduce((a, b) => a + b * b, 0),
    'X²',
  );
  z.forEach((v, i) => {
    finiteResult(fn, v, `z[${i}]`);
  });
  return { centre: u, sigmaZ, z, lcl, ucl, pearsonX2, degreesOfFreedom: N - 1 };
}

/** The run rules of chartRuleFlags (Western Electric rules as in NIST/SEMATECH §6.3.2). */
export type RunRule = 'beyond-limit' | 'run-of-8-above' | 'run-of-8-below' | '2-of-3-beyond-2-sigma';

/**
 * Run rules on standardised points sᵢ = (xᵢ − centre) / σᵢ, where the 3-sigma limit is s = ±3
 * (for u′ charts σᵢ includes σ_z). Western Electric rules as listed by NIST/SEMATECH §6.3.2 [V]:
 *
 *   beyond-limit           |sᵢ| > 3 (above the upper or below the lower limit)
 *   2-of-3-beyond-2-sigma  2 of 3 consecutive points beyond 2 on the same side (flags the last)
 *   run-of-8-above/below   8 consecutive points on the same side of the centre (flags the 8th and later)
 *
 * A lower limit clipped at 0 is the caller's to honour: a point at 0 is never below it, so pass
 * sᵢ ≥ −3 for such points. A point exactly on the centre breaks a run.
 *
 * @param standardised sᵢ, finite numbers
 * @returns per point the rules it triggers
 * @throws ModelInputError when a value is not finite or the input not an array
 * @example chartRuleFlags([0, 3.5, 0]) // [[], ['beyond-limit'], []]
 */
export function chartRuleFlags(standardised: readonly number[]): RunRule[][] {
  const fn = 'chartRuleFlags';
  if (!Array.isArray(standardised))
    throw new ModelInputError(fn, 'standardised', '', 'an array of finite numbers', standardised);
  const s = standardised.map((v, i) => requireNumber(fn, `standardised[${i}]`, v, ''));
  const out: RunRule[][] = s.map(() => []);
  let runSide = 0;
  let runLen = 0;
  for (let i = 0; i < s.length; i++) {
    const v = s[i]!;
    if (Math.abs(v) > 3) out[i]!.push('beyond-limit');
    if (i >= 2) {
      for (const side of [1, -1]) {
        const w = [s[i - 2]!, s[i - 1]!, v].filter((x) => side * x > 2).length;
        if (w >= 2 && side * v > 2) out[i]!.push('2-of-3-beyond-2-sigma');
      }
    }
    const side = v > 0 ? 1 : v < 0 ? -1 : 0;
    if (side !== 0 && side === runSide) runLen++;
    else {
      runSide = side;
      runLen = side === 0 ? 0 : 1;
    }
    if (runLen >= 8) out[i]!.push(runSide > 0 ? 'run-of-8-above' : 'run-of-8-below');
  }
  return out;
}
