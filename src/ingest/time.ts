/**
 * Times in import files: ISO 8601 / RFC 3339 date-times, stored as UTC milliseconds.
 *
 * Accepted: `YYYY-MM-DDTHH:MM[:SS[.fraction]]` followed by `Z` or an offset `±HH:MM`, `±HHMM`, `±HH`
 * (ISO 8601-1:2019 §5.3.4 extended and basic offsets; RFC 3339 §5.6 also allows a space for `T`).
 * A time without an offset is accepted only when the file declares its zone (`# zone: Europe/Berlin`
 * or `# zone: +01:00`); the local wall time is then turned into UTC with the IANA time-zone database
 * the runtime ships (ECMA-402 `Intl.DateTimeFormat`). A wall time that does not exist in that zone
 * (skipped by a daylight-saving change) or that occurs twice (repeated by one) is refused: the file
 * must say which instant it means, with an offset. Nothing is guessed.
 */

export type TimeResult = { ok: true; ms: number } | { ok: false; rule: string };

const ISO =
  /^(\d{4})-(\d{2})-(\d{2})[Tt ](\d{2}):(\d{2})(?::(\d{2})(?:[.,](\d{1,9}))?)?\s*(?:([Zz])|([+-])(\d{2})(?::?(\d{2}))?)?$/;

const DAYS = [31, 28, 31, 30, 31, 30, 31, 31, 30, 31, 30, 31];

function daysIn(year: number, month: number): number {
  if (month === 2 && ((year % 4 === 0 && year % 100 !== 0) || year % 400 === 0)) return 29;
  return DAYS[month - 1]!;
}

/** A zone as declared in metadata: an IANA name, `UTC`/`Z`, or a fixed offset. */
export interface Zone {
  name: string;
  /** Fixed offset in ms (east positive), or null for an IANA zone. */
  fixedOffsetMs: number | null;
  /** ms offset (wall − UTC) at a UTC instant; for IANA zones from Intl. */
  offsetAt: (utcMs: number) => number;
}

const OFFSET = /^(?:UTC|GMT)?\s*([+-])(\d{2})(?::?(\d{2}))?$/i;

/** Parses a `# zone:` value; returns an error text when the zone is not known to the runtime. */
export function parseZone(text: string): Zone | string {
  const t = text.trim();
  if (/^(?:Z|UTC|GMT|Etc\/UTC)$/i.test(t)) return { name: 'UTC', fixedOffsetMs: 0, offsetAt: () => 0 };
  const m = OFFSET.exec(t);
  if (m) {
    const h = Number(m[2]);
    const min = Number(m[3] ?? '0');
    if (h > 14 || min > 59) return `zone "${t}": an offset must be between -14:00 and +14:00`;
    const ms = (m[1] === '-' ? -1 : 1) * (h * 60 + min) * 60_000;
    return { name: t, fixedOffsetMs: ms, offsetAt: () => ms };
  }
  let fmt: Intl.DateTimeFormat;
  try {
    fmt = new Intl.DateTimeFormat('en-US', {
      timeZone: t,
      hourCycle: 'h23',
      year: 'numeric',
      month: 'numeric',
      day: 'numeric',
      hour: 'numeric',
      minute: 'numeric',
      second: 'numeric',
    });
  } catch {
    return `zone "${t}" is not an IANA time-zone name (e.g. Europe/Berlin) or an offset (e.g. +01:00)`;
  }
  const name = fmt.resolvedOptions().timeZone;
  const cache = new Map<number, number>();
  const offsetAt = (utcMs: number): number => {
    // Offsets change at whole quarter hours in every zone of the tz database since 1970; caching per
    // quarter hour of UTC is exact for the instants we are asked about.
    const key = Math.floor(utcMs / 900_000);
    const hit = cache.get(key);
    if (hit !== undefined) return hit;
    const parts = fmt.formatToParts(new Date(key * 900_000));
    const v: Record<string, number> = {};
    for (const p of parts) if (p.type !== 'literal') v[p.type] = Number(p.value);
    const wall = Date.UTC(v.year!, v.month! - 1, v.day!, v.hour!, v.minute!, v.second!);
    const off = wall - key * 900_000;
    if (cache.size > 200_000) cache.clear();
    cache.set(key, off);
    return off;
  };
  return { name, fixedOffsetMs: null, offsetAt };
}

/** The UTC instant of a local wall time (as if UTC, ms) in a zone, or a rule broken. */
export function wallToUtc(wallMs: number, zone: Zone): TimeResult {
  if (zone.fixedOffsetMs !== null) return { ok: true, ms: wallMs - zone.fixedOffsetMs };
  // The offsets in force half a day either side bracket any single transition.
  const a = zone.offsetAt(wallMs - 43_200_000);
  const b = zone.offsetAt(wallMs + 43_200_000);
  const found: number[] = [];
  for (const o of a === b ? [a] : [a, b]) {
    const u = wallMs - o;
    if (zone.offsetAt(u) === o) found.push(u);
  }
  if (found.length === 1) return { ok: true, ms: found[0]! };
  if (found.length === 0)
    return {
      ok: false,
      rule: `this local time does not exist in ${zone.name} (skipped by a daylight-saving change); give an offset`,
    };
  return {
    ok: false,
    rule: `this local time occurs twice in ${zone.name} (repeated by a daylight-saving change); give an offset`,
  };
}

let lastDay = '';
let lastDayMs = 0;

function digits2(s: string, i: number): number {
  const a = s.charCodeAt(i) - 48;
  const b = s.charCodeAt(i + 1) - 48;
  if (a < 0 || a > 9 || b < 0 || b > 9) return -1;
  return a * 10 + b;
}

/**
 * The common case `YYYY-MM-DDTHH:MM:SSZ` without the regular expression: the same result as the
 * general path below (test/unit/ingest/time.test.ts compares them), or null to use the general path.
 */
function quickUtc(s: string): number | null {
  if (s.length !== 20 || s.charCodeAt(19) !== 90 /* Z */ || s.charCodeAt(10) !== 84 /* T */) return null;
  if (s.charCodeAt(4) !== 45 || s.charCodeAt(7) !== 45 || s.charCodeAt(13) !== 58 || s.charCodeAt(16) !== 58)
    return null;
  let dayMs: number;
  if (lastDay !== '' && s.startsWith(lastDay)) dayMs = lastDayMs;
  else {
    const y1 = digits2(s, 0);
    const y2 = digits2(s, 2);
    const mo = digits2(s, 5);
    const d = digits2(s, 8);
    if (y1 < 0 || y2 < 0 || mo < 1 || mo > 12 || d < 1) return null;
    const year = y1 * 100 + y2;
    if (year < 1900) return null;
    if (d > daysIn(year, mo)) return null;
    dayMs = Date.UTC(year, mo - 1, d);
    lastDay = s.slice(0, 10);
    lastDayMs = dayMs;
  }
  const h = digits2(s, 11);
  const mi = digits2(s, 14);
  const se = digits2(s, 17);
  if (h < 0 || h > 23 || mi < 0 || mi > 59 || se < 0 || se > 59) return null;
  return dayMs + ((h * 60 + mi) * 60 + se) * 1000;
}

/**
 * Parses an ISO 8601 date-time. Without an offset, `zone` must be given (else the rule says so).
 * @example parseIsoTime('2026-03-02T08:00:00+01:00', null) // { ok: true, ms: 1772434800000 }
 */
export function parseIsoTime(text: string, zone: Zone | null): TimeResult {
  const quick = quickUtc(text);
  if (quick !== null) return { ok: true, ms: quick };
  const m = ISO.exec(text);
  if (!m) {
    return {
      ok: false,
      rule: 'must be an ISO 8601 date-time with an offset, e.g. 2026-03-02T08:00:00Z or 2026-03-02T09:00:00+01:00',
    };
  }
  const year = Number(m[1]);
  const month = Number(m[2]);
  const day = Number(m[3]);
  const hour = Number(m[4]);
  const minute = Number(m[5]);
  const second = m[6] === undefined ? 0 : Number(m[6]);
  if (
    year < 1900 ||
    month < 1 ||
    month > 12 ||
    day < 1 ||
    day > daysIn(year, month) ||
    hour > 23 ||
    minute > 59 ||
    second > 59
  ) {
    return {
      ok: false,
      rule: 'is not a valid calendar date and time (year from 1900, month 1–12, day of the month, 00:00–23:59:59)',
    };
  }
  let frac = 0;
  if (m[7] !== undefined) frac = Math.round(Number(`0.${m[7]}`) * 1000);
  const wall = Date.UTC(year, month - 1, day, hour, minute, second) + frac;
  if (m[8] !== undefined) return { ok: true, ms: wall };
  if (m[9] !== undefined) {
    const oh = Number(m[10]);
    const om = m[11] === undefined ? 0 : Number(m[11]);
    if (oh > 14 || om > 59) return { ok: false, rule: 'has an offset outside -14:00 … +14:00' };
    const off = (m[9] === '-' ? -1 : 1) * (oh * 60 + om) * 60_000;
    return { ok: true, ms: wall - off };
  }
  if (!zone) {
    return {
      ok: false,
      rule: 'has no offset: add Z or ±HH:MM to each time, or declare the zone in the file (# zone: Europe/Berlin)',
    };
  }
  return wallToUtc(wall, zone);
}
