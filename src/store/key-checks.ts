/**
 * SQLite's own foreign-key checks, set aside for one write by a caller that checks every key itself.
 *
 * SQLite looks up the parent row of every foreign key of every row written (four per counter sample:
 * location, counter, channel set, import), although the counter-sample import has already resolved
 * each of them once per distinct key (the location and counter by name, the channel set and import
 * row it has just written) inside the same write transaction, which holds the write lock, so no other
 * connection can remove a parent meanwhile. Measured on 10⁶ samples (bench/import.ts), the checks
 * cost about a tenth of the insert's CPU time.
 *
 * The setting belongs to the connection and cannot change inside a transaction (SQLite ignores it
 * there), so it is changed before the transaction begins and put back afterwards, also when the
 * write throws. Inside an outer transaction nothing changes and SQLite keeps checking. Atomicity and
 * durability are untouched: the write is still one transaction, committed or rolled back whole.
 */
import type { Db } from './db.ts';

/** Runs `write` (which opens its own transaction) without SQLite's per-row foreign-key look-ups. */
export function withOwnKeyChecks<T>(db: Db, write: () => T): T {
  const was = db.pragma('foreign_keys', { simple: true }) === 1;
  if (!was || db.inTransaction) return write();
  db.pragma('foreign_keys = OFF');
  try {
    return write();
  } finally {
    db.pragma('foreign_keys = ON');
  }
}
