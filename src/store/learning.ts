/**
 * Read helpers for learning from the line's own scans (src/engine/learn): every stored scan header
 * at once, and where a scan or a ledger row came from (file name and line), so that a message about
 * a pass can name its records.
 */
import type { Db } from './db.ts';
import type { ScanHeader } from './scans.ts';

/** Every scan header, by wafer then time (ties by the order stored). */
export function listAllScanHeaders(db: Db): ScanHeader[] {
  return db
    .prepare(
      `SELECT s.id AS rowId, s.scan_key AS scanId, s.wafer_id AS waferId, w.lot_id AS lotId, s.step, s.tool_id AS toolId,
         s.chamber, s.recipe, s.film, s.time_ms AS timeMs, s.time_text AS timeText, s.wafer_diameter_m AS waferDiameterM,
         s.edge_exclusion_m AS edgeExclusionM, s.threshold_m AS thresholdM, s.convention, s.defect_count AS defectCount,
         s.import_id AS importId
         FROM scans s JOIN wafers w ON w.id = s.wafer_id ORDER BY s.wafer_id, s.time_ms, s.id`,
    )
    .all() as ScanHeader[];
}

/** Where a stored record came from: the imported file's name and the record's line in it. */
export interface RecordSource {
  fileName: string;
  line: number;
}

/** The file and line of a scan's header row, or null when no scan has that id. */
export function scanSource(db: Db, scanId: string): RecordSource | null {
  const r = db
    .prepare(
      'SELECT i.file_name AS fileName, s.line AS line FROM scans s JOIN imports i ON i.id = s.import_id WHERE s.scan_key = ?',
    )
    .get(scanId) as RecordSource | undefined;
  return r ?? null;
}

/** The file and line of a ledger row (LedgerStep.rowId), or null when there is none. */
export function ledgerRowSource(db: Db, rowId: number): RecordSource | null {
  const r = db
    .prepare(
      'SELECT i.file_name AS fileName, l.line AS line FROM ledger_steps l JOIN imports i ON i.id = l.import_id WHERE l.id = ?',
    )
    .get(rowId) as RecordSource | undefined;
  return r ?? null;
}
