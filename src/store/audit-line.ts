/**
 * Reads for the line view of the contamination audit: the lots active in a period, and the search
 * by wafer, pair, lot, tool or location id (or a name's words).
 */
import type { Db } from './db.ts';

function tableExists(db: Db, name: string): boolean {
  return db.prepare("SELECT 1 FROM sqlite_master WHERE type = 'table' AND name = ?").get(name) !== undefined;
}

/** Lots with pairs and with a ledger step overlapping [fromMs, toMs), ordered by id. */
export function lotsActiveIn(db: Db, fromMs: number, toMs: number): string[] {
  if (!tableExists(db, 'ledger_steps') || !tableExists(db, 'pairs')) return [];
  return db
    .prepare(
      `SELECT DISTINCT ls.lot_id FROM ledger_steps ls
        WHERE ls.start_ms < ? AND (ls.end_ms IS NULL OR ls.end_ms >= ?)
          AND EXISTS (SELECT 1 FROM pairs p WHERE p.lot_id = ls.lot_id)
        ORDER BY ls.lot_id`,
    )
    .pluck()
    .all(Math.round(toMs), Math.round(fromMs)) as string[];
}

export type SearchKind = 'wafer' | 'pair' | 'lot' | 'tool' | 'location';

export interface SearchRow {
  kind: SearchKind;
  id: string;
  label: string;
}

/**
 * Ids that start with the text (case-insensitive), exact matches first, then names that contain it,
 * at most `limit` in all. The text is matched literally (LIKE wildcards in it are escaped).
 */
export function searchIds(db: Db, text: string, limit = 20): SearchRow[] {
  const q = text.trim();
  if (q.length === 0) return [];
  const esc = q.replace(/[\\%_]/g, (c) => `\\${c}`);
  const prefix = `${esc}%`;
  const inside = `%${esc}%`;
  const parts: string[] = [];
  const args: unknown[] = [];
  const add = (table: string, kind: SearchKind, idCol: string, labelSql: string, nameCol: string | null) => {
    if (!tableExists(db, table)) return;
    parts.push(
      `SELECT '${kind}' AS kind, ${idCol} AS id, ${labelSql} AS label,
              CASE WHEN lower(${idCol}) = lower(?) THEN 0 WHEN ${idCol} LIKE ? ESCAPE '\\' THEN 1 ELSE 2 END AS rank
         FROM ${table} WHERE ${idCol} LIKE ? ESCAPE '\\'${nameCol ? ` OR ${nameCol} LIKE ? ESCAPE '\\'` : ''}`,
    );
    args.push(q, prefix, prefix);
    if (nameCol) args.push(inside);
  };
  add('wafers', 'wafer', 'id', "'wafer of lot ' || lot_id", null);
  add('pairs', 'pair', 'id', "'pair of lot ' || lot_id", null);
  add('lots', 'lot', 'id', "'lot' || coalesce(' of ' || product_id, '')", null);
  add('tools', 'tool', "tool_id || CASE WHEN chamber <> '' THEN '/' || chamber ELSE '' END", 'name', 'name');
  add('locations', 'location', 'location_id', 'name', 'name');
  if (parts.length === 0) return [];
  return (
    db
      .prepare(`SELECT kind, id, label FROM (${parts.join(' UNION ALL ')}) ORDER BY rank, kind, id LIMIT ?`)
      .all(...args, limit) as SearchRow[]
  ).map((r) => ({ kind: r.kind, id: r.id, label: r.label }));
}
