/**
 * The machinery behind the calculators (calculators.ts holds the table of calculators): field
 * definitions, reading the raw text a person typed (on the command line or in a form) into
 * numbers, checking each value against its field's range in the field's own unit, and turning a
 * model's range error into a message in the user's terms — the field's label, its unit and the
 * value typed, never a model function's or parameter's internal name.
 */
import { z } from 'zod';
import { ModelInputError } from '../model/errors.ts';

export interface CalcChoice {
  value: string;
  label: string;
}

/** The values a number field accepts, in the field's unit. */
export interface CalcRange {
  min?: number;
  max?: number;
  minExclusive?: boolean;
  maxExclusive?: boolean;
  integer?: boolean;
}

export interface CalcField {
  /** Name of the CLI option (`--name`) and of the form field. */
  name: string;
  label: string;
  /** Unit shown beside the input ('' when dimensionless). */
  unit: string;
  default: string;
  /** Choices for a select; absent for a number. */
  choices?: CalcChoice[];
  /** The values a number field accepts, in its unit (the model's validity range, converted). */
  range?: CalcRange;
  help?: string;
}

export interface CalcOutput {
  label: string;
  value: number | string | null;
  unit: string;
  /** Significant figures to show for a number. */
  digits?: number;
}

export interface CalcResult {
  outputs: CalcOutput[];
  notes: string[];
}

export interface Calculator {
  id: string;
  title: string;
  summary: string;
  /** The formula, plain text with Unicode symbols. */
  formula: string;
  /** Symbols with their units. */
  symbols: string;
  source: string;
  fields: CalcField[];
  /**
   * Limits that involve several inputs together, in words (e.g. "the particle height k_h × d must
   * be below the thinner plate's thickness"): what a user is told when the model refuses a
   * combination that every single field allows.
   */
  jointLimits?: string;
  /**
   * @param values numbers for number fields, the chosen value for choice fields
   * @param text the trimmed text typed for each field (or its default): exact decimals, for what
   *   must be decided on the decimal the user wrote rather than on a binary double
   */
  compute: (values: Record<string, number | string>, text: Record<string, string>) => CalcResult;
}

/** A bad input to a calculator: which field, its label, and the rule broken in the user's terms. */
export class CalcInputError extends Error {
  override readonly name = 'CalcInputError';
  /**
   * @param field the field's name (`--field` on the command line), or '' for a combination
   * @param subject what is wrong, as a person names it ("Particle diameter d")
   * @param rule the rule, after the subject ("must be positive and at most 10000 µm; got -1")
   */
  constructor(
    readonly field: string,
    readonly subject: string,
    readonly rule: string,
  ) {
    super(`${subject} ${rule}`);
  }
}

const NUMBER_TEXT = /^[+-]?(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?$/;

const numberText = z
  .string()
  .trim()
  .min(1, 'is required')
  .regex(NUMBER_TEXT, 'must be a number (use a point for decimals, e.g. 0.5)')
  .transform(Number)
  .refine(Number.isFinite, 'must be a finite number');

function fmt(n: number): string {
  return String(n);
}

/** A range in words: "positive and at most 10000 µm", "a whole number from 0 to 100000000". */
export function describeRange(r: CalcRange, unit: string): string {
  const u = unit ? ` ${unit}` : '';
  if (r.integer && r.min !== undefined && r.max !== undefined && !r.minExclusive && !r.maxExclusive)
    return `a whole number from ${fmt(r.min)} to ${fmt(r.max)}${u}`;
  const parts: string[] = [];
  if (r.min === 0 && r.minExclusive) parts.push('positive');
  else if (r.min !== undefined) parts.push(`${r.minExclusive ? 'above' : 'at least'} ${fmt(r.min)}${u}`);
  if (r.max !== undefined) parts.push(`${r.maxExclusive ? 'below' : 'at most'} ${fmt(r.max)}${u}`);
  const core = parts.join(' and ');
  return r.integer ? `a whole number, ${core}` : core;
}

function inRange(v: number, r: CalcRange): boolean {
  if (r.integer && !Number.isInteger(v)) return false;
  if (r.min !== undefined && (r.minExclusive ? v <= r.min : v < r.min)) return false;
  if (r.max !== undefined && (r.maxExclusive ? v >= r.max : v > r.max)) return false;
  return true;
}

/** The text each field takes: what was typed (trimmed), else its default. */
export function calcTexts(calc: Calculator, raw: Record<string, string | undefined>): Record<string, string> {
  const out: Record<string, string> = {};
  for (const f of calc.fields) out[f.name] = (raw[f.name] ?? f.default).trim();
  return out;
}

/**
 * Checks raw text values against a calculator's fields; missing values take the defaults.
 * Returns numbers for number fields and the chosen value for choice fields.
 */
export function parseCalcValues(
  calc: Calculator,
  raw: Record<string, string | undefined>,
): Record<string, number | string> {
  const out: Record<string, number | string> = {};
  const texts = calcTexts(calc, raw);
  for (const f of calc.fields) {
    const text = texts[f.name]!;
    if (f.choices) {
      if (!f.choices.some((c) => c.value === text))
        throw new CalcInputError(
          f.name,
          f.label,
          `must be one of ${f.choices.map((c) => c.value).join(', ')}; got "${text}"`,
        );
      out[f.name] = text;
      continue;
    }
    const r = numberText.safeParse(text);
    if (!r.success)
      throw new CalcInputError(
        f.name,
        f.label,
        `${r.error.issues[0]?.message ?? 'is invalid'}; got "${text}"`,
      );
    if (f.range && !inRange(r.data, f.range))
      throw new CalcInputError(f.name, f.label, `must be ${describeRange(f.range, f.unit)}; got ${text}`);
    out[f.name] = r.data;
  }
  return out;
}

/**
 * Runs a calculator on raw text values. A model's range error (which names the model's own
 * function and parameter) comes back as a CalcInputError in the user's terms: the calculator's
 * joint limits in words, with the inputs typed.
 */
export function runCalculator(calc: Calculator, raw: Record<string, string | undefined>): CalcResult {
  const values = parseCalcValues(calc, raw);
  try {
    return calc.compute(values, calcTexts(calc, raw));
  } catch (e) {
    if (e instanceof ModelInputError)
      throw new CalcInputError(
        '',
        'These inputs together',
        `are outside the range the model accepts${calc.jointLimits ? `: ${calc.jointLimits}` : ''}.`,
      );
    throw e;
  }
}

/**
 * A decimal text as an exact whole number of a smaller unit, or null when it is not one: e.g. a
 * size typed in µm as whole nanometres (`shift` 3, since 1 µm = 10³ nm): "0.1" → 100, "1e-1" →
 * 100, "0.5000" → 500, "0.1234" → null. Works on the digits, so no binary rounding enters.
 *
 * @example exactWholeUnits('0.3', 3) // 300
 */
export function exactWholeUnits(text: string, shift: number): number | null {
  const m = /^\+?(\d*)(?:\.(\d*))?(?:[eE]([+-]?\d+))?$/.exec(text.trim());
  if (!m || (m[1] === '' && (m[2] ?? '') === '')) return null;
  const digits = `${m[1]}${m[2] ?? ''}`;
  // value = digits × 10^(exp − fractional digits); in the smaller unit × 10^shift.
  const exp = Number(m[3] ?? 0) - (m[2] ?? '').length + shift;
  if (!Number.isSafeInteger(exp) || Math.abs(exp) > 400) return null;
  const trimmed = digits.replace(/^0+/, '') || '0';
  let whole: string;
  if (exp >= 0) whole = trimmed === '0' ? '0' : trimmed + '0'.repeat(exp);
  else {
    const cut = trimmed.length + exp;
    const frac = cut > 0 ? trimmed.slice(cut) : trimmed.padStart(-exp, '0');
    if (/[^0]/.test(frac)) return null;
    whole = cut > 0 ? trimmed.slice(0, cut) : '0';
  }
  const n = Number(whole);
  return Number.isSafeInteger(n) ? n : null;
}

/** A number shown with its significant figures, plain text ("3516.76", "3.56e-6"). */
export function formatCalcValue(o: CalcOutput): string {
  if (o.value === null) return '—';
  if (typeof o.value === 'string') return o.value;
  if (Number.isInteger(o.value) && o.digits === undefined) return o.value.toLocaleString('en-US');
  const digits = o.digits ?? 4;
  const a = Math.abs(o.value);
  if (a !== 0 && (a < 1e-3 || a >= 1e7)) return o.value.toExponential(digits - 1);
  return Number(o.value.toPrecision(digits)).toLocaleString('en-US', { maximumSignificantDigits: digits });
}
