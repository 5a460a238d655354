import type { Db } from './db.ts';
import { writeTransaction } from './writer.ts';

export function getSetting(db: Db, key: string): string | undefined {
  const row = db.prepare('SELECT value FROM settings WHERE key = ?').get(key) as
    | { value: string }
    | undefined;
  return row?.value;
}

export function setSetting(db: Db, key: string, value: string): void {
  writeTransaction(db, () =>
    db
      .prepare(
        `INSERT INTO settings (key, value, updated_at) VALUES (?, ?, ?)
     ON CONFLICT(key) DO UPDATE SET value = excluded.value, updated_at = excluded.updated_at`,
      )
      .run(key, value, new Date().toISOString()),
  );
}

/** The installation's clock setting: a fixed "now" for assessments (the demo sets it). */
export const CLOCK_SETTING = 'clock.as_of';

/** The installation's assessment clock in UTC ms, or null when it follows the real time. */
export function installationClockMs(db: Db): number | null {
  const v = getSetting(db, CLOCK_SETTING)?.trim();
  if (v === undefined || v === '') return null;
  const t = /^\d+$/.test(v) ? Number(v) : Date.parse(v);
  return Number.isFinite(t) ? t : null;
}

/**
 * The time the pages assess at when none is given: the installation's clock, else now floored to
 * the minute (so that a page and its swaps within a minute show the same figures), UTC ms.
 */
export function pageClockMs(db: Db): number {
  return installationClockMs(db) ?? Math.floor(Date.now() / 60_000) * 60_000;
}
