/**
 * Read helpers for the home page: row counts of the main tables and the imports per kind with their
 * data-quality flags. Tolerant of a database whose schema lacks a table yet (0, an empty list).
 */
import type { Db } from './db.ts';

/** The tables whose rows the home page counts. */
export type CountedTable = 'lots' | 'pairs' | 'locations' | 'counter_samples' | 'scans' | 'imports';

function hasTable(db: Db, name: string): boolean {
  return db.prepare("SELECT 1 FROM sqlite_master WHERE type = 'table' AND name = ?").get(name) !== undefined;
}

/** Row count of a table, 0 while the table does not exist yet (an earlier schema). */
export function rowCount(db: Db, table: CountedTable): number {
  if (!hasTable(db, table)) return 0;
  return (db.prepare(`SELECT COUNT(*) AS n FROM "${table}"`).get() as { n: number }).n;
}

export interface ImportsOfKind {
  kind: string;
  files: number;
  rows: number;
  duplicates: number;
  flags: number;
  /** ISO UTC of the latest import of this kind, as stored. */
  lastAt: string;
}

/** Files, rows stored, duplicates and data-quality flags per import kind, in the order kinds first came. */
export function importsByKind(db: Db): ImportsOfKind[] {
  if (!hasTable(db, 'import_flags')) return [];
  return db
    .prepare(
      `SELECT i.kind AS kind, COUNT(*) AS files, SUM(i.rows_stored) AS rows, SUM(i.duplicates) AS duplicates,
              COALESCE(SUM((SELECT SUM(f.count) FROM import_flags f WHERE f.import_id = i.id)), 0) AS flags,
              MAX(i.imported_at) AS lastAt
         FROM imports i GROUP BY i.kind ORDER BY MIN(i.id)`,
    )
    .all() as ImportsOfKind[];
}
