/**
 * Display formats for the pages: numbers with their intervals, areas, dies, times. SI values
 * come in; the units a fab engineer reads (mm², %, h, UTC) go out. Display only.
 */
import { countBound } from '../../src/engine/format.ts';
import { fmtNum, fmtPct, groupDigits } from '../charts/svg.tsx';

export { fmtConc, fmtDiameter, fmtNum, fmtPct, groupDigits } from '../charts/svg.tsx';

/** A figure with its interval: "4.1 (2.3–6.8)". */
export interface EstimateLike {
  value: number;
  low: number;
  high: number;
  confidence: number;
}

export function fmtEstimate(
  e: EstimateLike | null | undefined,
  f: (v: number) => string = (v) => fmtNum(v),
): string {
  if (!e) return '—';
  return `${f(e.value)} (${f(e.low)}–${f(e.high)})`;
}

/**
 * An expected count with its interval, the bounds as whole counts ("7.53 (2–22)"): where the
 * quantity is a count (reportable voids, killed dies) an interval on it holds whole numbers only.
 * The rounding of the bounds is src/engine/format.ts countBound's (nearest, ties outward).
 */
export function fmtCountEstimate(
  e: EstimateLike | null | undefined,
  f: (v: number) => string = (v) => fmtNum(v),
): string {
  if (!e) return '—';
  return `${f(e.value)} (${fmtWhole(countBound(e.low, 'low'))}–${fmtWhole(countBound(e.high, 'high'))})`;
}

/** A bound of a count interval alone, as a whole count. */
export function fmtCountBound(v: number, side: 'low' | 'high'): string {
  return fmtWhole(countBound(v, side));
}

function fmtWhole(n: number): string {
  return Number.isFinite(n) ? groupDigits(n) : '—';
}

/** Confidence as words: "95 % interval". */
export function fmtConfidence(e: EstimateLike | null | undefined): string {
  return e ? `${Math.round(e.confidence * 100)} % interval` : '';
}

/** An area in m² shown in mm² (below 1 cm²) or cm². */
export function fmtAreaM2(a: number): string {
  if (!Number.isFinite(a)) return '—';
  if (a < 1e-4) return `${fmtNum(a * 1e6)} mm²`;
  return `${fmtNum(a * 1e4)} cm²`;
}

/** A count of dies with one decimal below 10. */
export function fmtDies(n: number): string {
  if (!Number.isFinite(n)) return '—';
  return n < 10 ? n.toFixed(n < 1 ? 2 : 1) : groupDigits(Math.round(n));
}

/** UTC time "2025-03-04 13:20 UTC". */
export function fmtUtc(ms: number | null | undefined): string {
  if (ms === null || ms === undefined || !Number.isFinite(ms)) return '—';
  const iso = new Date(ms).toISOString();
  return `${iso.slice(0, 10)} ${iso.slice(11, 16)} UTC`;
}

/** A duration in seconds as "2.5 h" or "35 min". */
export function fmtDurationS(s: number | null | undefined): string {
  if (s === null || s === undefined || !Number.isFinite(s)) return '—';
  if (s < 3600) return `${Math.round(s / 60)} min`;
  if (s < 48 * 3600) return `${(s / 3600).toFixed(1)} h`;
  return `${(s / 86400).toFixed(1)} d`;
}

/** A share 0…1 as a whole percentage. */
export function fmtShare(f: number): string {
  return fmtPct(f);
}
