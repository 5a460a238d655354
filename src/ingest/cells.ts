/**
 * Cell validators: a zod schema from a cell's text to its value (the single source of truth for
 * what a cell may hold, and for the words of the rule when it does not), plus an optional
 * hand-written fast path for the success case that must agree with the schema
 * (test/unit/ingest/cells.test.ts checks that on a table of hostile and random inputs).
 *
 * The pipeline trims every cell and turns a decimal comma into a point before a numeric cell sees it,
 * so cells know nothing of the file's dialect.
 */
import { z } from 'zod';
import { parseIsoTime, type Zone } from './time.ts';
import { CELL_FAIL, type Cell } from './types.ts';

export { CELL_FAIL };

/** Numbers as written in files: optional sign, digits with an optional point, optional exponent. */
export const NUMBER_TEXT = /^[+-]?(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][+-]?\d+)?$/;

export interface NumberRule {
  min?: number;
  max?: number;
  minExclusive?: boolean;
  integer?: boolean;
  /** Unit as written, for the message (e.g. `L`, `m²`). */
  unit?: string | null;
}

/** The words of a number rule, e.g. "must be a whole number ≥ 0" or "must be a number from 1 to 9 (m²)". */
export function numberRuleText(r: NumberRule): string {
  const what = r.integer ? 'a whole number' : 'a number';
  let range = '';
  if (r.min !== undefined && r.max !== undefined && !r.minExclusive) range = ` from ${r.min} to ${r.max}`;
  else {
    if (r.min !== undefined) range += ` ${r.minExclusive ? '>' : '≥'} ${r.min}`;
    if (r.max !== undefined) range += `${r.min !== undefined ? ' and' : ''} ≤ ${r.max}`;
  }
  return `must be ${what}${range}${r.unit ? ` (${r.unit})` : ''}`;
}

/**
 * Whole numbers above 2^53 − 1 are refused: a double holds every whole number only up to there
 * (IEEE 754 binary64, 53-bit significand), so a larger count would be stored as a different number.
 */
export const SAFE_WHOLE_TEXT = `must be at most ${Number.MAX_SAFE_INTEGER} (2^53 − 1, the largest whole number stored exactly)`;

function isSafeWhole(v: number, r: NumberRule): boolean {
  return !r.integer || Number.isSafeInteger(v);
}

function inRange(v: number, r: NumberRule): boolean {
  if (!Number.isFinite(v)) return false;
  if (r.integer && !Number.isInteger(v)) return false;
  if (r.min !== undefined && (r.minExclusive ? v <= r.min : v < r.min)) return false;
  if (r.max !== undefined && v > r.max) return false;
  return true;
}

/**
 * A character-level check equivalent to NUMBER_TEXT (no regex engine on the hot path).
 * Exported for the agreement test.
 */
function isDigitAt(s: string, k: number): boolean {
  const c = s.charCodeAt(k);
  return c >= 48 && c <= 57;
}

export function isNumberText(s: string): boolean {
  const n = s.length;
  let i = 0;
  if (n === 0) return false;
  const c0 = s.charCodeAt(0);
  if (c0 === 43 || c0 === 45) i++;
  let digits = 0;
  while (i < n && isDigitAt(s, i)) {
    i++;
    digits++;
  }
  if (i < n && s.charCodeAt(i) === 46) {
    i++;
    while (i < n && isDigitAt(s, i)) {
      i++;
      digits++;
    }
  }
  if (digits === 0) return false;
  if (i < n && (s.charCodeAt(i) === 101 || s.charCodeAt(i) === 69)) {
    i++;
    if (i < n && (s.charCodeAt(i) === 43 || s.charCodeAt(i) === 45)) i++;
    let e = 0;
    while (i < n && isDigitAt(s, i)) {
      i++;
      e++;
    }
    if (e === 0) return false;
  }
  return i === n;
}

/** A numeric cell with a range. */
export function numberCell(rule: NumberRule): Cell<number> {
  const text = numberRuleText(rule);
  const schema = z
    .string()
    .regex(NUMBER_TEXT, { error: text })
    .transform(Number)
    .refine((v) => inRange(v, rule), { error: text, abort: true })
    .refine((v) => isSafeWhole(v, rule), { error: SAFE_WHOLE_TEXT });
  const fast = (s: string): number | typeof CELL_FAIL => {
    // Plain digits (most cells: raw counts, durations) are read in the same pass that checks them;
    // anything else goes through the full check. 15 digits stay below 2^53, so the sum is exact.
    const n = s.length;
    let v = 0;
    if (n > 0 && n <= 15) {
      let i = 0;
      for (; i < n; i++) {
        const c = s.charCodeAt(i) - 48;
        if (c < 0 || c > 9) break;
        v = v * 10 + c;
      }
      if (i === n) return inRange(v, rule) ? v : CELL_FAIL;
    }
    if (!isNumberText(s)) return CELL_FAIL;
    v = Number(s);
    return inRange(v, rule) && isSafeWhole(v, rule) ? v : CELL_FAIL;
  };
  return {
    schema,
    numeric: true,
    fast,
    fastAt: (s, start, end) => {
      // Digits with at most one point inside them and at most 15 digits in all: the value is
      // m / 10^f with m < 10^15 < 2^53 and 10^f exact, so the one division is correctly rounded —
      // the same double Number() reads from the text (Clinger 1990, "How to read floating point
      // numbers accurately", the exact fast case). Anything else: the substring through `fast`.
      const len = end - start;
      if (len > 0 && len <= 16) {
        let m = 0;
        let point = -1;
        let i = start;
        for (; i < end; i++) {
          const c = s.charCodeAt(i);
          if (c >= 48 && c <= 57) m = m * 10 + (c - 48);
          else if (c === 46 && point === -1 && i > start && i < end - 1) point = i;
          else break;
        }
        if (i === end && (point === -1 ? len <= 15 : true)) {
          const v = point === -1 ? m : m / POW10[end - 1 - point]!;
          return inRange(v, rule) ? v : CELL_FAIL;
        }
      }
      return fast(s.slice(start, end));
    },
  };
}

/** Exact powers of ten 10^0 … 10^15 (every one is a double without rounding). */
const POW10 = [1, 10, 100, 1e3, 1e4, 1e5, 1e6, 1e7, 1e8, 1e9, 1e10, 1e11, 1e12, 1e13, 1e14, 1e15] as const;

export interface TextRule {
  maxLength?: number;
  pattern?: RegExp;
  /** Words for the pattern, e.g. "letters, digits and - _ . : /". */
  patternText?: string;
}

/** A non-empty text cell. */
export function textCell(rule: TextRule = {}): Cell<string> {
  const max = rule.maxLength ?? 200;
  let schema = z
    .string()
    .min(1, { error: 'must not be empty' })
    .max(max, { error: `must be at most ${max} characters` });
  if (rule.pattern)
    schema = schema.regex(rule.pattern, {
      error: `may contain only ${rule.patternText ?? 'allowed characters'}`,
    });
  const pattern = rule.pattern;
  return {
    schema,
    fast: (s) => (s.length >= 1 && s.length <= max && (!pattern || pattern.test(s)) ? s : CELL_FAIL),
  };
}

/** Identifiers: letters, digits and `- _ . : /`, starting with a letter or digit, ≤ 64 characters. */
export const ID_PATTERN = /^[A-Za-z0-9][A-Za-z0-9_.:/-]*$/;
export function idCell(): Cell<string> {
  return textCell({
    maxLength: 64,
    pattern: ID_PATTERN,
    patternText: 'letters, digits and - _ . : / (starting with a letter or digit)',
  });
}

/** Lower-cases and turns spaces and underscores into hyphens: "Open room" → "open-room". */
export function normaliseToken(s: string): string {
  return s
    .trim()
    .toLowerCase()
    .replace(/[\s_]+/g, '-');
}

/** One value of a closed list, matched after normaliseToken. */
export function enumCell<T extends string>(values: readonly T[]): Cell<T> {
  const set = new Set<string>(values);
  const text = `must be one of ${values.join(', ')}`;
  const schema = z
    .string()
    .transform(normaliseToken)
    .refine((v) => set.has(v), { error: text }) as unknown as z.ZodType<T, string>;
  return {
    schema,
    fast: (s) => {
      if (set.has(s)) return s as T;
      const v = normaliseToken(s);
      return set.has(v) ? (v as T) : CELL_FAIL;
    },
  };
}

/** A `|`-separated list of values of a closed list (empty list allowed as `none`). */
export function enumListCell<T extends string>(values: readonly T[]): Cell<T[]> {
  const set = new Set<string>(values);
  const text = `must be "none" or values from ${values.join(', ')} separated by |`;
  const split = (s: string): string[] | null => {
    const v = normaliseToken(s);
    if (v === 'none') return [];
    const parts = s.split('|').map(normaliseToken);
    if (parts.some((p) => !set.has(p))) return null;
    if (new Set(parts).size !== parts.length) return null;
    return parts;
  };
  const schema = z
    .string()
    .transform((s) => split(s))
    .refine((v) => v !== null, { error: text }) as unknown as z.ZodType<T[], string>;
  return {
    schema,
    fast: (s) => {
      const v = split(s);
      return v === null ? CELL_FAIL : (v as T[]);
    },
  };
}

/** An ISO 8601 date-time, to UTC ms; the zone (from the metadata) is used only when the text has no offset. */
export function timeCell(zone: Zone | null): Cell<number> {
  const schema = z.string().transform((s, ctx) => {
    const r = parseIsoTime(s, zone);
    if (!r.ok) {
      ctx.issues.push({ code: 'custom', message: r.rule, input: s });
      return z.NEVER;
    }
    return r.ms;
  });
  return {
    schema,
    fast: (s) => {
      const r = parseIsoTime(s, zone);
      return r.ok ? r.ms : CELL_FAIL;
    },
  };
}

/**
 * Runs a cell on (trimmed) text: the fast path when it accepts, else the schema.
 * Returns the value, or the rule broken (the schema's first message).
 */
export function runCell<T>(
  cell: Cell<T>,
  text: string,
): { ok: true; value: T } | { ok: false; rule: string } {
  if (cell.fast) {
    const v = cell.fast(text);
    if (v !== CELL_FAIL) return { ok: true, value: v as T };
  }
  const r = cell.schema.safeParse(text);
  if (r.success) return { ok: true, value: r.data };
  return { ok: false, rule: r.error.issues[0]?.message ?? 'is not valid' };
}
