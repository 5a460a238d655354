/**
 * Fine size tables: a model function evaluated once on a log-spaced diameter grid and interpolated
 * per particle, so that tens of thousands of detected particles do not each call the model (whose
 * argument checks cost more than the formula). Orchestration only — the values are the model's.
 *
 * Grid: 256 points per decade from 10 nm to 100 µm (1025 points, step Δ = ln 10 / 256 = 0.0090 in
 * ln d). Interpolation is linear in log d:
 * - void radii: R(d) is a power law d^p on each side of the plate-regime crossover; linear
 *   interpolation of e^(p·ln d) over a step Δ errs by at most (pΔ)²/8 relative (p ≤ 1: ≤ 1.0·10⁻⁵,
 *   p ≤ 2: ≤ 4·10⁻⁵), and by ≤ |p₁ − p₂|·Δ/4 (≤ 0.2 % for |p₁ − p₂| ≤ 1) in the one cell holding the kink;
 * - survival curves: for a logistic in ln d of steepness k the error is at most
 *   k²·Δ²/32 ≈ 2.5·10⁻⁶·k² (k ≤ 50 → ≤ 0.006 absolute at the very steepest, ≤ 10⁻⁴ for k ≤ 5).
 * Diameters outside the grid take the nearest end value.
 * Bins: the spectrum grid's bin of a diameter, computed from the grid constants (edges belong to
 * the bin above, as src/model/spectrum.ts binIndexOf), clamped into the grid.
 */
import {
  SPECTRUM_BIN_COUNT,
  SPECTRUM_BINS_PER_DECADE,
  SPECTRUM_MAX_DIAMETER_M,
  SPECTRUM_MIN_DIAMETER_M,
} from '../model/spectrum.ts';

export const TABLE_PER_DECADE = 256;
const DECADES = Math.log10(SPECTRUM_MAX_DIAMETER_M / SPECTRUM_MIN_DIAMETER_M);
export const TABLE_POINTS = Math.round(DECADES * TABLE_PER_DECADE) + 1;

/** The grid's diameters, m. */
export const TABLE_DIAMETERS_M: Float64Array = Float64Array.from(
  { length: TABLE_POINTS },
  (_, i) => SPECTRUM_MIN_DIAMETER_M * 10 ** (i / TABLE_PER_DECADE),
);

export function sizeTable(f: (diameterM: number) => number): Float64Array {
  return TABLE_DIAMETERS_M.map(f);
}

function position(d: number): number {
  const u = Math.log10(d / SPECTRUM_MIN_DIAMETER_M) * TABLE_PER_DECADE;
  return u <= 0 ? 0 : Math.min(u, TABLE_POINTS - 1);
}

/** Interpolates a table linearly in log d at diameter d. */
export function interpLogLin(t: Float64Array, d: number): number {
  const u = position(d);
  const i = Math.min(Math.floor(u), TABLE_POINTS - 2);
  const w = u - i;
  return t[i]! + (t[i + 1]! - t[i]!) * w;
}

/** Spectrum bin of a diameter, clamped to 0…47. */
export function binOf(d: number): number {
  if (!(d > SPECTRUM_MIN_DIAMETER_M)) return 0;
  const k = Math.floor(Math.log10(d / SPECTRUM_MIN_DIAMETER_M) * SPECTRUM_BINS_PER_DECADE + 1e-12);
  return k >= SPECTRUM_BIN_COUNT ? SPECTRUM_BIN_COUNT - 1 : k;
}

/** Per-particle table cell, weight, spectrum bin and ln d of a diameter array, computed once and cached. */
export interface SizeIndex {
  cell: Uint16Array;
  weight: Float64Array;
  bin: Uint8Array;
  /** Natural logarithm of each diameter (in m), for sums such as the Hill estimator's Σ ln(x/x_m). */
  lnD: Float64Array;
  /** How many of the diameters fall in each spectrum bin. */
  counts: Float64Array;
}

const indexCache = new WeakMap<Float64Array, SizeIndex>();
const LN_MIN = Math.log(SPECTRUM_MIN_DIAMETER_M);
const TABLE_PER_LN = TABLE_PER_DECADE / Math.LN10;
const BIN_PER_CELL = SPECTRUM_BINS_PER_DECADE / TABLE_PER_DECADE;

/**
 * One logarithm per particle gives its table position u = log10(d/d_min)·256, its bin
 * ⌊u·12/256⌋ (with binOf's 10⁻¹² allowance at an edge) and ln d. Diameters outside the grid are
 * clamped as in `position` and `binOf`.
 */
export function sizeIndexOf(d: Float64Array): SizeIndex {
  const hit = indexCache.get(d);
  if (hit) return hit;
  const n = d.length;
  const cell = new Uint16Array(n);
  const weight = new Float64Array(n);
  const bin = new Uint8Array(n);
  const lnD = new Float64Array(n);
  const counts = new Float64Array(SPECTRUM_BIN_COUNT);
  const last = TABLE_POINTS - 1;
  for (let j = 0; j < n; j++) {
    const x = d[j]!;
    const ln = Math.log(x);
    lnD[j] = ln;
    if (!(x > SPECTRUM_MIN_DIAMETER_M)) {
      // cell 0, weight 0 and bin 0 (the arrays' initial values); as position() and binOf()
      counts[0]! += 1;
      continue;
    }
    const raw = (ln - LN_MIN) * TABLE_PER_LN;
    const u = raw <= 0 ? 0 : Math.min(raw, last);
    const i = Math.min(Math.floor(u), TABLE_POINTS - 2);
    cell[j] = i;
    weight[j] = u - i;
    const k = Math.floor(raw * BIN_PER_CELL + 1e-12);
    const b = k < 0 ? 0 : k >= SPECTRUM_BIN_COUNT ? SPECTRUM_BIN_COUNT - 1 : k;
    bin[j] = b;
    counts[b]! += 1;
  }
  const out = { cell, weight, bin, lnD, counts };
  indexCache.set(d, out);
  return out;
}
