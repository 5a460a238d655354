/**
 * The scans fast path's numbers (src/ingest/kinds/scan-rows.ts): a plain decimal scanned where it
 * stands in the text, its value, and its value shifted to metres — each the very double that Number()
 * and shiftDecimal give (test/unit/properties/import-scans-fast.test.ts checks it on generated texts).
 */
import { shiftDecimal } from './header-fields.ts';

/** 10^k for k = 0…22, each exact (10^22 is the largest power of ten a double holds exactly). */
const POW10: number[] = [1];
for (let k = 1; k <= 22; k++) POW10.push(POW10[k - 1]! * 10);

/**
 * The decimals scanned by scanNumber, three numbers each at 3k: the integer of its digits, its count
 * of fraction digits, its sign (1: negative). A typed array: its stores box no number.
 */
export const NUM = new Float64Array(9);

/**
 * Scans a plain decimal (`[+-]digits[.digits]`, at least one digit, at most 15 in all, no exponent,
 * no space) from `text[from]` up to `to` or the first `delim` character (a character code; -1 for
 * none) into NUM at 3k; returns where it stopped, or -1 for anything else. Such a text's value is
 * m / 10^p exactly rounded (both exact doubles: one correctly rounded division, as Number() rounds),
 * and its shortest text form has the same decimal value (15 digits round-trip through a double,
 * IEEE 754 §5.12.2), so shifting its exponent equals dividing by a larger power of ten — what
 * shiftDecimal computes through text.
 */
export function scanNumber(text: string, from: number, to: number, delim: number, k: number): number {
  let i = from;
  let neg = 0;
  if (i < to) {
    const c0 = text.charCodeAt(i);
    if (c0 === 45 || c0 === 43) {
      neg = c0 === 45 ? 1 : 0;
      i++;
    }
  }
  let m = 0;
  let digits = 0;
  let frac = -1;
  for (; i < to; i++) {
    const c = text.charCodeAt(i);
    if (c >= 48 && c <= 57) {
      m = m * 10 + (c - 48);
      digits++;
    } else if (c === 46 && frac === -1) frac = digits;
    else if (c === delim) break;
    else return -1;
  }
  if (digits === 0 || digits > 15) return -1;
  NUM[3 * k] = m;
  NUM[3 * k + 1] = frac === -1 ? 0 : digits - frac;
  NUM[3 * k + 2] = neg;
  return i;
}

/** The value of the decimal scanned into NUM at 3k. */
export function scannedValue(k: number): number {
  const m = NUM[3 * k]!;
  return (NUM[3 * k + 2] === 1 ? -m : m) / POW10[NUM[3 * k + 1]!]!;
}

/**
 * shiftDecimal(v, digits) for the decimal scanned into NUM at 3k (v = its value), without the text
 * round trip: the same double (see scanNumber), or shiftDecimal itself where its shortest form would
 * carry an exponent (|v| < 10^-6) or the power of ten would not be exact.
 */
export function shiftedOf(k: number, v: number, digits: number): number {
  const m = NUM[3 * k]!;
  if (m === 0) return 0; // shiftDecimal(±0) is +0 ("0e-3")
  const q = NUM[3 * k + 1]! + digits;
  if (q > 22 || Math.abs(v) < 1e-6) return shiftDecimal(v, digits);
  return (NUM[3 * k + 2] === 1 ? -m : m) / POW10[q]!;
}

/**
 * The fast path's reading of one number cell: its value and that value shifted by `digits` decimal
 * places, or null when the text is not a plain decimal it takes (the plain path reads it then).
 * Exported for the agreement test with Number() and shiftDecimal.
 */
export function readPlainDecimal(s: string, digits: number): { value: number; shifted: number } | null {
  if (scanNumber(s, 0, s.length, -1, 0) !== s.length) return null;
  const value = scannedValue(0);
  return { value, shifted: shiftedOf(0, value, digits) };
}
