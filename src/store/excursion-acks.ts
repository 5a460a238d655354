/**
 * Acknowledgements of audit excursions (table excursion_acks, migration 0025): append-only; the
 * latest row of an excursion is its acknowledgement.
 */
import type { Db } from './db.ts';
import { writeTransaction } from './writer.ts';

export interface StoredAck {
  excursionId: string;
  comment: string;
  account: string;
  atMs: number;
}

/** Appends an acknowledgement. */
export function appendAck(db: Db, ack: StoredAck): StoredAck {
  writeTransaction(db, () => {
    db.prepare('INSERT INTO excursion_acks (excursion_id, comment, account, at_ms) VALUES (?, ?, ?, ?)').run(
      ack.excursionId,
      ack.comment,
      ack.account,
      ack.atMs,
    );
  });
  return ack;
}

/** The latest acknowledgement of each of the given excursions that has one. */
export function latestAcks(db: Db, excursionIds: readonly string[]): Map<string, StoredAck> {
  const out = new Map<string, StoredAck>();
  if (excursionIds.length === 0) return out;
  const exists = db
    .prepare("SELECT 1 FROM sqlite_master WHERE type = 'table' AND name = 'excursion_acks'")
    .get();
  if (!exists) return out;
  const rows = db
    .prepare(
      `SELECT excursion_id AS excursionId, comment, account, at_ms AS atMs FROM excursion_acks
        WHERE excursion_id IN (${excursionIds.map(() => '?').join(',')}) ORDER BY id`,
    )
    .all(...excursionIds) as StoredAck[];
  for (const r of rows) out.set(r.excursionId, r);
  return out;
}

/** Every acknowledgement of one excursion, oldest first. */
export function ackHistory(db: Db, excursionId: string): StoredAck[] {
  return db
    .prepare(
      'SELECT excursion_id AS excursionId, comment, account, at_ms AS atMs FROM excursion_acks WHERE excursion_id = ? ORDER BY id',
    )
    .all(excursionId) as StoredAck[];
}
