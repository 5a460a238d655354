/**
 * The import pipeline: one file of one kind → validated, normalised rows in SQLite, atomically.
 *
 *   sha256 of the content ─► same (kind, sha256) already imported? → 'unchanged', nothing written
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
import { writeTransaction } from '../store/writer.ts';
import { CELL_FAIL } from './cells.ts';
import { type ByteSource, CsvReadError, CsvReader, fileSource } from './csv.ts';
import { matchHeader } from './header.ts';
import { importConfigSource } from './kinds/config-import.ts';
import { getKind } from './kinds/index.ts';
import { parseMetadata } from './metadata.ts';
import { startReport } from './report.ts';
import type {
  Cell,
  CellContext,
  CsvDialect,
  FileContext,
  HeaderColumn,
  ImportFlag,
  ImportIssue,
  ImportKind,
  ImportOptions,
  ImportReport,
  KindIssue,
  ParsedRow,
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
  const sha256 = await sha256File(opts.path);
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
  sha256: string;
  bytes: number;
  open: () => ByteSource;
}

class Rejection {
  constructor(readonly report: ImportReport) {}
}

/** The synchronous core of importFile, on any byte source (tests use buffers). */
export function importSource(db: Db, kind: ImportKind, opts: SourceImportOptions): ImportReport {
  if (kind.config) return importConfigSource(db, kind, opts);
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
  try {
    writeTransaction(db, () => {
      runInTransaction(db, kind, reader, report, addIssue, now, opts.acceptValidRows === true);
      if (report.status === 'rejected') {
        finishIssues();
        throw new Rejection(report);
      }
      // An accepted file was read to its end: the bytes stored are the bytes hashed beforehand.
      readToEnd(source);
      if (hash.digest('hex') !== opts.sha256) {
        throw new ImportFileError(`${file} changed while it was being imported; import it again`);
      }
      finishIssues();
      db.prepare('UPDATE imports SET issues = ? WHERE id = ?').run(
        JSON.stringify(report.issues),
        report.importId,
      );
    });
  } catch (e) {
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

/** Cell plan of one header column. */
interface Slot {
  index: number;
  written: string;
  /** Canonical key in the parsed row (spec name, or the normalised header of a pattern column). */
  key: string;
  required: boolean;
  cell: Cell<unknown>;
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
  let md: ReturnType<typeof parseMetadata> | null = null;
  try {
    reader.readPreamble((lines) => {
      md = parseMetadata(lines, kind.metadata ?? [], kind.name);
      return md.delimiter;
    });
  } catch (e) {
    if (e instanceof CsvReadError) {
      addIssue({ line: e.line, column: null, value: null, rule: e.message });
      return;
    }
    throw e;
  }
  const meta = md as ReturnType<typeof parseMetadata> | null;
  if (!meta) throw new Error('metadata not parsed');
  for (const n of meta.notes) report.notes.push(n);
  for (const i of meta.issues) addIssue(i);
  const dialect: CsvDialect = {
    delimiter: reader.delimiter,
    decimal: meta.decimal ?? '.',
    delimiterSource: reader.delimiterSource,
    decimalSource: meta.decimal ? 'declared' : 'default',
    bom: reader.bom,
    lineBreak: reader.lineBreak,
  };
  report.dialect = dialect;
  if (reader.bom) report.notes.push('a UTF-8 byte-order mark was found and ignored');
  if (reader.delimiterSource === 'detected' && reader.delimiter !== ',') {
    report.notes.push(
      `delimiter "${reader.delimiter === '\t' ? 'tab' : reader.delimiter}" detected from the header`,
    );
  }
  if (!reader.header) {
    addIssue({
      line: 0,
      column: null,
      value: null,
      rule:
        reader.size === 0
          ? 'the file is empty'
          : 'the file has no header row (only comments and blank lines)',
    });
    return;
  }
  const header = matchHeader(kind, reader.header, reader.headerLine, reader.delimiter);
  for (const i of header.issues) addIssue(i);
  if (report.issues.length > 0) return;

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

  const cellCtx: CellContext = { zone: meta.zone, units: meta.units };
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

  const slots: Slot[] = header.columns.map((c: HeaderColumn) => ({
    index: c.index,
    written: c.written,
    key: c.spec ? c.spec.name : c.key,
    required: c.spec ? c.spec.required : c.pattern!.spec.required === true,
    cell: c.spec ? c.spec.cell(cellCtx) : c.pattern!.spec.cell(cellCtx),
  }));
  const width = reader.header.length;
  const decimal = new DecimalState(dialect);

  // 3. Rows.
  let fileLevelProblem = false;
  for (;;) {
    let batch: ReturnType<CsvReader['nextBatch']>;
    try {
      batch = reader.nextBatch();
    } catch (e) {
      if (e instanceof CsvReadError) {
        addIssue({ line: e.line, column: null, value: null, rule: e.message });
        fileLevelProblem = true;
        break;
      }
      throw e;
    }
    if (!batch) break;
    const { rows, lines } = batch;
    for (let r = 0; r < rows.length; r++) {
      const cells = rows[r]!;
      const line = lines[r]!;
      report.rowsRead++;
      const rowIssues = parseRow(cells, line, slots, width, decimal);
      if (Array.isArray(rowIssues)) {
        report.rowsRejected++;
        for (const i of rowIssues) addIssue(i);
        continue;
      }
      const out = session.row(rowIssues, line, cells);
      if (out === undefined || out === 'stored') report.rowsStored++;
      else if (out === 'duplicate') report.duplicates++;
      else {
        report.rowsRejected++;
        for (const i of out) addIssue(i);
      }
    }
  }
  if (decimal.note) report.notes.push(decimal.note);
  dialect.decimal = decimal.mode === ',' ? ',' : '.';
  dialect.decimalSource = decimal.source;
  if (fileLevelProblem) return;
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

/**
 * The decimal separator of numeric cells. Declared in the metadata, or — in a file delimited by
 * `;` or tab — detected from the first number written with a fraction (and reported). A number
 * written the other way later is refused, never reinterpreted.
 */
export class DecimalState {
  mode: '.' | ',' | 'detect';
  source: CsvDialect['decimalSource'];
  firstLine = 0;
  note: string | null = null;
  constructor(d: CsvDialect) {
    if (d.decimalSource === 'declared') this.mode = d.decimal;
    else this.mode = d.delimiter === ',' ? '.' : 'detect';
    this.source = d.decimalSource;
  }
  /** Returns the text with a point as decimal separator, or a rule broken. */
  normalise(text: string, line: number): string | { rule: string } {
    const comma = text.indexOf(',');
    if (this.mode === '.') {
      if (comma === -1) return text;
      return {
        rule:
          this.source === 'detected'
            ? `must be a number with a decimal point, as in the rest of this file (first on line ${this.firstLine})`
            : 'must be a number with a decimal point (for decimal commas declare "# decimal: ," and "# delimiter: ;")',
      };
    }
    if (this.mode === ',') {
      if (text.indexOf('.') !== -1) {
        return {
          rule:
            this.source === 'declared'
              ? 'must be a number with a decimal comma, as declared (# decimal: ,); no thousands separators'
              : `must be a number with a decimal comma, as in the rest of this file (first on line ${this.firstLine}); no thousands separators`,
        };
      }
      return comma === -1 ? text : text.replace(',', '.');
    }
    // detect
    if (comma !== -1 && /^[+-]?\d*,\d+(?:[eE][+-]?\d+)?$/.test(text)) {
      this.mode = ',';
      this.source = 'detected';
      this.firstLine = line;
      this.note = `decimal comma detected (first on line ${line})`;
      return text.replace(',', '.');
    }
    if (text.indexOf('.') !== -1 && /^[+-]?\d*\.\d+(?:[eE][+-]?\d+)?$/.test(text)) {
      this.mode = '.';
      this.source = 'detected';
      this.firstLine = line;
    }
    return text;
  }
}

/** Parses the cells of one row through the slots; returns the parsed row or its issues. */
export function parseRow(
  cells: readonly string[],
  line: number,
  slots: readonly Slot[],
  width: number,
  decimal: DecimalState,
): ParsedRow | KindIssue[] {
  if (cells.length !== width) {
    let extraFilled = false;
    for (let i = width; i < cells.length; i++) if (cells[i]!.trim() !== '') extraFilled = true;
    if (cells.length < width || extraFilled) {
      return [
        {
          line,
          column: null,
          value: null,
          rule: `the row has ${cells.length} cells but the header has ${width} (check the delimiter and quotes)`,
        },
      ];
    }
  }
  let issues: KindIssue[] | null = null;
  const row: ParsedRow = {};
  for (let s = 0; s < slots.length; s++) {
    const slot = slots[s]!;
    const text = (cells[slot.index] ?? '').trim();
    if (text === '') {
      if (slot.required)
        issues = addTo(issues, { line, column: slot.written, value: '', rule: 'must not be empty' });
      continue;
    }
    let t = text;
    if (slot.cell.numeric && (decimal.mode !== '.' || text.indexOf(',') !== -1)) {
      const n = decimal.normalise(text, line);
      if (typeof n !== 'string') {
        issues = addTo(issues, { line, column: slot.written, value: text, rule: n.rule });
        continue;
      }
      t = n;
    }
    // The fast path for the common case; the schema decides (and words the rule) otherwise.
    const fast = slot.cell.fast;
    const v = fast ? fast(t) : CELL_FAIL;
    if (v !== CELL_FAIL) {
      row[slot.key] = v;
      continue;
    }
    const r = slot.cell.schema.safeParse(t);
    if (r.success) row[slot.key] = r.data;
    else
      issues = addTo(issues, {
        line,
        column: slot.written,
        value: text,
        rule: r.error.issues[0]?.message ?? 'is not valid',
      });
  }
  return issues ?? row;
}

function addTo(list: KindIssue[] | null, i: KindIssue): KindIssue[] {
  if (list === null) return [i];
  list.push(i);
  return list;
}

export type { ImportFlag, ImportIssue };
