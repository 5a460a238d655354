/**
 * Read helper for the Tools & cleans page (owned by the pages): how many ledger steps ran on each
 * tool and chamber (migration 0014 ledger). A lot-level step counts once per wafer of its lot.
 */
import type { Db } from './db.ts';

/** Wafer passes per tool key (`toolId`, and `toolId/chamber` for steps that name a chamber). */
export function ledgerPassesByTool(db: Db): Map<string, number> {
  const out = new Map<string, number>();
  const exists = db
    .prepare("SELECT 1 FROM sqlite_master WHERE type = 'table' AND name = 'ledger_steps'")
    .get();
  if (!exists) return out;
  const rows = db
    .prepare(
      `SELECT ls.tool_id AS toolId, ls.chamber AS chamber,
              SUM(CASE WHEN ls.wafer_id IS NULL THEN (SELECT COUNT(*) FROM wafers w WHERE w.lot_id = ls.lot_id) ELSE 1 END) AS n
         FROM ledger_steps ls WHERE ls.tool_id IS NOT NULL GROUP BY ls.tool_id, ls.chamber`,
    )
    .all() as { toolId: string; chamber: string | null; n: number }[];
  for (const r of rows) {
    out.set(r.toolId, (out.get(r.toolId) ?? 0) + r.n);
    if (r.chamber) out.set(`${r.toolId}/${r.chamber}`, (out.get(`${r.toolId}/${r.chamber}`) ?? 0) + r.n);
  }
  return out;
}
