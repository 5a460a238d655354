/**
 * The rows of pairs and ledger steps as the engine's loader (src/engine/loader.ts) reads them for an
 * assessment: the stored columns as they are, which the loader turns into the engine's inputs. Each
 * read answers nothing (null, []) while its table does not exist yet (a database of an earlier
 * schema).
 */
import type { Db } from './db.ts';
import type { LedgerRow } from './ledger.ts';
import type { PairRow } from './pairs.ts';

/** A lot's ledger step as the loader reads it (the stored row without its import). */
export type LedgerStepRow = Omit<LedgerRow, 'import_id'>;

function tableExists(db: Db, name: string): boolean {
  return Boolean(db.prepare("SELECT 1 FROM sqlite_master WHERE type = 'table' AND name = ?").get(name));
}

export function readPairRow(db: Db, pairId: string): PairRow | null {
  if (!tableExists(db, 'pairs')) return null;
  return (db.prepare('SELECT * FROM pairs WHERE id = ?').get(pairId) as PairRow | undefined) ?? null;
}

/** A lot's ledger steps in time order (then by id). */
export function readLedgerRows(db: Db, lotId: string): LedgerStepRow[] {
  return db
    .prepare(
      `SELECT id, wafer_id, step, kind, tool_id, chamber, recipe, clean_id, location_id, carrier, orientation,
              start_ms, end_ms, reclean_count
         FROM ledger_steps WHERE lot_id = ? ORDER BY start_ms, id`,
    )
    .all(lotId) as LedgerStepRow[];
}

/** A lot's pairs in id order (the order of assessment). */
export function lotPairRows(db: Db, lotId: string): PairRow[] {
  return tableExists(db, 'pairs')
    ? (db.prepare('SELECT * FROM pairs WHERE lot_id = ? ORDER BY id').all(lotId) as PairRow[])
    : [];
}

/** The number of pairs of each lot that has any. */
export function pairCountsByLot(db: Db): Map<string, number> {
  if (!tableExists(db, 'pairs')) return new Map();
  const rows = db.prepare('SELECT lot_id AS lotId, COUNT(*) AS n FROM pairs GROUP BY lot_id').all() as {
    lotId: string;
    n: number;
  }[];
  return new Map(rows.map((r) => [r.lotId, r.n]));
}
