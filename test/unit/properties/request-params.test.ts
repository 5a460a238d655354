/**
 * Property-based tests of the request-parameter and request-header parsers (issue 14: "every time or
 * number parameter bounded (400, not 500)"), with fast-check, 10,000 generated texts each: a value
 * within its documented range or the parser's own refusal (BadParamError, or null where the parser
 * answers null) — never another exception, never NaN or infinity. Oracles independent of the code:
 * JavaScript's Date (ECMA-262 §21.4) for times built by the generator, BigInt arithmetic for whole
 * numbers and byte sizes, RFC 2046 §5.1.1 for boundaries. Seeds are fixed.
 */
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { AS_OF_END_MS, AS_OF_MIN_MS, parseAsOfText } from '../../../src/engine/as-of.ts';
import {
  asOfValue,
  BadParamError,
  choiceValue,
  positiveNumberValue,
  wholeNumberValue,
} from '../../../src/web/params.ts';
import { multipartBoundary, parseByteSize, parseDisposition } from '../../../src/web/upload.ts';

const RUNS = 10_000;
const opts = (seed: number) => ({ seed, numRuns: RUNS });

/** Runs a parser; returns its value, or the BadParamError it threw (any other exception fails the test). */
function outcome<T>(f: () => T): { value: T } | { refused: BadParamError } {
  try {
    return { value: f() };
  } catch (e) {
    if (!(e instanceof BadParamError)) throw e;
    return { refused: e };
  }
}

const junk = fc.oneof(
  fc.string({ maxLength: 40 }),
  fc.string({ unit: fc.constantFrom(...'0123456789+-.eE:TZ ,x'.split('')), maxLength: 30 }),
  fc.constantFrom('', ' ', 'NaN', 'Infinity', '1e300', '-0', '0x10', '9007199254740993', '１２', '\u0000'),
);

describe('assessment times (?asOf=, --as-of)', () => {
  const inRange = fc.date({
    min: new Date(AS_OF_MIN_MS),
    max: new Date(AS_OF_END_MS - 1),
    noInvalidDate: true,
  });
  const written = fc.oneof(
    // The same instant written in UTC, with an offset (±hh:mm or ±hhmm), or as milliseconds.
    fc.tuple(inRange, fc.integer({ min: -14 * 60, max: 14 * 60 }), fc.boolean()).map(([d, offMin, colon]) => {
      const local = new Date(d.getTime() + offMin * 60_000).toISOString().slice(0, 23);
      const sign = offMin < 0 ? '-' : '+';
      const a = Math.abs(offMin);
      const hh = String(Math.floor(a / 60)).padStart(2, '0');
      const mm = String(a % 60).padStart(2, '0');
      return { text: `${local}${sign}${hh}${colon ? ':' : ''}${mm}`, ms: d.getTime() };
    }),
    inRange.map((d) => ({ text: d.toISOString(), ms: d.getTime() })),
    inRange.map((d) => ({ text: String(d.getTime()), ms: d.getTime() })),
  );

  it('a time written in any accepted form is read to the instant JavaScript’s Date gives', () => {
    fc.assert(
      fc.property(written, ({ text, ms }) => {
        expect(parseAsOfText(text)).toEqual({ ok: true, ms });
        expect(asOfValue('asOf', text)).toBe(ms);
      }),
      opts(14_201),
    );
  });

  it('any other text is refused with a reason or read to a time inside 1970–2099, never a crash', () => {
    fc.assert(
      fc.property(
        fc.oneof(
          junk,
          written.map((w) => w.text.replace(/\d/, (c) => String((Number(c) + 7) % 10))),
        ),
        (text) => {
          const r = outcome(() => asOfValue('asOf', text));
          if ('value' in r) {
            if (r.value !== null) {
              expect(Number.isSafeInteger(r.value)).toBe(true);
              expect(r.value).toBeGreaterThanOrEqual(AS_OF_MIN_MS);
              expect(r.value).toBeLessThan(AS_OF_END_MS);
            } else expect(text.trim()).toBe('');
          } else {
            expect(r.refused.param).toBe('asOf');
            expect(r.refused.status).toBe(400);
            expect(r.refused.reason.length).toBeGreaterThan(0);
          }
        },
      ),
      opts(14_202),
    );
  });
});

describe('whole numbers and positive numbers', () => {
  it('a whole number is accepted exactly when it is digits (an optional +) within the range', () => {
    const text = fc.oneof(
      junk,
      fc.bigInt({ min: -(10n ** 20n), max: 10n ** 20n }).map(String),
      fc.nat().map((n) => `+${n}`),
    );
    fc.assert(
      fc.property(
        text,
        fc.integer({ min: 0, max: 1000 }),
        fc.integer({ min: 0, max: 1_000_000 }),
        (t, min, span) => {
          const max = min + span;
          const r = outcome(() => wholeNumberValue('page', t, min, max));
          const v = t.trim();
          const digits = /^\+?[0-9]+$/.test(v);
          const expected =
            t.trim() === ''
              ? null
              : digits && BigInt(v) >= BigInt(min) && BigInt(v) <= BigInt(max)
                ? Number(v)
                : 'refused';
          if (expected === 'refused') expect('refused' in r).toBe(true);
          else expect(r).toEqual({ value: expected });
        },
      ),
      opts(14_203),
    );
  });

  it('a positive number is finite, above 0 and at most its maximum, and is the number written — or refused', () => {
    const text = fc.oneof(
      junk,
      fc.double().map(String),
      fc.double({ min: 0, max: 2000, noNaN: true }).map((x) => x.toFixed(3)),
    );
    fc.assert(
      fc.property(text, (t) => {
        const r = outcome(() => positiveNumberValue('minSizeUm', t, 1000));
        if ('value' in r) {
          if (r.value === null) {
            expect(t.trim()).toBe('');
            return;
          }
          expect(Number.isFinite(r.value)).toBe(true);
          expect(r.value).toBeGreaterThan(0);
          expect(r.value).toBeLessThanOrEqual(1000);
          expect(r.value).toBe(Number(t.trim()));
        } else expect(r.refused.message).toContain('minSizeUm must be a number above 0 and at most 1000');
      }),
      opts(14_204),
    );
  });

  it('a choice is one of its words or refused naming them', () => {
    const words = ['tool', 'step', 'location'] as const;
    fc.assert(
      fc.property(fc.oneof(junk, fc.constantFrom(...words, ' tool ', 'Tool', 'tools')), (t) => {
        const r = outcome(() => choiceValue('by', t, words));
        if ('value' in r) expect(r.value === null ? t.trim() === '' : words.includes(r.value)).toBe(true);
        else expect(r.refused.message).toContain('must be one of tool, step, location');
      }),
      opts(14_205),
    );
  });
});

describe('upload settings and headers', () => {
  const UNITS: [string, bigint][] = [
    ['', 1n],
    ['b', 1n],
    ['kb', 1000n],
    ['MB', 10n ** 6n],
    ['GB', 10n ** 9n],
    ['KiB', 1024n],
    ['MiB', 1024n ** 2n],
    ['GiB', 1024n ** 3n],
  ];

  it('a byte size is a safe whole number of bytes ≥ 1 equal to number × unit, or null', () => {
    const sized = fc.tuple(fc.bigInt({ min: 0n, max: 10n ** 13n }), fc.constantFrom(...UNITS), fc.boolean());
    fc.assert(
      fc.property(fc.oneof(sized, junk), (x) => {
        if (typeof x === 'string') {
          const b = parseByteSize(x);
          if (b !== null) expect(Number.isSafeInteger(b) && b >= 1).toBe(true);
          return;
        }
        const [n, [unit, factor], space] = x;
        const bytes = n * factor;
        const expected = bytes >= 1n && bytes <= BigInt(Number.MAX_SAFE_INTEGER) ? Number(bytes) : null;
        expect(parseByteSize(`${n}${space ? ' ' : ''}${unit}`)).toBe(expected);
      }),
      opts(14_206),
    );
  });

  it('a multipart boundary is null or 1–70 characters of RFC 2046 §5.1.1, and Content-Disposition never throws', () => {
    const header = fc.oneof(
      junk.map((b) => `multipart/form-data; boundary=${b}`),
      junk.map((b) => `multipart/form-data; boundary="${b}"`),
      fc.string({ maxLength: 80 }),
    );
    fc.assert(
      fc.property(header, fc.string({ maxLength: 120 }), (h, disposition) => {
        const b = multipartBoundary(h);
        if (b !== null) {
          expect(b.length).toBeGreaterThanOrEqual(1);
          expect(b.length).toBeLessThanOrEqual(70);
          expect(b).toMatch(/^[0-9A-Za-z'()+_,\-./:=? ]*[0-9A-Za-z'()+_,\-./:=?]$/);
        }
        const d = parseDisposition(`form-data; ${disposition}`);
        expect(d.type).toBe('form-data');
        // biome-ignore lint/suspicious/noControlCharactersInRegex: checking that control characters are gone
        if (d.filename !== null) expect(d.filename).not.toMatch(/[\u0000-\u001f\u007f]/);
      }),
      opts(14_207),
    );
  });
});
