/**
 * Size spectrum: expected particle counts in fixed log-spaced diameter bins.
 *
 * Every source in the risk chain (the particles a scan detected, the tail below its threshold,
 * a tool's adders, the deposition during a wait) is one `Spectrum`. Sources add bin by bin, a
 * clean multiplies bin by bin by its survival, and every downstream figure is a sum over bins,
 * so the chain stays linear in particle densities and attribution to a source is exact.
 *
 * The grid (a modelling choice of voidcast, see docs/models.md):
 *   48 bins, 12 per decade, from d = 10 nm to d = 100 µm (diameters, SI metres).
 *   edge_i = 10 nm · 10^(i/12), i = 0…48;  centre_i = √(edge_i · edge_{i+1}) (geometric).
 * 12 bins per decade keeps a bin narrower than 21 % in diameter, which is below the sizing
 * uncertainty of a light-scattering counter or scanner, and 10 nm – 100 µm spans every size a
 * bonding line measures (scan thresholds 26–65 nm, counter channels 0.1–5 µm) with margin.
 *
 * Within a bin the count is taken as uniform in log d; that is what a partial-bin cumulative
 * uses, and a size-dependent factor is evaluated at the bin's geometric centre.
 *
 * What a bin's number means (per wafer, per m², per m³ of air) is the caller's basis and is
 * named where a spectrum is stored or passed (`perWafer`, `perM2`, `perM3`).
 */
import { ModelInputError, requireNumber, requirePositive } from './errors.ts';

export const SPECTRUM_BINS_PER_DECADE = 12;
export const SPECTRUM_MIN_DIAMETER_M = 10e-9;
export const SPECTRUM_MAX_DIAMETER_M = 100e-6;
export const SPECTRUM_BIN_COUNT = 48;

/** A size spectrum: SPECTRUM_BIN_COUNT expected counts, one per bin, smallest size first. */
export type Spectrum = Float64Array;

/** The 49 bin edges in metres. */
export const SPECTRUM_EDGES_M: Float64Array = Float64Array.from(
  { length: SPECTRUM_BIN_COUNT + 1 },
  (_, i) => SPECTRUM_MIN_DIAMETER_M * 10 ** (i / SPECTRUM_BINS_PER_DECADE),
);

/** The 48 geometric bin centres in metres. */
export const SPECTRUM_CENTRES_M: Float64Array = Float64Array.from({ length: SPECTRUM_BIN_COUNT }, (_, i) =>
  Math.sqrt(SPECTRUM_EDGES_M[i]! * SPECTRUM_EDGES_M[i + 1]!),
);

/** An all-zero spectrum. */
export function zeroSpectrum(): Spectrum {
  return new Float64Array(SPECTRUM_BIN_COUNT);
}

/** Checks that `s` is a spectrum on the grid with finite, non-negative bins. */
export function requireSpectrum(fn: string, param: string, s: unknown): Spectrum {
  if (!(s instanceof Float64Array) || s.length !== SPECTRUM_BIN_COUNT)
    throw new ModelInputError(fn, param, '', `a Float64Array of ${SPECTRUM_BIN_COUNT} bins`, s);
  for (let i = 0; i < s.length; i++) {
    const v = s[i]!;
    if (!Number.isFinite(v) || v < 0)
      throw new ModelInputError(fn, `${param}[${i}]`, 'count', '≥ 0 and finite', v);
  }
  return s;
}

/** Index of the bin that contains diameter `dM` (edges belong to the bin above); −1 below, 48 above the grid. */
export function binIndexOf(dM: number): number {
  requirePositive('binIndexOf', 'dM', dM, 'm');
  if (dM < SPECTRUM_MIN_DIAMETER_M) return -1;
  if (dM >= SPECTRUM_MAX_DIAMETER_M) return SPECTRUM_BIN_COUNT;
  const i = Math.floor(Math.log10(dM / SPECTRUM_MIN_DIAMETER_M) * SPECTRUM_BINS_PER_DECADE + 1e-12);
  return Math.min(Math.max(i, 0), SPECTRUM_BIN_COUNT - 1);
}

/** Bin-wise sum of any number of spectra. */
export function addSpectra(...spectra: Spectrum[]): Spectrum {
  const out = zeroSpectrum();
  spectra.forEach((s, k) => {
    requireSpectrum('addSpectra', `spectra[${k}]`, s);
    for (let i = 0; i < SPECTRUM_BIN_COUNT; i++) out[i]! += s[i]!;
  });
  return out;
}

/** Every bin multiplied by `factor` (≥ 0). */
export function scaleSpectrum(s: Spectrum, factor: number): Spectrum {
  requireSpectrum('scaleSpectrum', 's', s);
  requireNumber('scaleSpectrum', 'factor', factor, '', { min: 0 });
  return s.map((v) => v * factor);
}

/**
 * Every bin multiplied by a size-dependent factor f(d) evaluated at the bin's geometric centre
 * (a clean's survival, a deposition velocity × time × area). f must return a finite value ≥ 0.
 */
export function multiplyBySize(s: Spectrum, f: (diameterM: number) => number): Spectrum {
  requireSpectrum('multiplyBySize', 's', s);
  const out = zeroSpectrum();
  for (let i = 0; i < SPECTRUM_BIN_COUNT; i++) {
    const k = f(SPECTRUM_CENTRES_M[i]!);
    if (!Number.isFinite(k) || k < 0)
      throw new ModelInputError('multiplyBySize', 'f(d)', '', '≥ 0 and finite', k);
    out[i] = s[i]! * k;
  }
  return out;
}

/** Total of all bins. */
export function spectrumTotal(s: Spectrum): number {
  requireSpectrum('spectrumTotal', 's', s);
  let t = 0;
  for (let i = 0; i < SPECTRUM_BIN_COUNT; i++) t += s[i]!;
  return t;
}

/**
 * Cumulative value at a size: the expected count of particles with diameter ≥ dM.
 * Whole bins above dM count fully; the bin containing dM counts by the fraction of its
 * log-width above dM (uniform in log d within a bin).
 */
export function cumulativeAbove(s: Spectrum, dM: number): number {
  requireSpectrum('cumulativeAbove', 's', s);
  requirePositive('cumulativeAbove', 'dM', dM, 'm');
  const k = binIndexOf(dM);
  if (k >= SPECTRUM_BIN_COUNT) return 0;
  if (k < 0) return spectrumTotal(s);
  let t = 0;
  for (let i = k + 1; i < SPECTRUM_BIN_COUNT; i++) t += s[i]!;
  const lo = SPECTRUM_EDGES_M[k]!;
  const hi = SPECTRUM_EDGES_M[k + 1]!;
  const frac = Math.log(hi / dM) / Math.log(hi / lo);
  return t + s[k]! * Math.min(Math.max(frac, 0), 1);
}

/**
 * Integral above a size of a size-dependent weight: Σ_bins s_i · w(centre_i) for the part of
 * each bin at or above dM (partial bin by log fraction). With w ≡ 1 this is cumulativeAbove.
 */
export function integrateAbove(s: Spectrum, dM: number, w: (diameterM: number) => number = () => 1): number {
  requireSpectrum('integrateAbove', 's', s);
  requirePositive('integrateAbove', 'dM', dM, 'm');
  let t = 0;
  for (let i = 0; i < SPECTRUM_BIN_COUNT; i++) {
    const lo = SPECTRUM_EDGES_M[i]!;
    const hi = SPECTRUM_EDGES_M[i + 1]!;
    if (hi <= dM) continue;
    const frac = lo >= dM ? 1 : Math.log(hi / dM) / Math.log(hi / lo);
    const wi = w(SPECTRUM_CENTRES_M[i]!);
    if (!Number.isFinite(wi) || wi < 0)
      throw new ModelInputError('integrateAbove', 'w(d)', '', '≥ 0 and finite', wi);
    t += s[i]! * frac * wi;
  }
  return t;
}

/**
 * A power-law spectrum: cumulative N(≥ d) = countAbove · (d / atDiameterM)^(−slope), placed
 * in the bins between fromM and toM (sizes outside carry nothing).
 */
export function powerLawSpectrum(opts: {
  countAbove: number;
  atDiameterM: number;
  slope: number;
  fromM: number;
  toM?: number;
}): Spectrum {
  const fn = 'powerLawSpectrum';
  if (typeof opts !== 'object' || opts === null)
    throw new ModelInputError(
      fn,
      'opts',
      '',
      'an object {countAbove, atDiameterM, slope, fromM, toM?}',
      opts,
    );
  const n0 = requireNumber(fn, 'countAbove', opts.countAbove, 'count', { min: 0 });
  const d0 = requirePositive(fn, 'atDiameterM', opts.atDiameterM, 'm');
  const a = requireNumber(fn, 'slope', opts.slope, '', { min: 0, max: 10 });
  const from = requireNumber(fn, 'fromM', opts.fromM, 'm', {
    min: SPECTRUM_MIN_DIAMETER_M,
    max: SPECTRUM_MAX_DIAMETER_M,
  });
  const to = requireNumber(fn, 'toM', opts.toM ?? SPECTRUM_MAX_DIAMETER_M, 'm', {
    min: from,
    max: SPECTRUM_MAX_DIAMETER_M,
  });
  const cum = (d: number) => n0 * (d / d0) ** -a;
  const out = zeroSpectrum();
  for (let i = 0; i < SPECTRUM_BIN_COUNT; i++) {
    const lo = Math.max(SPECTRUM_EDGES_M[i]!, from);
    const hi = Math.min(SPECTRUM_EDGES_M[i + 1]!, to);
    if (hi <= lo) continue;
    const v = cum(lo) - cum(hi);
    if (!Number.isFinite(v))
      throw new ModelInputError(fn, 'countAbove', 'count', 'a size that does not overflow', n0);
    out[i] = Math.max(v, 0);
  }
  return out;
}
