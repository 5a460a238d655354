/**
 * Lots and wafers: read helpers, and the one writer the scans and ledger imports share
 * (`ensureWafer`, `ensureLot`), so that both create lots and wafers the same way.
 *
 * Ids are the text the files use, stored and compared verbatim (byte for byte); they are data,
 * never markup: pages escape them like any other text.
 */
import type { Db } from './db.ts';

export interface LotRow {
  lotId: string;
  /** Product of the lot (set by a pairs import), or null. */
  productId: string | null;
  waferCount: number;
}

export interface WaferRow {
  waferId: string;
  lotId: string;
}

/** A lot, or null when unknown. */
export function readLot(db: Db, lotId: string): LotRow | null {
  const row = db
    .prepare(
      `SELECT l.id AS lotId, l.product_id AS productId,
              (SELECT COUNT(*) FROM wafers w WHERE w.lot_id = l.id) AS waferCount
         FROM lots l WHERE l.id = ?`,
    )
    .get(lotId) as LotRow | undefined;
  return row ?? null;
}

/** Every lot, by id. */
export function listLots(db: Db): LotRow[] {
  return db
    .prepare(
      `SELECT l.id AS lotId, l.product_id AS productId,
              (SELECT COUNT(*) FROM wafers w WHERE w.lot_id = l.id) AS waferCount
         FROM lots l ORDER BY l.id`,
    )
    .all() as LotRow[];
}

/** A wafer, or null when unknown. */
export function readWafer(db: Db, waferId: string): WaferRow | null {
  const row = db.prepare('SELECT id AS waferId, lot_id AS lotId FROM wafers WHERE id = ?').get(waferId) as
    | WaferRow
    | undefined;
  return row ?? null;
}

/** The wafers of a lot, by id. */
export function listWafers(db: Db, lotId: string): WaferRow[] {
  return db
    .prepare('SELECT id AS waferId, lot_id AS lotId FROM wafers WHERE lot_id = ? ORDER BY id')
    .all(lotId) as WaferRow[];
}

/**
 * A cached writer of lots and wafers for one import (one transaction): creates what is missing and
 * reports a wafer that already belongs to another lot.
 */
export interface LotWriter {
  /** Creates the lot if missing; true when it was created now. */
  ensureLot: (lotId: string) => boolean;
  /**
   * Creates the wafer (and its lot) if missing. Returns null when fine, or the lot the wafer
   * already belongs to when that is not `lotId`.
   */
  ensureWafer: (waferId: string, lotId: string) => { otherLot: string } | null;
  /** The lot of a known wafer (from the database or created by this writer), or null. */
  lotOf: (waferId: string) => string | null;
  created: { lots: number; wafers: number };
}

export function lotWriter(db: Db, importId: number): LotWriter {
  const getLot = db.prepare('SELECT 1 FROM lots WHERE id = ?').pluck();
  const insLot = db.prepare('INSERT INTO lots (id, product_id, created_import_id) VALUES (?, NULL, ?)');
  const getWafer = db.prepare('SELECT lot_id FROM wafers WHERE id = ?').pluck();
  const insWafer = db.prepare('INSERT INTO wafers (id, lot_id, created_import_id) VALUES (?, ?, ?)');
  const lots = new Set<string>();
  const wafers = new Map<string, string>();
  const created = { lots: 0, wafers: 0 };
  const ensureLot = (lotId: string): boolean => {
    if (lots.has(lotId)) return false;
    lots.add(lotId);
    if (getLot.get(lotId) !== undefined) return false;
    insLot.run(lotId, importId);
    created.lots++;
    return true;
  };
  const lotOf = (waferId: string): string | null => {
    const cached = wafers.get(waferId);
    if (cached !== undefined) return cached;
    const lot = getWafer.get(waferId) as string | undefined;
    if (lot === undefined) return null;
    wafers.set(waferId, lot);
    return lot;
  };
  return {
    created,
    ensureLot,
    lotOf,
    ensureWafer: (waferId, lotId) => {
      const lot = lotOf(waferId);
      if (lot !== null) return lot === lotId ? null : { otherLot: lot };
      ensureLot(lotId);
      insWafer.run(waferId, lotId, importId);
      wafers.set(waferId, lotId);
      created.wafers++;
      return null;
    },
  };
}
