/**
 * parseAsOfText: the assessment time as people type it (CLI --as-of, ?asOf=, the API). Expected
 * instants are hand computations from the calendar (Date.UTC of the written fields minus the
 * written offset); the accepted range is the documented 1970-01-01T00:00Z ≤ t < 2100-01-01T00:00Z.
 */
import { describe, expect, it } from 'vitest';
import { AS_OF_END_MS, parseAsOfText } from '../../../src/engine/as-of.ts';

const ok = (text: string) => {
  const r = parseAsOfText(text);
  if (!r.ok) throw new Error(`refused ${text}: ${r.reason}`);
  return r.ms;
};
const reason = (text: string) => {
  const r = parseAsOfText(text);
  if (r.ok) throw new Error(`accepted ${text}`);
  return r.reason;
};

describe('parseAsOfText', () => {
  it('reads UTC milliseconds and ISO 8601 with Z, ±hh:mm or ±hhmm (hand computation)', () => {
    expect(ok('1792350000000')).toBe(Date.UTC(2026, 9, 18, 19, 0));
    expect(ok('2026-10-18T19:00Z')).toBe(Date.UTC(2026, 9, 18, 19, 0));
    expect(ok('2026-10-18T21:00:00+02:00')).toBe(Date.UTC(2026, 9, 18, 19, 0));
    expect(ok('2026-10-18T14:30-0430')).toBe(Date.UTC(2026, 9, 18, 19, 0));
    expect(ok('2026-10-18T19:00:00.250Z')).toBe(Date.UTC(2026, 9, 18, 19, 0, 0, 250));
    expect(ok(' 2024-02-29T00:00Z ')).toBe(Date.UTC(2024, 1, 29)); // a leap day; white space trimmed
  });

  it('accepts the ends of the range: 1970-01-01T00:00Z and the last millisecond before 2100', () => {
    expect(ok('0')).toBe(0);
    expect(ok('1970-01-01T00:00Z')).toBe(0);
    expect(ok(String(AS_OF_END_MS - 1))).toBe(Date.UTC(2100, 0, 1) - 1);
    expect(ok('2099-12-31T23:59:59.999Z')).toBe(Date.UTC(2100, 0, 1) - 1);
  });

  it('refuses, saying why: out of range, not a time, no zone, impossible calendar dates', () => {
    expect(reason('-5')).toContain('is not a time');
    expect(reason('1969-12-31T23:59:59Z')).toContain('outside the accepted range');
    expect(reason('2100-01-01T00:00Z')).toContain('outside the accepted range');
    expect(reason(String(AS_OF_END_MS))).toContain('outside the accepted range');
    expect(reason('99999999999999999999')).toContain('outside the accepted range');
    expect(reason('1e300')).toContain('is not a time');
    expect(reason('NaN')).toContain('is not a time');
    expect(reason('Infinity')).toContain('is not a time');
    expect(reason('1.5')).toContain('is not a time');
    expect(reason('')).toContain('is empty');
    expect(reason('2026-10-18T19:00:00')).toContain('has no zone');
    expect(reason('2026-02-29T00:00Z')).toContain('not a calendar date'); // 2026 is no leap year
    expect(reason('2026-10-18T24:00Z')).toContain('not a calendar date');
    expect(reason('2026-13-01T00:00Z')).toContain('not a calendar date');
    expect(reason('2026-10-18T19:00+25:00')).toContain('impossible zone offset');
  });
});
