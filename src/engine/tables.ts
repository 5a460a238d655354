/**
 * Fine size tables: a model function evaluated once on a log-spaced diameter grid and interpolated
 * per particle, so that tens of thousands of detected particles do not each call the model (whose
 * argument checks cost more than the formula). Orchestration only — the values are the model's.
 *
 * Grid: 256 points per decade from 10 nm to 100 µm (1025 points, step 0.9 % in d). Interpolation:
 * - log–log for void radii: R(d) is a power law on each side of the plate-regime crossover, so the
 *   interpolation is exact except in the one cell holding the crossover kink (≤ 0.1 % there);
 * - linear in log d for survival curves: for a logistic in ln d of steepness k the error is at most
 *   k²·(Δ ln d)²/32 ≈ 4·10⁻⁵·k² (k ≤ 50 → ≤ 0.1 absolute at the very steepest, ≤ 10⁻³ for k ≤ 5).
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

/** Interpolates a positive table log–log at diameter d. */
export function interpLogLog(t: Float64Array, d: number): number {
  const u = position(d);
  const i = Math.min(Math.floor(u), TABLE_POINTS - 2);
  const w = u - i;
  const a = t[i]!;
  const b = t[i + 1]!;
  if (a <= 0 || b <= 0) return a + (b - a) * w;
  return a * (b / a) ** w;
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

/** Per-particle table cell, weight and spectrum bin of a diameter array, computed once and cached. */
export interface SizeIndex {
  cell: Uint16Array;
  weight: Float64Array;
  bin: Uint8Array;
}

const indexCache = new WeakMap<Float64Array, SizeIndex>();

export function sizeIndexOf(d: Float64Array): SizeIndex {
  const hit = indexCache.get(d);
  if (hit) return hit;
  const n = d.length;
  const cell = new Uint16Array(n);
  const weight = new Float64Array(n);
  const bin = new Uint8Array(n);
  for (let j = 0; j < n; j++) {
    const u = position(d[j]!);
    const i = Math.min(Math.floor(u), TABLE_POINTS - 2);
    cell[j] = i;
    weight[j] = u - i;
    bin[j] = binOf(d[j]!);
  }
  const out = { cell, weight, bin };
  indexCache.set(d, out);
  return out;
}
