/**
 * The one error every model function throws for bad input.
 *
 * A model function never returns NaN or Infinity: it checks its arguments first and throws
 * `ModelInputError`, whose message names the function, the parameter, its unit, the allowed
 * range and the value received, e.g.
 *
 *   voidRadius: heightM = -1e-6 m is out of range; allowed > 0 m
 */
export class ModelInputError extends Error {
  override readonly name = 'ModelInputError';
  constructor(
    readonly fn: string,
    readonly param: string,
    readonly unit: string,
    readonly allowed: string,
    readonly value: unknown,
  ) {
    super(
      `${fn}: ${param} = ${formatValue(value)}${unit ? ` ${unit}` : ''} is out of range; allowed ${allowed}`,
    );
  }
}

/** Unit words a parameter name ends with (heightM, diameterUm, workOfAdhesionJm2): dropped in plain words. */
const UNIT_SUFFIX = /(M|Um|Nm|Mm|Pa|Jm2|Mps|K|S|Ms|M2|M3|PerM3|PerM2|KgM3|Nm)$/;

/**
 * A model's range error in words a person reads, without the model's function or parameter
 * identifiers: "expected defects = 17431442557 defects per die is out of range; allowed ≥ 0 …".
 *
 * @example plainModelError(new ModelInputError('voidRadius', 'heightM', 'm', '> 0 m', -1))
 *   // 'height = -1 m is out of range; allowed > 0 m'
 */
export function plainModelError(e: ModelInputError): string {
  const last = e.param.split('.').pop() ?? e.param;
  const bare = last.replace(/\[\d+\]/g, '').replace(UNIT_SUFFIX, '') || last;
  const words = bare
    .replace(/([a-z0-9])([A-Z])/g, '$1 $2')
    .toLowerCase()
    .trim();
  return `${words} = ${formatValue(e.value)}${e.unit ? ` ${e.unit}` : ''} is out of range; allowed ${e.allowed}`;
}

function formatValue(v: unknown): string {
  if (typeof v === 'number') return Number.isNaN(v) ? 'NaN' : String(v);
  if (typeof v === 'string') return JSON.stringify(v);
  if (v === undefined) return 'undefined';
  if (v === null) return 'null';
  try {
    return JSON.stringify(v) ?? String(v);
  } catch {
    return String(v);
  }
}

export interface Range {
  /** Inclusive lower bound unless `minExclusive`. */
  min?: number;
  max?: number;
  minExclusive?: boolean;
  maxExclusive?: boolean;
  integer?: boolean;
}

function describe(r: Range, unit: string): string {
  const u = unit ? ` ${unit}` : '';
  const parts: string[] = [];
  if (r.min !== undefined) parts.push(`${r.minExclusive ? '>' : '≥'} ${r.min}${u}`);
  if (r.max !== undefined) parts.push(`${r.maxExclusive ? '<' : '≤'} ${r.max}${u}`);
  const core = parts.length ? parts.join(' and ') : 'a finite number';
  return r.integer ? `an integer ${core}` : core;
}

/**
 * Checks that `value` is a finite number inside `range`; returns it, or throws ModelInputError.
 *
 * @example requireNumber('voidRadius', 'heightM', h, 'm', { min: 0, minExclusive: true })
 */
export function requireNumber(
  fn: string,
  param: string,
  value: unknown,
  unit: string,
  range: Range = {},
): number {
  // The range text is built only when the check fails: this runs in the engine's inner loops.
  if (
    typeof value === 'number' &&
    Number.isFinite(value) &&
    !(range.integer && !Number.isInteger(value)) &&
    !(range.min !== undefined && (range.minExclusive ? value <= range.min : value < range.min)) &&
    !(range.max !== undefined && (range.maxExclusive ? value >= range.max : value > range.max))
  )
    return value;
  throw new ModelInputError(fn, param, unit, describe(range, unit), value);
}

/** A finite number > 0. */
export const requirePositive = (fn: string, param: string, value: unknown, unit: string): number =>
  requireNumber(fn, param, value, unit, { min: 0, minExclusive: true });

/** A finite number ≥ 0. */
export const requireNonNegative = (fn: string, param: string, value: unknown, unit: string): number =>
  requireNumber(fn, param, value, unit, { min: 0 });

/** Checks that `value` is one of `options`. */
export function requireOneOf<T extends string>(
  fn: string,
  param: string,
  value: unknown,
  options: readonly T[],
): T {
  if (typeof value === 'string' && (options as readonly string[]).includes(value)) return value as T;
  throw new ModelInputError(fn, param, '', `one of ${options.join(', ')}`, value);
}

/**
 * Guards a result: a model function calls this on what it returns so that no NaN or Infinity
 * ever leaves the model library, even through an overflow the argument checks did not foresee.
 */
export function finiteResult(fn: string, value: number, what = 'result'): number {
  if (!Number.isFinite(value))
    throw new ModelInputError(fn, what, '', 'a finite result (inputs overflowed)', value);
  return value;
}
