import { describe, expect, it } from 'vitest';
import { parseIsoTime, parseZone, type Zone } from '../../../src/ingest/time.ts';

const zone = (t: string) => parseZone(t) as Zone;
const ok = (text: string, z: Zone | null = null) => {
  const r = parseIsoTime(text, z);
  if (!r.ok) throw new Error(`${text}: ${r.rule}`);
  return r.ms;
};
const rule = (text: string, z: Zone | null = null) => {
  const r = parseIsoTime(text, z);
  if (r.ok) throw new Error(`${text} was accepted`);
  return r.rule;
};

describe('parseIsoTime (ISO 8601-1:2019 date-times, RFC 3339 §5.6)', () => {
  it('reads UTC and offsets in extended and basic form; the reference is Date.parse (ECMA-262 §21.4.3.2)', () => {
    expect(ok('2026-03-02T08:00:00Z')).toBe(Date.parse('2026-03-02T08:00:00Z'));
    expect(ok('2026-03-02T09:00:00+01:00')).toBe(Date.parse('2026-03-02T08:00:00Z'));
    expect(ok('2026-03-02T09:00:00+0100')).toBe(Date.parse('2026-03-02T08:00:00Z'));
    expect(ok('2026-03-02T09:00+01')).toBe(Date.parse('2026-03-02T08:00:00Z'));
    expect(ok('2026-03-02T03:30:00-04:30')).toBe(Date.parse('2026-03-02T08:00:00Z'));
    expect(ok('2026-03-02 08:00:00.250Z')).toBe(Date.parse('2026-03-02T08:00:00.250Z'));
    expect(ok('2026-03-02T08:00:00,5Z')).toBe(Date.parse('2026-03-02T08:00:00.500Z'));
  });

  it('the quick path for YYYY-MM-DDTHH:MM:SSZ agrees with Date.parse on random instants 1970–2099', () => {
    let x = 12345;
    for (let i = 0; i < 2000; i++) {
      x = (x * 1103515245 + 12345) % 2147483648; // LCG (glibc constants), reproducible
      const ms = Math.floor((x / 2147483648) * 4102444800) * 1000;
      const text = new Date(ms).toISOString().replace('.000Z', 'Z');
      expect(ok(text)).toBe(Date.parse(text));
    }
  });

  it('refuses impossible dates and times with the rule', () => {
    const bad =
      'is not a valid calendar date and time (year from 1900, month 1–12, day of the month, 00:00–23:59:59)';
    expect(rule('2026-02-29T00:00:00Z')).toBe(bad); // 2026 is not a leap year (Gregorian rule)
    expect(ok('2028-02-29T00:00:00Z')).toBe(Date.parse('2028-02-29T00:00:00Z'));
    expect(rule('2026-13-01T00:00:00Z')).toBe(bad);
    expect(rule('2026-01-01T24:00:00Z')).toBe(bad);
    expect(rule('2026-01-01T23:60:00Z')).toBe(bad);
    expect(rule('0026-01-01T00:00:00Z')).toBe(bad);
    expect(rule('2026-01-01T00:00:00+15:00')).toBe('has an offset outside -14:00 … +14:00');
    const shape =
      'must be an ISO 8601 date-time with an offset, e.g. 2026-03-02T08:00:00Z or 2026-03-02T09:00:00+01:00';
    for (const t of ['02/03/2026 08:00', '2026-03-02', 'yesterday', '2026-3-2T8:00Z', '', '1772438400000']) {
      expect(rule(t)).toBe(shape);
    }
  });

  it('a time without offset needs a declared zone', () => {
    expect(rule('2026-03-02T08:00:00')).toBe(
      'has no offset: add Z or ±HH:MM to each time, or declare the zone in the file (# zone: Europe/Berlin)',
    );
    expect(ok('2026-03-02T08:00:00', zone('+01:00'))).toBe(Date.parse('2026-03-02T07:00:00Z'));
    expect(ok('2026-03-02T08:00:00', zone('UTC'))).toBe(Date.parse('2026-03-02T08:00:00Z'));
    // An explicit offset wins over the declared zone.
    expect(ok('2026-03-02T08:00:00Z', zone('Europe/Berlin'))).toBe(Date.parse('2026-03-02T08:00:00Z'));
  });

  it('turns local wall time in an IANA zone into UTC across daylight-saving changes', () => {
    // EU summer time (Directive 2000/84/EC): from 01:00 UTC on the last Sunday of March to 01:00 UTC on the
    // last Sunday of October; Central European Time is UTC+1, summer time UTC+2. In 2026: 29 March, 25 October.
    const berlin = zone('Europe/Berlin');
    expect(ok('2026-01-15T12:00:00', berlin)).toBe(Date.parse('2026-01-15T11:00:00Z'));
    expect(ok('2026-07-01T12:00:00', berlin)).toBe(Date.parse('2026-07-01T10:00:00Z'));
    expect(ok('2026-03-29T01:59:59', berlin)).toBe(Date.parse('2026-03-29T00:59:59Z'));
    expect(ok('2026-03-29T03:00:00', berlin)).toBe(Date.parse('2026-03-29T01:00:00Z'));
    expect(rule('2026-03-29T02:30:00', berlin)).toBe(
      'this local time does not exist in Europe/Berlin (skipped by a daylight-saving change); give an offset',
    );
    expect(rule('2026-10-25T02:30:00', berlin)).toBe(
      'this local time occurs twice in Europe/Berlin (repeated by a daylight-saving change); give an offset',
    );
    expect(ok('2026-10-25T03:30:00', berlin)).toBe(Date.parse('2026-10-25T02:30:00Z'));
    // US: DST from the second Sunday of March, 02:00 local (Energy Policy Act of 2005); EST = UTC−5, EDT = UTC−4.
    const ny = zone('America/New_York');
    expect(ok('2026-03-08T01:30:00', ny)).toBe(Date.parse('2026-03-08T06:30:00Z'));
    expect(ok('2026-03-08T03:30:00', ny)).toBe(Date.parse('2026-03-08T07:30:00Z'));
    expect(parseIsoTime('2026-03-08T02:30:00', ny).ok).toBe(false);
    // A zone without DST (Asia/Tokyo, UTC+9 all year).
    expect(ok('2026-07-01T09:00:00', zone('Asia/Tokyo'))).toBe(Date.parse('2026-07-01T00:00:00Z'));
  });

  it('refuses an unknown zone name with the rule', () => {
    expect(parseZone('Mars/Olympus_Mons')).toBe(
      'zone "Mars/Olympus_Mons" is not an IANA time-zone name (e.g. Europe/Berlin) or an offset (e.g. +01:00)',
    );
    expect(parseZone('+15:00')).toBe('zone "+15:00": an offset must be between -14:00 and +14:00');
  });
});
