/**
 * Request parameters, checked in one place. A route reads each query, path or form parameter
 * through these helpers; a bad value throws BadParamError, which the application's error handler
 * (app.ts) turns into a 400 answer that names the parameter and the rule — an HTML page for pages,
 * a fragment for htmx swaps, JSON under /api — never a 500.
 *
 * Conventions: a parameter that is absent, empty or only white space counts as not given (the
 * route's default applies), because forms send empty fields; any other value must be valid.
 */
import type { Context } from 'hono';
import { PARETO_GROUPS, type ParetoBy, parseParetoBy } from '../../views/partials/pareto-panel.tsx';
import { parseTrendWindow, TREND_WINDOWS, type TrendWindow } from '../../views/partials/trend-panel.tsx';
import { parseAsOfText } from '../engine/as-of.ts';

/**
 * A request parameter with a value no route can use; `message` is shown to the user. Status 400,
 * or 404 when the value is well formed but names nothing that exists (an unknown location).
 */
export class BadParamError extends Error {
  override readonly name = 'BadParamError';
  constructor(
    readonly param: string,
    readonly reason: string,
    readonly status: 400 | 404 = 400,
  ) {
    super(`${param} ${reason}`);
  }
}

/** The highest page number a paged list accepts (far beyond any list the product shows). */
export const MAX_PAGE = 1_000_000;

const given = (v: string | undefined | null): v is string => typeof v === 'string' && v.trim() !== '';

/** An assessment time from text (see src/engine/as-of.ts), or null when not given. */
export function asOfValue(param: string, value: string | undefined | null): number | null {
  if (!given(value)) return null;
  const r = parseAsOfText(value);
  if (!r.ok) throw new BadParamError(param, r.reason);
  return r.ms;
}

/** `?asOf=`: the assessment time, or null when not given. */
export function queryAsOf(c: Context): number | null {
  return asOfValue('asOf', c.req.query('asOf'));
}

/** One of a fixed set of words, or null when not given. */
export function choiceValue<T extends string>(
  param: string,
  value: string | undefined | null,
  choices: readonly T[],
): T | null {
  if (!given(value)) return null;
  const v = value.trim();
  if ((choices as readonly string[]).includes(v)) return v as T;
  throw new BadParamError(param, `must be one of ${choices.join(', ')}; got "${clip(v)}"`);
}

/** `?name=` as one of a fixed set of words, or null when not given. */
export function queryChoice<T extends string>(c: Context, param: string, choices: readonly T[]): T | null {
  return choiceValue(param, c.req.query(param), choices);
}

/** A whole number from `min` to `max`, or null when not given. */
export function wholeNumberValue(
  param: string,
  value: string | undefined | null,
  min: number,
  max: number,
): number | null {
  if (!given(value)) return null;
  const v = value.trim();
  const n = /^[+]?\d+$/.test(v) ? Number(v) : Number.NaN;
  if (!Number.isSafeInteger(n) || n < min || n > max)
    throw new BadParamError(param, `must be a whole number from ${min} to ${max}; got "${clip(v)}"`);
  return n;
}

/** A decimal number above 0 and at most `max` (e.g. a size in µm, "0.5"), or null when not given. */
export function positiveNumberValue(
  param: string,
  value: string | undefined | null,
  max: number,
): number | null {
  if (!given(value)) return null;
  const v = value.trim();
  const n = /^[+]?(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?$/.test(v) ? Number(v) : Number.NaN;
  if (!(Number.isFinite(n) && n > 0 && n <= max))
    throw new BadParamError(
      param,
      `must be a number above 0 and at most ${max} (a point for decimals, e.g. 0.5); got "${clip(v)}"`,
    );
  return n;
}

/**
 * A decimal number in a closed range [min, max] (or above min when `aboveMin`), or null when not
 * given; `unit` names the unit in the message ("h", "nm", "J/m²"). Used by the what-if levers, where
 * 0 is a meaningful value (a wait of zero hours) and a value past a physical bound (a removal above
 * 1, an ISO class outside 1–9) must be refused in the user's terms.
 */
export function numberInRangeValue(
  param: string,
  value: string | undefined | null,
  range: { min: number; max: number; aboveMin?: boolean; unit?: string },
): number | null {
  if (!given(value)) return null;
  const v = value.trim();
  const n = /^[+-]?(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?$/.test(v) ? Number(v) : Number.NaN;
  const low = range.aboveMin ? n > range.min : n >= range.min;
  if (!(Number.isFinite(n) && low && n <= range.max)) {
    const u = range.unit ? ` ${range.unit}` : '';
    const from = range.aboveMin ? `above ${range.min}${u}` : `from ${range.min}${u}`;
    throw new BadParamError(
      param,
      `must be a number ${from} up to ${range.max}${u} (a point for decimals, e.g. 0.5); got "${clip(v)}"`,
    );
  }
  return n;
}

/** `?page=`: a page number from 1, default 1. */
export function queryPage(c: Context, param = 'page'): number {
  return wholeNumberValue(param, c.req.query(param), 1, MAX_PAGE) ?? 1;
}

/**
 * A numeric id in the path (`/imports/history/:id`), or null when it cannot name anything (not a
 * whole number, or too large): the route answers 404 for it as for any unknown id.
 */
export function pathWholeNumber(c: Context, param: string): number | null {
  const v = c.req.param(param) ?? '';
  if (!/^\d+$/.test(v)) return null;
  const n = Number(v);
  return Number.isSafeInteger(n) ? n : null;
}

/** `?pareto=` / `?by=`: a Pareto grouping, default by tool. */
export function queryParetoBy(c: Context, param: string): ParetoBy {
  return parseParetoBy(
    queryChoice(
      c,
      param,
      PARETO_GROUPS.map((g) => g.by),
    ) ?? undefined,
  );
}

/** `?window=`: the trend's time window, default the last 7 days. */
export function queryTrendWindow(c: Context): TrendWindow {
  return parseTrendWindow(
    queryChoice(
      c,
      'window',
      TREND_WINDOWS.map((w) => w.key),
    ) ?? undefined,
  );
}

/** A value cut to a readable length for a message. */
function clip(v: string): string {
  return v.length > 60 ? `${v.slice(0, 57)}…` : v;
}
