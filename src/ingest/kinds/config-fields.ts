/**
 * zod field builders for the JSON configuration kinds (products, tools), with messages written for
 * the person fixing the file: each says what is expected, with the unit the key name carries.
 *
 * Units live in the key names (`thicknessUm`, `diameterMm`, `d50Nm`, `maxHours`): a value is a
 * plain JSON number in that unit; the normaliser turns it into SI.
 */
import { z } from 'zod';
import { mmToM, nmToM } from '../../model/units.ts';
import { SAFE_WHOLE_TEXT } from '../cells.ts';

export interface NumberRule {
  min?: number;
  max?: number;
  minExclusive?: boolean;
  maxExclusive?: boolean;
  integer?: boolean;
}

/** Text of a range, e.g. "> 0 mm", "between 0 and 1", "an integer ≥ 0". */
export function describeRange(r: NumberRule, unit: string): string {
  const u = unit ? ` ${unit}` : '';
  let core: string;
  if (r.min !== undefined && r.max !== undefined && !r.minExclusive && !r.maxExclusive)
    core = `between ${r.min} and ${r.max}${u}`;
  else {
    const parts: string[] = [];
    if (r.min !== undefined) parts.push(`${r.minExclusive ? '>' : '≥'} ${r.min}${u}`);
    if (r.max !== undefined) parts.push(`${r.maxExclusive ? '<' : '≤'} ${r.max}${u}`);
    core = parts.length ? parts.join(' and ') : `a number${u ? ` in${u}` : ''}`;
  }
  return r.integer ? `an integer ${core}` : core;
}

/** A JSON number in `unit`, within `rule`. */
export function num(unit: string, rule: NumberRule = {}): z.ZodType<number> {
  const expected = `must be a number ${describeRange(rule, unit)}`.replace('a number a number', 'a number');
  return (
    z
      .number({
        error: (iss) => (iss.input === undefined ? 'is required' : `${expected} (a JSON number, not text)`),
      })
      .refine(
        (v) =>
          Number.isFinite(v) &&
          (!rule.integer || Number.isInteger(v)) &&
          (rule.min === undefined || (rule.minExclusive ? v > rule.min : v >= rule.min)) &&
          (rule.max === undefined || (rule.maxExclusive ? v < rule.max : v <= rule.max)),
        { error: expected, abort: true },
      )
      // A whole number above 2^53 − 1 would be stored as another number (src/ingest/cells.ts).
      .refine((v) => !rule.integer || Number.isSafeInteger(v), { error: SAFE_WHOLE_TEXT })
  );
}

/** A non-empty JSON string (kept verbatim: names are data, never markup). */
export function text(what = 'a name'): z.ZodType<string> {
  return z
    .string({
      error: (iss) => (iss.input === undefined ? 'is required' : `must be ${what} in double quotes`),
    })
    .refine((s) => s.trim().length > 0, { error: `must be ${what}, not empty` });
}

/** A JSON object with exactly these fields (unknown fields are refused, never ignored). */
export function obj<T extends z.ZodRawShape>(shape: T, what: string) {
  return z.strictObject(shape, {
    error: (iss) => (iss.input === undefined ? 'is required' : `must be ${what}`),
  });
}

/** One of a fixed set of words. */
export function oneOf<const T extends readonly [string, ...string[]]>(options: T): z.ZodType<T[number]> {
  const list = options.map((o) => `"${o}"`).join(', ');
  return z.enum(options, {
    error: (iss) => (iss.input === undefined ? `is required (one of ${list})` : `must be one of ${list}`),
  }) as unknown as z.ZodType<T[number]>;
}

/** The `format` field of a configuration file: `voidcast <kind> 1`. */
export function formatField(kind: string): z.ZodType<string> {
  return z
    .string({
      error: (iss) =>
        iss.input === undefined ? `is required: "voidcast ${kind} 1"` : `must be "voidcast ${kind} 1"`,
    })
    .refine((s) => s === `voidcast ${kind} 1`, {
      error: (iss) => {
        const m = /^voidcast\s+([a-z-]+)\s+(\d+)$/i.exec(String(iss.input));
        if (m && m[1]!.toLowerCase() !== kind)
          return `this file declares kind "${m[1]}" but is imported as ${kind}`;
        if (m) return `format version ${m[2]} is not supported (this build reads version 1)`;
        return `must be "voidcast ${kind} 1"`;
      },
    });
}

/** Power-law level as written: count per wafer ≥ a diameter in nm, with its cumulative slope. */
export const powerLawLevelSchema = obj(
  {
    countAbove: num('particles per wafer', { min: 0 }),
    atDiameterNm: num('nm', { min: 0, minExclusive: true }),
    slope: num('', { min: 0, minExclusive: true, max: 10 }),
    fromNm: num('nm', { min: 0, minExclusive: true }).nullable().optional(),
  },
  'an object {countAbove, atDiameterNm, slope, fromNm}',
);
export type PowerLawLevelFile = z.infer<typeof powerLawLevelSchema>;

/** The engine's power-law level (SI), the same shape as PowerLawLevel in src/engine/types.ts. */
export interface PowerLawLevelSi {
  countAbove: number;
  atDiameterM: number;
  slope: number;
  fromM: number | null;
}

/** A signed length in mm to metres (coordinates, offsets), through the unit table of src/model/units.ts. */
export const signedMmToM = (v: number): number => (v < 0 ? -mmToM(-v) : mmToM(v));

export function powerLawToSi(p: PowerLawLevelFile): PowerLawLevelSi {
  return {
    countAbove: p.countAbove,
    atDiameterM: nmToM(p.atDiameterNm),
    slope: p.slope,
    fromM: p.fromNm == null ? null : nmToM(p.fromNm),
  };
}
