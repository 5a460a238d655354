/**
 * The start every import shares: an empty report for a file, and the idempotency check — a file
 * whose content (sha256) was already imported as this kind changes nothing and says so.
 */
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
  opts: { displayName: string; sha256: string; bytes: number },
): { report: ImportReport; unchanged: boolean } {
  const report: ImportReport = {
    file: opts.displayName,
    kind,
    sha256: opts.sha256,
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
