/**
 * The import pipeline: one file of one kind → validated, normalised rows in SQLite, atomically.
 *
 *   sha256 of the content ─► same (kind, sha256) already imported? → 'unchanged', nothing written
 *     (only when an earlier import of the kind had the file's size: otherwise the content is new,
 *      and the hash is taken while the file is parsed — one read — and stored at the end)
 *   BEGIN ─► metadata block ─► header (normalised, matched) ─► kind.begin(ctx)
 *         ─► for each row: cells trimmed, decimal comma handled, each cell through its zod schema
 *            (fast path first) ─► kind session.row() normalises to SI and stores
 *         ─► session.finish() (file-level checks, flag summary) ─► imports + import_flags rows
 *   COMMIT when the file is accepted; ROLLBACK otherwise (a rejected file leaves every table as it was).
 *
 * The write phase is synchronous (better-sqlite3 transactions cannot span an `await`), reading the
 * file in 64 KiB chunks: memory stays constant, and no other statement on the same connection can
 * slip into the transaction. A very large upload on the web server therefore holds the event loop
 * while it is written; run such imports in a worker thread with its own connection if that matters.
 */
import { createHash } from 'node:crypto';
import { createReadStream, statSync } from 'node:fs';
import { basename } from 'node:path';
import type { Db } from '../store/db.ts';
import { withOwnKeyChecks } from '../store/key-checks.ts';
import { writeTransaction } from '../store/writer.ts';
import { type ByteSource, CsvReader, fileSource } from './csv.ts';
import { countingRawText, readRows, startCsv } from './csv-rows.ts';
import { importConfigSource } from './kinds/config-import.ts';
import { getKind } from './kinds/index.ts';
import { importedWithSize, setImportSha256, startReport } from './report.ts';
import type {
  FileContext,
  ImportFlag,
  ImportIssue,
  ImportKind,
  ImportOptions,
  ImportReport,
  KindIssue,
} from './types.ts';

export const DEFAULT_MAX_ISSUES = 10_000;

/** I/O problems (missing file, unreadable) — not a verdict on the content. */
export class ImportFileError extends Error {
  override readonly name = 'ImportFileError';
}

/** Why a file could not be read, in words (the system's code in brackets). */
function readProblem(e: unknown): string {
  const code = (e as NodeJS.ErrnoException).code;
  const words: Record<string, string> = {
    ENOENT: 'no such file',
    EACCES: 'permission denied',
    EPERM: 'permission denied',
    EISDIR: 'it is a folder, not a file',
    ENOTDIR: 'a part of the path is not a folder',
    ELOOP: 'too many symbolic links',
    ENAMETOOLONG: 'the path is too long',
  };
  return code ? `${words[code] ?? 'the system refused'} (${code})` : String(e);
}

/** sha256 of a file's bytes, hex, streamed. */
export async function sha256File(path: string): Promise<string> {
  const h = createHash('sha256');
  await new Promise<void>((resolve, reject) => {
    const s = createReadStream(path, { highWaterMark: 1 << 20 });
    s.on('data', (b) => h.update(b));
    s.on('error', reject);
    s.on('end', () => resolve());
  });
  return h.digest('hex');
}

export function sha256Text(text: string | Buffer): string {
  return createHash('sha256').update(text).digest('hex');
}

/**
 * Imports one file (docs/architecture.md, the import contract). Resolves with the report; rejects
 * only for I/O failures (ImportFileError) and internal errors — a bad file is a 'rejected' report.
 */
export async function importFile(db: Db, opts: ImportOptions): Promise<ImportReport> {
  const kind = getKind(opts.kind);
  if (!kind) throw new ImportFileError(`unknown import kind "${opts.kind}"`);
  let bytes: number;
  try {
    const st = statSync(opts.path);
    if (!st.isFile()) throw new ImportFileError(`${opts.path} is not a file`);
    bytes = st.size;
  } catch (e) {
    if (e instanceof ImportFileError) throw e;
    throw new ImportFileError(`cannot read ${opts.path}: ${readProblem(e)}`);
  }
  // Same content means same size: the hash is needed before the import only when an earlier import
  // of this kind had this size (and always for the small JSON configuration files); otherwise it is
  // taken while the file is parsed, so that the file is read once.
  const sha256 = kind.config || importedWithSize(db, kind.name, bytes) ? await sha256File(opts.path) : null;
  return importSource(db, kind, {
    ...opts,
    displayName: opts.displayName ?? basename(opts.path),
    sha256,
    bytes,
    open: () => fileSource(opts.path),
  });
}

export interface SourceImportOptions extends Omit<ImportOptions, 'kind' | 'path'> {
  displayName: string;
  /**
   * The content's sha256 when known beforehand (then checked against the bytes read, and a file
   * imported before is 'unchanged'); null: taken while reading, the same check made at the end.
   */
  sha256: string | null;
  bytes: number;
  open: () => ByteSource;
}

class Rejection {
  constructor(readonly report: ImportReport) {}
}

/** The synchronous core of importFile, on any byte source (tests use buffers). */
export function importSource(db: Db, kind: ImportKind, opts: SourceImportOptions): ImportReport {
  if (kind.config) {
    if (opts.sha256 === null)
      throw new Error(`${kind.name}: a configuration file's sha256 is needed beforehand`);
    return importConfigSource(db, kind, { ...opts, sha256: opts.sha256 });
  }
  const file = opts.displayName;
  const { report, unchanged } = startReport(db, kind.name, opts);
  if (unchanged) return report;
  const maxIssues = opts.maxIssues ?? DEFAULT_MAX_ISSUES;
  let unlisted = 0;
  const addIssue = (i: KindIssue) => {
    if (report.issues.length < maxIssues) report.issues.push({ file, ...i });
    else unlisted++;
  };
  const finishIssues = () => {
    if (unlisted > 0) {
      report.issues.push({
        file,
        line: 0,
        column: null,
        value: null,
        rule: `${unlisted} further issues not listed (the first ${maxIssues} are)`,
      });
    }
  };
  const now = (opts.now ?? (() => new Date()))().toISOString();
  const hash = createHash('sha256');
  const inner = opts.open();
  const source: ByteSource = {
    size: inner.size,
    read: (buf) => {
      const n = inner.read(buf);
      if (n > 0) hash.update(buf.subarray(0, n));
      return n;
    },
    close: () => inner.close(),
  };
  const reader = new CsvReader(source, {
    onProgress: (bytesRead, bytesTotal) =>
      opts.onProgress?.({ bytesRead, bytesTotal, rows: report.rowsRead }),
  });
  // A kind that checks every foreign key itself (once per distinct key) spares SQLite's per-row look-ups.
  const write = (body: () => void) =>
    kind.ownKeyChecks ? withOwnKeyChecks(db, () => writeTransaction(db, body)) : writeTransaction(db, body);
  try {
    write(() => {
      runInTransaction(db, kind, reader, report, addIssue, now, opts.acceptValidRows === true);
      if (report.status === 'rejected') {
        finishIssues();
        if (opts.sha256 === null) {
          readToEnd(source);
          report.sha256 = hash.digest('hex');
        }
        throw new Rejection(report);
      }
      // An accepted file was read to its end: the bytes stored are the bytes hashed.
      readToEnd(source);
      const digest = hash.digest('hex');
      if (opts.sha256 !== null && digest !== opts.sha256) {
        throw new ImportFileError(`${file} changed while it was being imported; import it again`);
      }
      if (opts.sha256 === null) {
        // Hashed while read: the same content imported meanwhile (by another process, before this
        // transaction took the write lock) makes this one 'unchanged' — rolled back, nothing kept.
        const before = startReport(db, kind.name, { ...opts, sha256: digest });
        if (before.unchanged) throw new Rejection(before.report);
        report.sha256 = digest;
        setImportSha256(db, report.importId!, digest);
      }
      finishIssues();
      db.prepare('UPDATE imports SET issues = ? WHERE id = ?').run(
        JSON.stringify(report.issues),
        report.importId,
      );
    });
  } catch (e) {
    if (e instanceof Rejection && e.report !== report) return e.report;
    if (e instanceof Rejection) {
      report.importId = null;
      report.rowsStored = 0;
      report.flags = [];
      return report;
    }
    throw e;
  } finally {
    reader.close();
  }
  opts.onProgress?.({ bytesRead: reader.bytesRead, bytesTotal: reader.size, rows: report.rowsRead });
  return report;
}

function readToEnd(source: ByteSource): boolean {
  const buf = Buffer.allocUnsafe(1 << 16);
  while (source.read(buf) > 0) {}
  return true;
}

function runInTransaction(
  db: Db,
  kind: ImportKind,
  reader: CsvReader,
  report: ImportReport,
  addIssue: (i: KindIssue) => void,
  now: string,
  acceptValidRows: boolean,
): void {
  // 1. Metadata and header.
  const start = startCsv(kind, reader, addIssue, report);
  if (!start || report.issues.length > 0) return;
  const { meta, dialect, header, decimal } = start;

  // 2. The imports row (its id is the foreign key of every stored row).
  const info = db
    .prepare(
      `INSERT INTO imports (kind, file_name, sha256, status, bytes, rows_read, rows_stored, rows_rejected, duplicates,
         dialect, metadata, notes, issues, imported_at)
       VALUES (?, ?, ?, 'imported', ?, 0, 0, 0, 0, ?, ?, '[]', '[]', ?)`,
    )
    .run(
      kind.name,
      report.file,
      report.sha256,
      report.bytes,
      JSON.stringify(dialect),
      JSON.stringify(Object.fromEntries(meta.entries)),
      now,
    );
  const importId = Number(info.lastInsertRowid);
  report.importId = importId;

  const ctx: FileContext = {
    db,
    kind: kind.name,
    file: report.file,
    importId,
    metadata: meta.entries,
    metadataLines: meta.lines,
    units: meta.units,
    dialect,
    header: header.columns,
    headerLine: reader.headerLine,
  };
  if (!kind.begin) throw new Error(`import kind ${kind.name} has no CSV reader (begin)`);
  const begun = kind.begin(ctx);
  if (Array.isArray(begun)) {
    for (const i of begun) addIssue(i);
    if (begun.length > 0) return;
  }
  const session = Array.isArray(begun) ? null : begun;
  if (!session) return;

  // 3. Rows (the kind's fast path on raw cells first, when it has one; the plain reader for kinds
  // that need no raw cells).
  const rawRow = session.rawRow;
  const takeRaw =
    rawRow === undefined
      ? undefined
      : (cells: readonly string[], line: number) => {
          if (!rawRow(cells, line)) return false;
          report.rowsRead++;
          report.rowsStored++;
          return true;
        };
  const readOn = readRows(
    reader,
    start,
    addIssue,
    (parsed, line, cells) => {
      report.rowsRead++;
      if (Array.isArray(parsed)) {
        report.rowsRejected++;
        for (const i of parsed) addIssue(i);
        return;
      }
      const out = session.row(parsed, line, cells);
      if (out === undefined || out === 'stored') report.rowsStored++;
      else if (out === 'duplicate') report.duplicates++;
      else {
        report.rowsRejected++;
        for (const i of out) addIssue(i);
      }
    },
    takeRaw,
    kind.plainRows !== true,
    countingRawText(session.rawText, report),
  );
  if (decimal.note) report.notes.push(decimal.note);
  dialect.decimal = decimal.mode === ',' ? ',' : '.';
  dialect.decimalSource = decimal.source;
  if (!readOn) return;
  if (report.rowsRead === 0 && !kind.allowNoRows) {
    addIssue({
      line: reader.headerLine,
      column: null,
      value: null,
      rule: 'the file has a header but no data rows',
    });
    return;
  }

  // 4. File-level checks and the flag summary (only over rows that can be stored: checks across
  // rows would otherwise repeat the rejected rows' problems in other words).
  if (report.rowsRejected > 0 && !acceptValidRows) return;
  const fin = session.finish();
  for (const n of fin.notes ?? []) report.notes.push(n);
  if (fin.issues && fin.issues.length > 0) {
    for (const i of fin.issues) addIssue(i);
    return;
  }
  if (fin.updated) report.notes.push(`${fin.updated} existing rows updated`);
  report.flags = fin.flags ?? [];
  if (report.rowsRejected > 0 && !(acceptValidRows && report.rowsStored + report.duplicates > 0)) return;
  report.status = report.rowsRejected > 0 ? 'partial' : 'imported';
  if (report.duplicates > 0 && !report.flags.some((f) => f.code === 'duplicate')) {
    report.flags.push({
      code: 'duplicate',
      count: report.duplicates,
      detail: `${report.duplicates} rows repeat a key already stored; the first copy was kept`,
    });
  }
  const flagStmt = db.prepare(
    'INSERT INTO import_flags (import_id, code, count, detail) VALUES (?, ?, ?, ?)',
  );
  for (const f of report.flags) flagStmt.run(importId, f.code, f.count, f.detail);
  db.prepare(
    `UPDATE imports SET status = ?, rows_read = ?, rows_stored = ?, rows_rejected = ?, duplicates = ?, dialect = ?,
       notes = ? WHERE id = ?`,
  ).run(
    report.status,
    report.rowsRead,
    report.rowsStored,
    report.rowsRejected,
    report.duplicates,
    JSON.stringify(dialect),
    JSON.stringify(report.notes),
    importId,
  );
}

export type { CsvReadResult } from './csv-rows.ts';
export { DecimalState, readCsvSource } from './csv-rows.ts';
export type { ImportFlag, ImportIssue };
