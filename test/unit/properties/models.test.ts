/**
 * Property-based test of every model function (issue 14), with fast-check: whatever arguments a
 * function is called with — numbers of every kind (NaN, ±Infinity, −0, subnormal, huge), text,
 * null, undefined, arrays, spectra, objects — it either returns a result in which no number is NaN
 * or infinite, or throws ModelInputError (the one error contract of src/model/errors.ts). Any other
 * error, or a NaN out, is a defect. Seeded; 200 calls per function, 100+ functions.
 *
 * Left out, with the reason: the argument checkers themselves (require*, finiteResult: their job is
 * to throw, and requireOneOf's option list is the caller's code, not data), logGammaUnchecked
 * (unchecked by name, for callers that checked), and plainModelError (not a model: it words a
 * ModelInputError the code has already caught for a person to read; its argument is always that
 * error, never data, and it returns text, not a number).
 */
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { ModelInputError } from '../../../src/model/errors.ts';
import * as model from '../../../src/model/index.ts';

const LEFT_OUT = new Set([
  'requireNumber',
  'requirePositive',
  'requireNonNegative',
  'requireOneOf',
  'requireSpectrum',
  'finiteResult',
  'logGammaUnchecked',
  // Not a model: words an already caught ModelInputError for people; its input is never data.
  'plainModelError',
]);

const number = fc.oneof(
  fc.double(),
  fc.double({ min: 1e-9, max: 1e3, noNaN: true }),
  fc.integer({ min: -10, max: 1000 }),
  fc.constantFrom(Number.NaN, Number.POSITIVE_INFINITY, Number.NEGATIVE_INFINITY, -0, 0, 1, 5e-324, 1e308),
);
const arg: fc.Arbitrary<unknown> = fc.oneof(
  { weight: 6, arbitrary: number },
  { weight: 1, arbitrary: fc.constantFrom(null, undefined, '', '1', true) },
  { weight: 1, arbitrary: fc.array(number, { maxLength: 6 }) },
  { weight: 1, arbitrary: fc.float64Array({ minLength: 48, maxLength: 48 }) },
  {
    weight: 1,
    arbitrary: fc.dictionary(fc.constantFrom('n', 'value', 'sizes', 'diameterM', 'd50M', 'k'), number),
  },
);

/** The first NaN or infinite number in a result (depth-limited walk), or null. */
function badNumber(v: unknown, depth = 0): string | null {
  if (typeof v === 'number') return Number.isFinite(v) ? null : String(v);
  if (depth > 6 || v === null || typeof v !== 'object') return null;
  if (ArrayBuffer.isView(v)) {
    for (const x of Array.from(v as unknown as ArrayLike<number>))
      if (typeof x === 'number' && !Number.isFinite(x)) return String(x);
    return null;
  }
  for (const x of Object.values(v as Record<string, unknown>)) {
    const b = badNumber(x, depth + 1);
    if (b !== null) return b;
  }
  return null;
}

/** Arguments in words for a failure message (objects without a prototype included). */
function shown(args: unknown[]): string {
  return args
    .map((a) => {
      try {
        return typeof a === 'object' && a !== null && !ArrayBuffer.isView(a) ? JSON.stringify(a) : String(a);
      } catch {
        return typeof a;
      }
    })
    .join(', ');
}

const functions = Object.entries(model).filter(
  ([name, f]) => typeof f === 'function' && !/^[A-Z]/.test(name) && !LEFT_OUT.has(name),
) as [string, (...a: unknown[]) => unknown][];

describe('every model function', () => {
  it('covers the library', () => {
    expect(functions.length).toBeGreaterThan(90);
  });

  it.each(functions)('%s: a finite result or a ModelInputError, for any arguments', (name, f) => {
    fc.assert(
      fc.property(fc.array(arg, { minLength: f.length, maxLength: f.length + 1 }), (args) => {
        let out: unknown;
        try {
          out = f(...args);
        } catch (e) {
          if (e instanceof ModelInputError) {
            expect(e.message.length).toBeGreaterThan(0);
            return;
          }
          throw new Error(`${name}(${shown(args)}) threw ${e instanceof Error ? e.message : typeof e}`);
        }
        const bad = badNumber(out);
        if (bad !== null) throw new Error(`${name}(${shown(args)}) returned ${bad}`);
      }),
      { seed: 14_100, numRuns: 200 },
    );
  });
});
