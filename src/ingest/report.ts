/**
 * The start every import shares: an empty report for a file, and the idempotency check — a file
 * whose content (sha256) was already imported as this kind changes nothing and says so.
 */
import { randomUUID } from 'node:crypto';
import type { Db } from '../store/db.ts';
import type { ImportKindName, ImportReport } from './types.ts';

interface PreviousImport {
  id: number;
  file_name: string;
  imported_at: string;
}

/**
 * A fresh report for `file` (status 'rejected' until the import succeeds), or — when the same content
 * was imported before as this kind — the finished 'unchanged' report naming the earlier import.
 */
export function startReport(
  db: Db,
  kind: ImportKindName,
  opts: { displayName: string; sha256: string | null; bytes: number },
): { report: ImportReport; unchanged: boolean } {
  const report: ImportReport = {
    file: opts.displayName,
    kind,
    // Not known yet when it is taken while the file is read: a placeholder unique to this import
    // (imports has UNIQUE (kind, sha256)) until the end of the file.
    sha256: opts.sha256 ?? `reading:${randomUUID()}`,
    status: 'rejected',
    rowsRead: 0,
    rowsStored: 0,
    rowsRejected: 0,
    duplicates: 0,
    issues: [],
    flags: [],
    importId: null,
    notes: [],
    dialect: null,
    bytes: opts.bytes,
  };
  if (opts.sha256 === null) return { report, unchanged: false };
  const prev = db
    .prepare('SELECT id, file_name, imported_at FROM imports WHERE kind = ? AND sha256 = ?')
    .get(kind, opts.sha256) as PreviousImport | undefined;
  if (!prev) return { report, unchanged: false };
  report.status = 'unchanged';
  report.importId = prev.id;
  report.notes.push(
    `same content as import #${prev.id} (${prev.file_name}, ${prev.imported_at}); nothing changed`,
  );
  return { report, unchanged: true };
}

/** Whether an earlier import of this kind had this size in bytes (only then can it have the same content). */
export function importedWithSize(db: Db, kind: ImportKindName, bytes: number): boolean {
  return (
    db.prepare('SELECT 1 FROM imports WHERE kind = ? AND bytes = ? LIMIT 1').get(kind, bytes) !== undefined
  );
}

/** Stores the content hash of an import that was hashed while it was read. */
export function setImportSha256(db: Db, importId: number, sha256: string): void {
  db.prepare('UPDATE imports SET sha256 = ? WHERE id = ?').run(sha256, importId);
}
