/**
 * Read helpers for the Imports page: the history of imports with their data-quality flags,
 * from the `imports` and `import_flags` tables (written by the ingest pipeline).
 * Read-only; tolerant of a database whose schema does not have these tables yet (an empty list).
 */
import type { Db } from './db.ts';

export interface ImportHistoryRow {
  id: number;
  kind: string;
  fileName: string;
  sha256: string;
  status: 'imported' | 'partial' | 'rejected' | 'unchanged';
  bytes: number | null;
  rowsRead: number | null;
  rowsStored: number;
  rowsRejected: number | null;
  duplicates: number | null;
  /** ISO 8601 UTC, as stored. */
  importedAt: string;
  flags: { code: string; count: number; detail: string }[];
}

export interface StoredImport extends ImportHistoryRow {
  issues: { file: string; line: number; column: string | null; value: string | null; rule: string }[];
  notes: string[];
}

function hasTable(db: Db, name: string): boolean {
  return db.prepare("SELECT 1 FROM sqlite_master WHERE type = 'table' AND name = ?").get(name) !== undefined;
}

interface ImportRecord {
  id: number;
  kind: string;
  file_name: string;
  sha256: string;
  status: string;
  bytes: number | null;
  rows_read: number | null;
  rows_stored: number | null;
  rows_rejected: number | null;
  duplicates: number | null;
  imported_at: string;
}

const STATUSES = new Set(['imported', 'partial', 'rejected', 'unchanged']);

function toRow(r: ImportRecord, flags: ImportHistoryRow['flags']): ImportHistoryRow {
  return {
    id: r.id,
    kind: r.kind,
    fileName: r.file_name,
    sha256: r.sha256,
    status: (STATUSES.has(r.status) ? r.status : 'imported') as ImportHistoryRow['status'],
    bytes: r.bytes,
    rowsRead: r.rows_read,
    rowsStored: r.rows_stored ?? 0,
    rowsRejected: r.rows_rejected,
    duplicates: r.duplicates,
    importedAt: r.imported_at,
    flags,
  };
}

function flagsOf(db: Db, ids: number[]): Map<number, ImportHistoryRow['flags']> {
  const out = new Map<number, ImportHistoryRow['flags']>();
  if (ids.length === 0 || !hasTable(db, 'import_flags')) return out;
  const rows = db
    .prepare(
      `SELECT import_id, code, count, detail FROM import_flags
       WHERE import_id IN (SELECT value FROM json_each(?)) ORDER BY import_id, code`,
    )
    .all(JSON.stringify(ids)) as { import_id: number; code: string; count: number; detail: string }[];
  for (const r of rows) {
    const list = out.get(r.import_id) ?? [];
    list.push({ code: r.code, count: r.count, detail: r.detail });
    out.set(r.import_id, list);
  }
  return out;
}

/**
 * One page of the imports, newest first, with their flags, and how many there are in all (of the
 * kind asked for, when `kind` is given): `limit` rows from `offset`.
 */
export function listImportHistory(
  db: Db,
  opts: { limit?: number; offset?: number; kind?: string | null } = {},
): {
  rows: ImportHistoryRow[];
  total: number;
} {
  if (!hasTable(db, 'imports')) return { rows: [], total: 0 };
  const limit = Math.max(1, Math.min(1000, Math.trunc(opts.limit ?? 50)));
  const offset = Math.max(0, Math.trunc(opts.offset ?? 0));
  const kind = opts.kind ?? null;
  const records = db
    .prepare(
      `SELECT id, kind, file_name, sha256, status, bytes, rows_read, rows_stored, rows_rejected, duplicates, imported_at
       FROM imports WHERE (@kind IS NULL OR kind = @kind) ORDER BY imported_at DESC, id DESC LIMIT @limit OFFSET @offset`,
    )
    .all({ kind, limit, offset }) as ImportRecord[];
  const total = (
    db.prepare('SELECT COUNT(*) AS n FROM imports WHERE (@kind IS NULL OR kind = @kind)').get({ kind }) as {
      n: number;
    }
  ).n;
  const flags = flagsOf(
    db,
    records.map((r) => r.id),
  );
  return { rows: records.map((r) => toRow(r, flags.get(r.id) ?? [])), total };
}

/** One stored import with its listed issues (the rows left out of a partial import) and notes. */
export function getStoredImport(db: Db, id: number): StoredImport | null {
  if (!Number.isSafeInteger(id) || !hasTable(db, 'imports')) return null;
  const r = db
    .prepare(
      `SELECT id, kind, file_name, sha256, status, bytes, rows_read, rows_stored, rows_rejected, duplicates, imported_at,
              issues, notes
       FROM imports WHERE id = ?`,
    )
    .get(id) as (ImportRecord & { issues: string | null; notes: string | null }) | undefined;
  if (!r) return null;
  const parse = <T>(text: string | null, fallback: T): T => {
    if (!text) return fallback;
    try {
      const v = JSON.parse(text) as unknown;
      return Array.isArray(v) ? (v as T) : fallback;
    } catch {
      return fallback;
    }
  };
  return {
    ...toRow(r, flagsOf(db, [r.id]).get(r.id) ?? []),
    issues: parse(r.issues, []),
    notes: parse(r.notes, []),
  };
}

/**
 * The id of the latest import (null before any): it grows with every stored import, so a result
 * computed from imported data can be kept under it (the audit's excursion costs,
 * src/engine/audit/cost-loader.ts) and survive writes that change no input of it.
 */
export function latestImportId(db: Db): number | null {
  if (!hasTable(db, 'imports')) return null;
  return (db.prepare('SELECT max(id) AS m FROM imports').get() as { m: number | null }).m;
}
