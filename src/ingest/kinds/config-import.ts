/**
 * Configuration files (JSON: products, tools) through the same import contract as the CSV kinds:
 * the same sha256 idempotency (`imports` UNIQUE (kind, sha256) → 'unchanged'), one transaction per
 * file, the same `imports` and `import_flags` bookkeeping, and issues with file, line, column (the
 * JSON path) and rule. `importSource` in src/ingest/pipeline.ts hands a kind with a `config` handler
 * to `importConfigSource`; only the reading differs (a whole, small file instead of streamed rows).
 */
import type { Db } from '../../store/db.ts';
import { writeTransaction } from '../../store/writer.ts';
import type { ByteSource } from '../csv.ts';
import { startReport } from '../report.ts';
import type { CsvDialect, ImportKind, ImportReport, KindIssue } from '../types.ts';

/** Largest configuration file read (they are a few kB; a larger file is not a configuration). */
export const MAX_CONFIG_BYTES = 16 * 1024 * 1024;

export interface ConfigSourceOptions {
  displayName: string;
  sha256: string;
  bytes: number;
  open: () => ByteSource;
  maxIssues?: number;
  now?: () => Date;
}

class ConfigRejection {}

function readAll(src: ByteSource): Buffer {
  const parts: Buffer[] = [];
  let total = 0;
  const buf = Buffer.allocUnsafe(1 << 16);
  for (;;) {
    const n = src.read(buf);
    if (n === 0) break;
    total += n;
    if (total > MAX_CONFIG_BYTES) throw new RangeError('too large');
    parts.push(Buffer.from(buf.subarray(0, n)));
  }
  return Buffer.concat(parts);
}

/** Imports a whole configuration file of a kind that has a `config` handler. */
export function importConfigSource(db: Db, kind: ImportKind, opts: ConfigSourceOptions): ImportReport {
  const handler = kind.config;
  if (!handler) throw new Error(`import kind ${kind.name} has no configuration handler`);
  const file = opts.displayName;
  const { report, unchanged } = startReport(db, kind.name, opts);
  if (unchanged) return report;
  const maxIssues = opts.maxIssues ?? 10_000;
  const reject = (issues: KindIssue[]): ImportReport => {
    for (const i of issues.slice(0, maxIssues)) report.issues.push({ file, ...i });
    if (issues.length > maxIssues)
      report.issues.push({
        file,
        line: 0,
        column: null,
        value: null,
        rule: `${issues.length - maxIssues} further issues not listed (the first ${maxIssues} are)`,
      });
    report.importId = null;
    return report;
  };
  const src = opts.open();
  let text: string;
  try {
    let bytes: Buffer;
    try {
      bytes = readAll(src);
    } catch (e) {
      if (e instanceof RangeError)
        return reject([
          {
            line: 0,
            column: null,
            value: null,
            rule: `a ${kind.name} file must be at most ${MAX_CONFIG_BYTES} bytes`,
          },
        ]);
      throw e;
    }
    try {
      text = new TextDecoder('utf-8', { fatal: true }).decode(bytes);
    } catch {
      return reject([
        { line: 0, column: null, value: null, rule: 'the file is not valid UTF-8 text; save it as UTF-8' },
      ]);
    }
  } finally {
    src.close();
  }
  const bom = text.charCodeAt(0) === 0xfeff;
  if (bom) report.notes.push('a UTF-8 byte-order mark was found and ignored');
  const dialect: CsvDialect = {
    delimiter: ',',
    decimal: '.',
    delimiterSource: 'default',
    decimalSource: 'default',
    bom,
    lineBreak: text.includes('\r\n') ? '\r\n' : '\n',
  };
  const now = (opts.now ?? (() => new Date()))().toISOString();
  try {
    writeTransaction(db, () => {
      const info = db
        .prepare(
          `INSERT INTO imports (kind, file_name, sha256, status, bytes, rows_read, rows_stored, rows_rejected, duplicates,
             dialect, metadata, notes, issues, imported_at)
           VALUES (?, ?, ?, 'imported', ?, 0, 0, 0, 0, ?, '{}', '[]', '[]', ?)`,
        )
        .run(kind.name, file, opts.sha256, opts.bytes, JSON.stringify({ ...dialect, format: 'json' }), now);
      const importId = Number(info.lastInsertRowid);
      const out = handler.apply({ db, file, importId }, bom ? text.slice(1) : text);
      if ('issues' in out) {
        reject(out.issues);
        throw new ConfigRejection();
      }
      report.importId = importId;
      report.rowsRead = out.rowsRead;
      report.rowsStored = out.rowsStored;
      report.duplicates = out.duplicates;
      report.flags = out.flags;
      for (const n of out.notes) report.notes.push(n);
      if (out.updated > 0) report.notes.push(`${out.updated} existing entries updated`);
      report.status = 'imported';
      const flagStmt = db.prepare(
        'INSERT INTO import_flags (import_id, code, count, detail) VALUES (?, ?, ?, ?)',
      );
      for (const f of report.flags) flagStmt.run(importId, f.code, f.count, f.detail);
      db.prepare(
        'UPDATE imports SET rows_read = ?, rows_stored = ?, duplicates = ?, notes = ? WHERE id = ?',
      ).run(report.rowsRead, report.rowsStored, report.duplicates, JSON.stringify(report.notes), importId);
    });
  } catch (e) {
    if (e instanceof ConfigRejection) return report;
    throw e;
  }
  report.dialect = dialect;
  return report;
}
