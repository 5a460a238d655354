/** Plain-words number formatting for reasons and the terminal table (SI in, display units out). */

/** A count, or a limit on one: a whole number as it is ("12"), an expected value with decimals. */
export function fmtCount(x: number): string {
  if (x === 0) return '0';
  if (Number.isInteger(x)) return String(x);
  return fmtMean(x);
}

/**
 * A mean or expected count with decimals even where it happens to be whole ("3.00" beside its
 * interval "2.00–4.50"), so that a value and its bounds read alike.
 */
export function fmtMean(x: number): string {
  if (x === 0) return '0';
  if (Math.abs(x) >= 100) return x.toFixed(0);
  if (Math.abs(x) >= 10) return x.toFixed(1);
  if (Math.abs(x) >= 0.01) return x.toFixed(2);
  return x.toExponential(1);
}

/** A fraction as a percentage; below 0.01 % with two significant figures in plain decimals ("0.0071 %"). */
export function fmtPercent(fraction: number): string {
  const p = fraction * 100;
  if (p === 0) return '0 %';
  if (p >= 10) return `${p.toFixed(1)} %`;
  if (p >= 0.01) return `${p.toFixed(2)} %`;
  if (p >= 1e-6) return `${Number(p.toPrecision(2)).toFixed(Math.ceil(-Math.log10(p)) + 1)} %`;
  return `${p.toExponential(1)} %`;
}

export function fmtMm2(areaM2: number): string {
  const mm2 = areaM2 * 1e6;
  return `${mm2 >= 100 ? mm2.toFixed(0) : mm2 >= 1 ? mm2.toFixed(1) : mm2.toPrecision(2)} mm²`;
}

export function fmtSize(dM: number): string {
  // Three significant figures, trailing zeros after the decimal point dropped (500 nm stays 500).
  const trim = (v: number) => String(Number(v.toPrecision(3)));
  if (dM < 1e-6) return `${trim(dM * 1e9)} nm`;
  if (dM < 1e-3) return `${trim(dM * 1e6)} µm`;
  return `${trim(dM * 1e3)} mm`;
}

export function fmtHours(s: number): string {
  if (s < 3600) return `${(s / 60).toFixed(0)} min`;
  return `${(s / 3600).toFixed(1)} h`;
}

/**
 * A bound of an interval on a count (reportable voids, killed dies) as a whole count. The Monte
 * Carlo draws are whole counts plus the means of the smallest contributions
 * (src/engine/montecarlo.ts), and a quantile may fall between two draws, so a bound can be
 * fractional; the nearest whole count is shown, a tie going outward (a lower bound down, an upper
 * bound up), so rounding never narrows the interval by a half.
 */
export function countBound(x: number, side: 'low' | 'high'): number {
  if (!Number.isFinite(x)) return x;
  return side === 'low' ? Math.max(0, Math.ceil(x - 0.5)) : Math.floor(x + 0.5);
}

export function fmtCountBound(x: number, side: 'low' | 'high'): string {
  return Number.isFinite(x) ? String(countBound(x, side)) : '—';
}
