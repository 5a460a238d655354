/**
 * Deterministic text for the demo files: fixed-precision numbers, CSV cells, local times.
 *
 * Numbers are written with toFixed (exact decimal rounding of the binary value, the same on every
 * platform), so regenerating the demo reproduces the committed bytes.
 */
export const NL = '\n';

/** A number with at most `digits` decimals, trailing zeros dropped ("28.317", "45", "0.5"). */
export function num(v: number, digits: number): string {
  if (!Number.isFinite(v)) throw new Error(`cannot write ${v}`);
  let s = v.toFixed(digits);
  if (s.includes('.')) s = s.replace(/0+$/, '').replace(/\.$/, '');
  return s === '-0' ? '0' : s;
}

/** A CSV cell: quoted when it holds a delimiter, a quote or a line break. */
export function cell(v: string | number | null | undefined): string {
  if (v === null || v === undefined) return '';
  const s = String(v);
  return /[",\n\r]/.test(s) ? `"${s.replace(/"/g, '""')}"` : s;
}

export function csvLine(cells: (string | number | null | undefined)[]): string {
  return cells.map(cell).join(',') + NL;
}

const pad = (n: number, w = 2) => String(n).padStart(w, '0');

/** UTC instant as ISO 8601 with Z, seconds precision: 2026-10-18T01:31:00Z. */
export function isoUtc(ms: number): string {
  const d = new Date(ms);
  return `${d.getUTCFullYear()}-${pad(d.getUTCMonth() + 1)}-${pad(d.getUTCDate())}T${pad(d.getUTCHours())}:${pad(d.getUTCMinutes())}:${pad(d.getUTCSeconds())}Z`;
}

/** Wall time at a fixed offset (hours), minutes precision, no offset written: 2026-10-18T02:31. */
export function localMinute(ms: number, offsetH: number): string {
  const d = new Date(ms + offsetH * 3_600_000);
  return `${d.getUTCFullYear()}-${pad(d.getUTCMonth() + 1)}-${pad(d.getUTCDate())}T${pad(d.getUTCHours())}:${pad(d.getUTCMinutes())}`;
}

/** Wall time at a fixed offset with the offset written: 2026-10-18T02:31:00+01:00. */
export function isoOffset(ms: number, offsetH: number): string {
  const d = new Date(ms + offsetH * 3_600_000);
  const sign = offsetH < 0 ? '-' : '+';
  const oh = Math.floor(Math.abs(offsetH));
  const om = Math.round((Math.abs(offsetH) - oh) * 60);
  return `${d.getUTCFullYear()}-${pad(d.getUTCMonth() + 1)}-${pad(d.getUTCDate())}T${pad(d.getUTCHours())}:${pad(d.getUTCMinutes())}:${pad(d.getUTCSeconds())}${sign}${pad(oh)}:${pad(om)}`;
}

/** JSON with two-space indentation and a final newline (stable key order: insertion order). */
export function json(value: unknown): string {
  return `${JSON.stringify(value, null, 2)}\n`;
}
