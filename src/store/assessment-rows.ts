/**
 * The rows of pairs and ledger steps as the engine's loader (src/engine/loader.ts) reads them for an
 * assessment: the stored columns as they are, which the loader turns into the engine's inputs. Each
 * read answers nothing (null, []) while its table does not exist yet (a database of an earlier
 * schema).
 */
import type { Db } from './db.ts';
import type { CarrierState, FaceOrientation } from './ledger.ts';
import type { StepKind } from './products.ts';

export interface PairRow {
  id: string;
  product_id: string;
  lot_id: string;
  top_wafer_id: string;
  bottom_wafer_id: string;
  flip_axis: 'x' | 'y';
  rotation_rad: number;
  offset_x_m: number;
  offset_y_m: number;
  bonder_tool_id: string | null;
  planned_bond_ms: number | null;
}

export interface LedgerRow {
  id: number;
  wafer_id: string | null;
  step: string;
  kind: StepKind;
  tool_id: string | null;
  chamber: string | null;
  recipe: string | null;
  clean_id: string | null;
  location_id: string | null;
  carrier: CarrierState;
  orientation: FaceOrientation;
  start_ms: number;
  end_ms: number | null;
  reclean_count: number;
}

function tableExists(db: Db, name: string): boolean {
  return Boolean(db.prepare("SELECT 1 FROM sqlite_master WHERE type = 'table' AND name = ?").get(name));
}

export function readPairRow(db: Db, pairId: string): PairRow | null {
  if (!tableExists(db, 'pairs')) return null;
  return (db.prepare('SELECT * FROM pairs WHERE id = ?').get(pairId) as PairRow | undefined) ?? null;
}

/** A lot's ledger steps in time order (then by id). */
export function readLedgerRows(db: Db, lotId: string): LedgerRow[] {
  return db
    .prepare(
      `SELECT id, wafer_id, step, kind, tool_id, chamber, recipe, clean_id, location_id, carrier, orientation,
              start_ms, end_ms, reclean_count
         FROM ledger_steps WHERE lot_id = ? ORDER BY start_ms, id`,
    )
    .all(lotId) as LedgerRow[];
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
