/**
 * From the channels of an airborne particle counter to a size spectrum on voidcast's grid.
 *
 * A light-scattering counter reports a few channels (typically 0.1, 0.2, 0.3, 0.5, 1, 5 µm),
 * either cumulative ("≥ d_i") or differential ("between d_i and d_{i+1}", the last one open:
 * "≥ d_last"). The risk chain needs counts in the 48 log-spaced bins of spectrum.ts. Between
 * channels the cumulative concentration is interpolated as a power law,
 *
 *   N(≥ d) = N_i · (d / d_i)^(−α_i)  for d_i ≤ d ≤ d_{i+1},   α_i = ln(N_i / N_{i+1}) / ln(d_{i+1} / d_i),
 *
 * the form of the ISO 14644-1:2015 class limits (C_n ∝ D^−2.08) and the usual description of
 * cleanroom aerosol between counter channels. Each grid bin receives the exact integral of that
 * piecewise power law over the part of the bin it covers, so the counts between two channels are
 * conserved exactly: spectrum total = N(≥ d_0) (plus whatever is extrapolated below d_0).
 *
 * Choices voidcast makes here (documented in docs/models.md):
 *  - Above the last channel: the open channel's N_last is spread from d_last to ceilingM
 *    (default 100 µm, the top of the grid) as a power law of slope aboveSlope, truncated at
 *    ceilingM and renormalised so that all N_last particles stay in the spectrum. Default slope:
 *    that of the last channel pair when it is finite and > 0, else ISO's 2.08.
 *  - Below the smallest channel: nothing, unless both belowSlope and floorM are given; then
 *    N(≥ d) = N_0 (d/d_0)^(−belowSlope) for floorM ≤ d < d_0. Either way a flag says what was done.
 *  - A zero channel has no power law (α = ∞). When N_{i+1} = 0 < N_i, the N_i particles between
 *    d_i and d_{i+1} are spread as a power law truncated at d_{i+1}, with the slope of the nearest
 *    finite, positive pair below (else 2.08), and a flag names the channel. Never NaN.
 *  - Reading the spectrum back at a channel size that falls inside a bin (cumulativeAbove) uses
 *    the grid's within-bin log-uniform assumption, so it returns N_i only to within about 1 %
 *    (exactly when d_i is a bin edge, e.g. 0.1 µm and 1 µm).
 */
import { finiteResult, ModelInputError, requireNumber } from './errors.ts';
import {
  SPECTRUM_BIN_COUNT,
  SPECTRUM_EDGES_M,
  SPECTRUM_MAX_DIAMETER_M,
  SPECTRUM_MIN_DIAMETER_M,
  type Spectrum,
  zeroSpectrum,
} from './spectrum.ts';

/** ISO 14644-1:2015's nominal slope of the cumulative size distribution (the exponent 2.08). */
export const ISO_NOMINAL_SLOPE = 2.08;
const SLOPE_RANGE = { min: 0, max: 10 } as const;

/**
 * Slope of a power-law cumulative distribution through two channels.
 *
 *   α = ln(N_1 / N_2) / ln(d_2 / d_1)        so that N(≥ d) ∝ d^(−α)
 *
 * @param n1 cumulative count or concentration at the smaller size, > 0 (any basis, same as n2)
 * @param d1M the smaller size, m, > 0
 * @param n2 cumulative value at the larger size, > 0 and ≤ n1 (a zero channel has no power law)
 * @param d2M the larger size, m, > d1M
 * @returns α (dimensionless, ≥ 0)
 * @throws ModelInputError for non-positive or non-finite values, n2 > n1, or d2M ≤ d1M
 * @example twoChannelSlope(1000, 1e-7, 237, 2e-7) // 2.077 (ISO class 3 at 0.1 and 0.2 µm)
 */
export function twoChannelSlope(n1: number, d1M: number, n2: number, d2M: number): number {
  const fn = 'twoChannelSlope';
  const a = requireNumber(fn, 'n1', n1, '', { min: 0, minExclusive: true });
  const d1 = requireNumber(fn, 'd1M', d1M, 'm', { min: 0, minExclusive: true });
  const b = requireNumber(fn, 'n2', n2, '', { min: 0, minExclusive: true, max: a });
  const d2 = requireNumber(fn, 'd2M', d2M, 'm', { min: d1, minExclusive: true });
  return finiteResult(fn, Math.log(a / b) / Math.log(d2 / d1));
}

/** Input of spectrumFromChannels. */
export interface ChannelReading {
  /** Channel thresholds d_i in m, strictly increasing, ≥ 10 nm and < ceilingM. */
  channelsM: readonly number[];
  /** One value per channel, finite and ≥ 0, on any basis (per m³, counts per sample, …). */
  values: readonly number[];
  /** 'cumulative': values[i] = N(≥ d_i). 'differential': values[i] = count in [d_i, d_{i+1}), the last ≥ d_last. */
  mode: 'cumulative' | 'differential';
  /** Slope used below the smallest channel (0–10); only together with floorM. */
  belowSlope?: number;
  /** Smallest size to extrapolate down to, m, ≥ 10 nm and < d_0; only together with belowSlope. */
  floorM?: number;
  /** Slope of the open top channel (0–10); default: the last pair's slope, or 2.08. */
  aboveSlope?: number;
  /** Largest size of the open top channel, m, > d_last and ≤ 100 µm; default 100 µm. */
  ceilingM?: number;
}

/** Result of spectrumFromChannels. */
export interface ChannelSpectrum {
  /** Counts per bin, on the basis of the input values. */
  spectrum: Spectrum;
  /** What was assumed, one line each, "code: detail" (codes: zero-channel, above-extrapolated, below-extrapolated, below-empty). */
  flags: string[];
  /** Power-law slope of each channel pair (length channels − 1); null where the upper channel is 0. */
  fittedSlopes: (number | null)[];
  /** The slope used above the last channel (null when N_last = 0, nothing placed). */
  aboveSlope: number | null;
  /** The slope used below the first channel (null when not extrapolated). */
  belowSlope: number | null;
  /** The cumulative values N(≥ d_i) the spectrum was built from (differential input summed). */
  cumulative: number[];
}

/**
 * Adds to `out` the counts of a distribution on [lo, hi): `between(a, b)` must return the count
 * in [a, b] for lo ≤ a < b ≤ hi. Each grid bin gets the part of [lo, hi) it overlaps.
 */
function place(out: Spectrum, lo: number, hi: number, between: (a: number, b: number) => number): void {
  for (let k = 0; k < SPECTRUM_BIN_COUNT; k++) {
    const a = Math.max(SPECTRUM_EDGES_M[k]!, lo);
    const b = Math.min(SPECTRUM_EDGES_M[k + 1]!, hi);
    if (b > a) out[k]! += Math.max(between(a, b), 0);
  }
}

/**
 * Fraction of a power law N(≥ d) ∝ d^(−β), truncated to [lo, hi], that lies in [a, b].
 * β = 0 is the log-uniform limit.
 */
function truncatedFraction(beta: number, lo: number, hi: number, a: number, b: number): number {
  if (beta === 0) return Math.log(b / a) / Math.log(hi / lo);
  const r = (x: number) => (x / lo) ** -beta;
  return (r(a) - r(b)) / (1 - r(hi));
}

const fmtUm = (m: number) => `${Number((m * 1e6).toPrecision(4))} µm`;
const fmtSlope = (s: number) => String(Number(s.toFixed(3)));
const fmtCount = (n: number) => String(Number(n.toPrecision(4)));

/**
 * Size spectrum from counter channels (power-law interpolation of the cumulative concentration).
 *
 * Formula between channels: N(≥ d) = N_i (d/d_i)^(−α_i), α_i = ln(N_i/N_{i+1}) / ln(d_{i+1}/d_i);
 * bin k receives N(≥ max(e_k, d_i)) − N(≥ min(e_{k+1}, d_{i+1})) from every segment it overlaps.
 * Open top and the optional extrapolation below: see the module comment. Differential values are
 * summed from the top into cumulative ones first (N_i = Σ_{j ≥ i} n_j).
 *
 * Source of the form: the power-law size distribution of ISO 14644-1:2015 (exponent 2.08); the
 * interpolation between channels and the extrapolation rules are voidcast's modelling choices.
 * Validity: the grid, 10 nm – 100 µm; channel data from one sample or one averaged sample set.
 *
 * @param reading channel sizes (m), values, mode, optional belowSlope + floorM, aboveSlope, ceilingM
 * @returns spectrum (same basis as values), flags, fitted pair slopes, slopes used, cumulative values
 * @throws ModelInputError for a ragged or empty reading, sizes not strictly increasing or off the
 *   grid, negative or non-finite values, a cumulative reading that rises with size, belowSlope
 *   without floorM (or the reverse), slopes outside 0–10, floor/ceiling outside their ranges
 * @example
 *   spectrumFromChannels({ channelsM: [1e-7, 2e-7], values: [1000, 237], mode: 'cumulative' })
 *   // fittedSlopes [2.077]; total 1000; flags: above-extrapolated (slope 2.077 to 100 µm), below-empty
 */
export function spectrumFromChannels(reading: ChannelReading): ChannelSpectrum {
  const fn = 'spectrumFromChannels';
  if (reading === null || typeof reading !== 'object')
    throw new ModelInputError(fn, 'reading', '', 'an object {channelsM, values, mode}', reading);
  const { channelsM, values } = reading;
  if (!Array.isArray(channelsM) || channelsM.length === 0)
    throw new ModelInputError(fn, 'channelsM', 'm', 'a non-empty array of channel sizes', channelsM);
  if (!Array.isArray(values) || values.length !== channelsM.length)
    throw new ModelInputError(
      fn,
      'values',
      '',
      `an array of ${channelsM.length} values (one per channel)`,
      values,
    );
  const mode = reading.mode;
  if (mode !== 'cumulative' && mode !== 'differential')
    throw new ModelInputError(fn, 'mode', '', 'one of cumulative, differential', mode);

  const ceiling = requireNumber(fn, 'ceilingM', reading.ceilingM ?? SPECTRUM_MAX_DIAMETER_M, 'm', {
    min: SPECTRUM_MIN_DIAMETER_M,
    max: SPECTRUM_MAX_DIAMETER_M,
  });
  const d = channelsM.map((x, i) =>
    requireNumber(fn, `channelsM[${i}]`, x, 'm', {
      min: i === 0 ? SPECTRUM_MIN_DIAMETER_M : channelsM[i - 1]!,
      minExclusive: i > 0,
      max: ceiling,
      maxExclusive: true,
    }),
  );
  const raw = values.map((v, i) => requireNumber(fn, `values[${i}]`, v, '', { min: 0 }));
  const k = d.length;

  // Cumulative N(≥ d_i): as given, or differential channels summed from the top.
  const N = mode === 'cumulative' ? raw.slice() : raw.map(() => 0);
  if (mode === 'differential') for (let i = k - 1; i >= 0; i--) N[i] = raw[i]! + (i + 1 < k ? N[i + 1]! : 0);
  for (let i = 1; i < k; i++)
    if (N[i]! > N[i - 1]!)
      throw new ModelInputError(
        fn,
        `values[${i}]`,
        '',
        `≤ values[${i - 1}] = ${N[i - 1]} (a cumulative reading cannot rise with size)`,
        N[i],
      );

  const below = reading.belowSlope;
  const floor = reading.floorM;
  if ((below === undefined) !== (floor === undefined))
    throw new ModelInputError(
      fn,
      below === undefined ? 'belowSlope' : 'floorM',
      below === undefined ? '' : 'm',
      'given together with ' + (below === undefined ? 'floorM' : 'belowSlope') + ' (both or neither)',
      below === undefined ? below : floor,
    );
  const belowSlope = below === undefined ? null : requireNumber(fn, 'belowSlope', below, '', SLOPE_RANGE);
  const floorM =
    floor === undefined
      ? null
      : requireNumber(fn, 'floorM', floor, 'm', {
          min: SPECTRUM_MIN_DIAMETER_M,
          max: d[0]!,
          maxExclusive: true,
        });
  const aboveGiven =
    reading.aboveSlope === undefined
      ? null
      : requireNumber(fn, 'aboveSlope', reading.aboveSlope, '', SLOPE_RANGE);

  const out = zeroSpectrum();
  const flags: string[] = [];
  const fittedSlopes: (number | null)[] = [];
  for (let i = 0; i + 1 < k; i++)
    fittedSlopes.push(N[i + 1]! > 0 ? Math.log(N[i]! / N[i + 1]!) / Math.log(d[i + 1]! / d[i]!) : null);

  // Nearest finite, positive pair slope at or below pair j (used where a power law is missing).
  const slopeBelow = (j: number): { slope: number; from: string } => {
    for (let p = j; p >= 0; p--) {
      const s = fittedSlopes[p];
      if (s !== null && s !== undefined && s > 0)
        return { slope: s, from: `pair ${fmtUm(d[p]!)}–${fmtUm(d[p + 1]!)}` };
    }
    return { slope: ISO_NOMINAL_SLOPE, from: 'ISO 14644-1 nominal' };
  };

  // Between channels.
  for (let i = 0; i + 1 < k; i++) {
    const lo = d[i]!;
    const hi = d[i + 1]!;
    const ni = N[i]!;
    const alpha = fittedSlopes[i];
    if (ni === 0 || ni === N[i + 1]!) continue; // nothing between these channels
    if (alpha !== null && alpha !== undefined) {
      place(out, lo, hi, (a, b) => ni * ((a / lo) ** -alpha - (b / lo) ** -alpha));
    } else {
      const { slope, from } = slopeBelow(i - 1);
      place(out, lo, hi, (a, b) => ni * truncatedFraction(slope, lo, hi, a, b));
      flags.push(
        `zero-channel: ≥ ${fmtUm(hi)} is 0, so the ${fmtCount(ni)} between ${fmtUm(lo)} and ${fmtUm(hi)} are spread ` +
          `with slope ${fmtSlope(slope)} (${from}) truncated at ${fmtUm(hi)}`,
      );
    }
  }

  // The open top channel.
  const nTop = N[k - 1]!;
  const dTop = d[k - 1]!;
  let aboveSlope: number | null = null;
  if (nTop > 0) {
    let from: string;
    if (aboveGiven !== null) {
      aboveSlope = aboveGiven;
      from = 'given';
    } else {
      const last = k >= 2 ? fittedSlopes[k - 2] : null;
      if (last !== null && last !== undefined && last > 0) {
        aboveSlope = last;
        from = 'last channel pair';
      } else {
        aboveSlope = ISO_NOMINAL_SLOPE;
        from =
          k >= 2
            ? 'ISO 14644-1 nominal; the last pair has no positive slope'
            : 'ISO 14644-1 nominal; one channel';
      }
    }
    const s = aboveSlope;
    place(out, dTop, ceiling, (a, b) => nTop * truncatedFraction(s, dTop, ceiling, a, b));
    flags.push(
      `above-extrapolated: the ${fmtCount(nTop)} ≥ ${fmtUm(dTop)} are spread up to ${fmtUm(ceiling)} with slope ` +
        `${fmtSlope(s)} (${from}), truncated so that none are lost`,
    );
  }

  // Below the smallest channel.
  if (belowSlope !== null && floorM !== null) {
    const n0 = N[0]!;
    const d0 = d[0]!;
    place(out, floorM, d0, (a, b) => n0 * ((a / d0) ** -belowSlope - (b / d0) ** -belowSlope));
    const added = n0 * ((floorM / d0) ** -belowSlope - 1);
    flags.push(
      `below-extrapolated: ${fmtCount(added)} added between ${fmtUm(floorM)} and ${fmtUm(d0)} ` +
        `with slope ${fmtSlope(belowSlope)} — not measured`,
    );
  } else {
    flags.push(
      `below-empty: nothing placed below the smallest channel ${fmtUm(d[0]!)} (no belowSlope and floorM)`,
    );
  }

  for (let b = 0; b < SPECTRUM_BIN_COUNT; b++)
    if (!Number.isFinite(out[b]!))
      throw new ModelInputError(fn, 'values', '', 'values whose extrapolation stays finite', values);

  return { spectrum: out, flags, fittedSlopes, aboveSlope, belowSlope, cumulative: N };
}
