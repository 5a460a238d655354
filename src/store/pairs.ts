/**
 * Bond pairs: which wafer goes on top of which, how the top wafer is placed (flip axis, rotation,
 * offset — see src/engine/geometry.ts for the mapping), on which bonder and when.
 */
import type { Db } from './db.ts';

export interface StoredPair {
  pairId: string;
  productId: string;
  lotId: string;
  topWaferId: string;
  bottomWaferId: string;
  /** 'y' maps the top wafer's (x, y) → (−x, y); 'x' maps (x, y) → (x, −y). */
  flipAxis: 'x' | 'y';
  /** Counter-clockwise, radians, applied after the flip. */
  rotationRad: number;
  offsetXM: number;
  offsetYM: number;
  bonderToolId: string | null;
  /** Planned bond time, UTC ms (the actual bond is the bond step of the ledger). */
  plannedBondMs: number | null;
  importId: number;
}

/** A row of `pairs` as stored. */
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
  import_id: number;
}

function pairOf(r: PairRow): StoredPair {
  return {
    pairId: r.id,
    productId: r.product_id,
    lotId: r.lot_id,
    topWaferId: r.top_wafer_id,
    bottomWaferId: r.bottom_wafer_id,
    flipAxis: r.flip_axis,
    rotationRad: r.rotation_rad,
    offsetXM: r.offset_x_m,
    offsetYM: r.offset_y_m,
    bonderToolId: r.bonder_tool_id,
    plannedBondMs: r.planned_bond_ms,
    importId: r.import_id,
  };
}

/** A pair, or null. */
export function readPair(db: Db, pairId: string): StoredPair | null {
  const r = db.prepare('SELECT * FROM pairs WHERE id = ?').get(pairId) as PairRow | undefined;
  return r ? pairOf(r) : null;
}

/** The pairs of a lot, by id. */
export function listPairsOfLot(db: Db, lotId: string): StoredPair[] {
  return (db.prepare('SELECT * FROM pairs WHERE lot_id = ? ORDER BY id').all(lotId) as PairRow[]).map(pairOf);
}

/** The pair a wafer is in (as top or bottom), or null. */
export function pairOfWafer(db: Db, waferId: string): StoredPair | null {
  const r = db
    .prepare('SELECT * FROM pairs WHERE top_wafer_id = ? OR bottom_wafer_id = ?')
    .get(waferId, waferId) as PairRow | undefined;
  return r ? pairOf(r) : null;
}

/** Every pair, by lot then id. */
export function listPairs(db: Db): StoredPair[] {
  return (db.prepare('SELECT * FROM pairs ORDER BY lot_id, id').all() as PairRow[]).map(pairOf);
}
