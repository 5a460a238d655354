/**
 * The assessment time ("as of") as people type it — on the command line (`--as-of`), in a page's
 * address (`?asOf=`) or in the API — read in one place, so that every face of the product accepts
 * and refuses the same texts with the same reason.
 *
 * Accepted: UTC milliseconds since 1970-01-01T00:00Z (digits only), or an ISO 8601 date and time
 * with its zone: `2026-10-18T19:00Z`, `2026-10-18T19:00:00.5+02:00` (seconds and a fraction
 * optional; the zone as Z, ±hh:mm or ±hhmm). The calendar is checked (no 30 February, no 24:00).
 * The time must lie from 1970-01-01T00:00Z (inclusive) to 2100-01-01T00:00Z (exclusive): an
 * assessment of wafers before the Unix epoch or generations ahead means a typing error, and the
 * engine's exposure sums are not meant for centuries of waiting.
 */

/** Earliest accepted assessment time, UTC ms (1970-01-01T00:00:00Z). */
export const AS_OF_MIN_MS = 0;
/** First refused assessment time after the accepted range, UTC ms (2100-01-01T00:00:00Z). */
export const AS_OF_END_MS = Date.UTC(2100, 0, 1);

/** The accepted forms and range, in words, for messages and help texts. */
export const AS_OF_FORMS =
  'UTC milliseconds or an ISO 8601 time with its zone (e.g. 2026-10-18T19:00Z or 2026-10-18T21:00+02:00), from 1970-01-01T00:00Z up to (not including) 2100-01-01T00:00Z';

export type AsOfText = { ok: true; ms: number } | { ok: false; reason: string };

const ISO =
  /^(\d{4})-(\d{2})-(\d{2})[Tt ](\d{2}):(\d{2})(?::(\d{2})(?:[.,](\d{1,9}))?)?(?:([Zz])|([+-])(\d{2}):?(\d{2}))$/;

function daysIn(year: number, month: number): number {
  return new Date(Date.UTC(year, month, 0)).getUTCDate();
}

/**
 * Reads an assessment time. Never throws; a refusal says why, in words a person can act on.
 *
 * @example parseAsOfText('2026-10-18T19:00Z') // { ok: true, ms: 1792350000000 }
 * @example parseAsOfText('1e300') // { ok: false, reason: 'is not a time: …' }
 */
export function parseAsOfText(text: string): AsOfText {
  const t = text.trim();
  if (t === '') return { ok: false, reason: `is empty; give ${AS_OF_FORMS}` };
  let ms: number;
  if (/^\d+$/.test(t)) {
    ms = Number(t);
  } else {
    const m = ISO.exec(t);
    if (!m) {
      const zoneless = /^\d{4}-\d{2}-\d{2}[Tt ]\d{2}:\d{2}(:\d{2}([.,]\d+)?)?$/.test(t);
      return {
        ok: false,
        reason: zoneless
          ? `"${t}" has no zone: add Z for UTC or the offset (e.g. +02:00)`
          : `"${t}" is not a time: give ${AS_OF_FORMS}`,
      };
    }
    const [year, month, day, hour, minute] = [m[1], m[2], m[3], m[4], m[5]].map(Number) as [
      number,
      number,
      number,
      number,
      number,
    ];
    const second = m[6] === undefined ? 0 : Number(m[6]);
    if (
      month < 1 ||
      month > 12 ||
      day < 1 ||
      day > daysIn(year, month) ||
      hour > 23 ||
      minute > 59 ||
      second > 59
    )
      return {
        ok: false,
        reason: `"${t}" is not a calendar date and time (month 1–12, a day of that month, 00:00–23:59:59)`,
      };
    const frac = m[7] === undefined ? 0 : Math.floor(Number(`0.${m[7]}`) * 1000);
    let offsetMin = 0;
    if (m[9] !== undefined) {
      const oh = Number(m[10]);
      const om = Number(m[11]);
      if (oh > 23 || om > 59) return { ok: false, reason: `"${t}" has an impossible zone offset` };
      offsetMin = (m[9] === '-' ? -1 : 1) * (oh * 60 + om);
    }
    ms = Date.UTC(year, month - 1, day, hour, minute, second, frac) - offsetMin * 60_000;
  }
  if (!Number.isSafeInteger(ms) || ms < AS_OF_MIN_MS || ms >= AS_OF_END_MS)
    return {
      ok: false,
      reason: `"${t.length > 40 ? `${t.slice(0, 40)}…` : t}" is outside the accepted range: the time must be from 1970-01-01T00:00Z up to (not including) 2100-01-01T00:00Z`,
    };
  return { ok: true, ms };
}
