/**
 * The exposure ledger: each wafer's route as steps in time, with the tool, the air and the shielding
 * of each step. A lot-level step (wafer_id NULL) applies to every wafer of its lot, whenever that
 * wafer becomes known, so the order in which files arrive does not matter.
 */
import type { Db } from './db.ts';
import type { StepKind } from './products.ts';

export type CarrierState = 'open' | 'closed' | 'purged' | 'in-tool';
export type FaceOrientation = 'face-up' | 'face-down' | 'vertical';

export const STEP_KIND_NAMES: readonly StepKind[] = [
  'process',
  'clean',
  'activation',
  'inspection',
  'wait',
  'transfer',
  'bond',
];
export const CARRIER_STATES: readonly CarrierState[] = ['open', 'closed', 'purged', 'in-tool'];
export const FACE_ORIENTATIONS: readonly FaceOrientation[] = ['face-up', 'face-down', 'vertical'];

/** One step as the engine takes it (the shape of LedgerStepInput in src/engine/types.ts) plus its source. */
export interface LedgerStep {
  /** Order within the wafer's route, 0-based, by start time (ties: file order). */
  seq: number;
  step: string;
  kind: StepKind;
  toolId: string | null;
  chamber: string | null;
  /** The clean the file names for this step (null: the loader resolves it from tool and recipe). */
  cleanId: string | null;
  recipe: string | null;
  startMs: number;
  endMs: number | null;
  locationId: string | null;
  carrier: CarrierState;
  orientation: FaceOrientation;
  /** Re-cleans the wafer had had when the step ran. */
  recleanCount: number;
  /** True when the step came from a lot-level row. */
  lotLevel: boolean;
  rowId: number;
  importId: number;
}

/** A row of `ledger_steps` as stored. */
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
  import_id: number;
}

/**
 * A wafer's ledger: its own steps and its lot's lot-level steps, ordered by start (ties by the order
 * the rows were stored), numbered from 0. Empty when the wafer is unknown.
 */
export function readLedger(db: Db, waferId: string): LedgerStep[] {
  const rows = db
    .prepare(
      `SELECT l.* FROM ledger_steps l JOIN wafers w ON w.id = ?
        WHERE l.wafer_id = w.id OR (l.wafer_id IS NULL AND l.lot_id = w.lot_id)
        ORDER BY l.start_ms, l.id`,
    )
    .all(waferId) as LedgerRow[];
  return rows.map((r, seq) => ({
    seq,
    step: r.step,
    kind: r.kind,
    toolId: r.tool_id,
    chamber: r.chamber,
    cleanId: r.clean_id,
    recipe: r.recipe,
    startMs: r.start_ms,
    endMs: r.end_ms,
    locationId: r.location_id,
    carrier: r.carrier,
    orientation: r.orientation,
    recleanCount: r.reclean_count,
    lotLevel: r.wafer_id === null,
    rowId: r.id,
    importId: r.import_id,
  }));
}

/** The most re-cleans any step of the wafer's ledger records (0 without steps). */
export function recleanCountOf(db: Db, waferId: string): number {
  let n = 0;
  for (const s of readLedger(db, waferId)) n = Math.max(n, s.recleanCount);
  return n;
}

// ——— writer (used by src/ingest/kinds/ledger.ts inside the import transaction) ———

export interface NewLedgerStep {
  lotId: string;
  waferId: string | null;
  step: string;
  kind: StepKind;
  toolId: string | null;
  chamber: string | null;
  recipe: string | null;
  cleanId: string | null;
  locationId: string | null;
  carrier: CarrierState;
  orientation: FaceOrientation;
  startMs: number;
  endMs: number | null;
  recleanCount: number;
  importId: number;
  line: number;
}

export interface LedgerWriter {
  /**
   * Stores a step; 'duplicate' when the same step (lot, wafer, step name, start) is stored with the
   * same values; { otherImport } when it is stored with other values.
   */
  add: (s: NewLedgerStep) => 'stored' | 'duplicate' | { otherImport: number; line: number };
}

export function ledgerWriter(db: Db): LedgerWriter {
  const find = db.prepare(
    `SELECT * FROM ledger_steps WHERE lot_id = ? AND ifnull(wafer_id, '') = ? AND step = ? AND start_ms = ?`,
  );
  const ins = db.prepare(
    `INSERT INTO ledger_steps (lot_id, wafer_id, step, kind, tool_id, chamber, recipe, clean_id, location_id, carrier,
       orientation, start_ms, end_ms, reclean_count, import_id, line)
     VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?)`,
  );
  return {
    add: (s) => {
      const old = find.get(s.lotId, s.waferId ?? '', s.step, s.startMs) as
        | (LedgerRow & { line: number })
        | undefined;
      if (old) {
        const same =
          old.kind === s.kind &&
          old.tool_id === s.toolId &&
          old.chamber === s.chamber &&
          old.recipe === s.recipe &&
          old.clean_id === s.cleanId &&
          old.location_id === s.locationId &&
          old.carrier === s.carrier &&
          old.orientation === s.orientation &&
          old.end_ms === s.endMs &&
          old.reclean_count === s.recleanCount;
        return same ? 'duplicate' : { otherImport: old.import_id, line: old.line };
      }
      ins.run(
        s.lotId,
        s.waferId,
        s.step,
        s.kind,
        s.toolId,
        s.chamber,
        s.recipe,
        s.cleanId,
        s.locationId,
        s.carrier,
        s.orientation,
        s.startMs,
        s.endMs,
        s.recleanCount,
        s.importId,
        s.line,
      );
      return 'stored';
    },
  };
}
