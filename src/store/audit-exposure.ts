/**
 * Ledger reads for the contamination audit: the wafers whose ledger steps put them in a location's
 * air during an interval, with the carrier state, the overlap and the pair each wafer is in.
 */
import type { Db } from './db.ts';

export interface ExposedStep {
  waferId: string;
  lotId: string;
  step: string;
  carrier: 'open' | 'closed' | 'purged';
  /** Overlap of the step with the interval, UTC ms (a running step ends at the interval's end). */
  fromMs: number;
  toMs: number;
  pairId: string | null;
}

function tableExists(db: Db, name: string): boolean {
  return db.prepare("SELECT 1 FROM sqlite_master WHERE type = 'table' AND name = ?").get(name) !== undefined;
}

/**
 * Ledger steps at `locationId` overlapping [fromMs, toMs) with the wafer outside a tool (open,
 * closed or purged carrier); a lot-level step (no wafer) stands for every wafer of its lot. One row
 * per wafer and step, ordered by lot, wafer, start.
 */
export function exposedSteps(db: Db, locationId: string, fromMs: number, toMs: number): ExposedStep[] {
  if (!tableExists(db, 'ledger_steps')) return [];
  const rows = db
    .prepare(
      `SELECT ls.lot_id AS lotId, ls.wafer_id AS waferId, ls.step AS step, ls.carrier AS carrier,
              ls.start_ms AS startMs, ls.end_ms AS endMs
         FROM ledger_steps ls
        WHERE ls.location_id = ? AND ls.carrier <> 'in-tool'
          AND ls.start_ms < ? AND (ls.end_ms IS NULL OR ls.end_ms > ?)
        ORDER BY ls.lot_id, ls.wafer_id, ls.start_ms`,
    )
    .all(locationId, Math.round(toMs), Math.round(fromMs)) as {
    lotId: string;
    waferId: string | null;
    step: string;
    carrier: ExposedStep['carrier'];
    startMs: number;
    endMs: number | null;
  }[];
  const hasPairs = tableExists(db, 'pairs');
  const pairOf = hasPairs
    ? db.prepare('SELECT id FROM pairs WHERE top_wafer_id = ? OR bottom_wafer_id = ?').pluck()
    : null;
  const wafersOf = db.prepare('SELECT id FROM wafers WHERE lot_id = ? ORDER BY id').pluck();
  const out: ExposedStep[] = [];
  for (const r of rows) {
    const wafers = r.waferId !== null ? [r.waferId] : (wafersOf.all(r.lotId) as string[]);
    for (const w of wafers)
      out.push({
        waferId: w,
        lotId: r.lotId,
        step: r.step,
        carrier: r.carrier,
        fromMs: Math.max(r.startMs, fromMs),
        toMs: Math.min(r.endMs ?? toMs, toMs),
        pairId: pairOf ? ((pairOf.get(w, w) as string | undefined) ?? null) : null,
      });
  }
  return out;
}
