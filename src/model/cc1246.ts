/**
 * Product cleanliness levels of IEST-STD-CC1246E (Institute of Environmental Sciences and
 * Technology, "Product Cleanliness Levels – Applications, Requirements, and Determination").
 *
 * A level L names a cumulative size distribution of particles on a surface:
 *
 *   log10 N = 0.926 · (log10² L − log10² x)
 *
 * N particles of size ≥ x per 0.1 m² (the standard's area basis since revision D), x the particle
 * size in µm, L the level (at x = L, N = 1). [V]
 *
 * Edge convention: sizes are in micrometres here (`diameterUm`) because the formula is defined
 * on x in µm — log10 x is not dimensionless otherwise. This module is the one place in the model
 * library where a non-SI unit enters a formula; callers convert with `mToUm` from units.ts.
 */
import { finiteResult, ModelInputError, requireNumber } from './errors.ts';

/** The distribution's slope constant (IEST-STD-CC1246E). */
export const CC1246_SLOPE = 0.926;

const LEVEL_RANGE = { min: 1, max: 1e4 } as const;
const SIZE_RANGE_UM = { min: 1, max: 1e4 } as const;

/**
 * Particles ≥ x per 0.1 m² at IEST-STD-CC1246E level L.
 *
 *   N = 10^{0.926 · (log10² L − log10² x)}
 *
 * @param level cleanliness level L, 1–10 000 (the standard tabulates levels 1 to 1000 [M])
 * @param diameterUm particle size x in µm, 1–10 000. The distribution is defined for x ≥ 1 µm:
 *   below 1 µm log10² x grows again and the formula would wrongly fall.
 * @returns N per 0.1 m² (N = 1 at x = L; below 1 for x > L)
 * @throws ModelInputError when level or diameterUm is out of range or not finite
 * @example cc1246CountPer01m2(100, 1) // 5058.2;  cc1246CountPer01m2(100, 50) // 10.74
 */
export function cc1246CountPer01m2(level: number, diameterUm: number): number {
  const fn = 'cc1246CountPer01m2';
  const l = requireNumber(fn, 'level', level, '', LEVEL_RANGE);
  const x = requireNumber(fn, 'diameterUm', diameterUm, 'µm', SIZE_RANGE_UM);
  return finiteResult(fn, 10 ** (CC1246_SLOPE * (Math.log10(l) ** 2 - Math.log10(x) ** 2)));
}

/** One observation for a level fit: particles ≥ diameterUm per 0.1 m². */
export interface Cc1246Observation {
  /** Threshold size x, µm, 1–10 000. */
  diameterUm: number;
  /** Particles ≥ x per 0.1 m², > 0 (a zero has no logarithm; drop it or use a detection-limit bound). */
  countPer01m2: number;
}

/** Result of fitCc1246Level. */
export interface Cc1246Fit {
  /** The fitted level L (≥ 1). */
  level: number;
  /** Root-mean-square residual in log10 N (decades) at the fitted level. */
  rmsLog10Residual: number;
  /** Number of observations used. */
  n: number;
  /** True when the unconstrained optimum lay below level 1 and the fit was clamped to L = 1. */
  atLowerBound: boolean;
}

/**
 * Fits an IEST-STD-CC1246E level to observed cumulative surface counts.
 *
 * Method (voidcast's choice, stated): least squares in log space with the standard's slope held
 * fixed, i.e. L minimises Σ_i [log10 N_i − 0.926 (log10² L − log10² x_i)]². The model is linear in
 * w = log10² L, so the optimum is closed-form:
 *
 *   ŵ = (1/n) Σ_i (log10 N_i / 0.926 + log10² x_i),    L = 10^{√ŵ}
 *
 * The objective is a convex quadratic in w, so when ŵ < 0 (counts below even level 1) the
 * constrained optimum is w = 0, L = 1, reported with atLowerBound = true. Equal weights per size
 * class; a count of N has a relative Poisson error 1/√N, so sparse large-size counts scatter more.
 *
 * @param observations at least one {diameterUm 1–10 000, countPer01m2 > 0}
 * @returns the level, the rms residual in decades, n, and whether the level was clamped at 1
 * @throws ModelInputError for an empty list, a size out of range, or a count ≤ 0 or not finite
 * @example fitCc1246Level([{ diameterUm: 1, countPer01m2: 5058 }, { diameterUm: 5, countPer01m2: 1785 }]).level // ≈ 100
 */
export function fitCc1246Level(observations: readonly Cc1246Observation[]): Cc1246Fit {
  const fn = 'fitCc1246Level';
  if (!Array.isArray(observations) || observations.length === 0)
    throw new ModelInputError(
      fn,
      'observations',
      '',
      'a non-empty array of {diameterUm, countPer01m2}',
      observations,
    );
  const pts = observations.map((o, i) => {
    if (o === null || typeof o !== 'object')
      throw new ModelInputError(fn, `observations[${i}]`, '', 'an object {diameterUm, countPer01m2}', o);
    const x = requireNumber(fn, `observations[${i}].diameterUm`, o.diameterUm, 'µm', SIZE_RANGE_UM);
    const n = requireNumber(fn, `observations[${i}].countPer01m2`, o.countPer01m2, 'per 0.1 m²', {
      min: 0,
      minExclusive: true,
    });
    return { v2: Math.log10(x) ** 2, y: Math.log10(n) };
  });
  const wHat = pts.reduce((s, p) => s + p.y / CC1246_SLOPE + p.v2, 0) / pts.length;
  const atLowerBound = wHat < 0;
  const w = Math.max(wHat, 0);
  const level = finiteResult(fn, 10 ** Math.sqrt(w), 'level');
  const ss = pts.reduce((s, p) => s + (p.y - CC1246_SLOPE * (w - p.v2)) ** 2, 0);
  return { level, rmsLog10Residual: Math.sqrt(ss / pts.length), n: pts.length, atLowerBound };
}
