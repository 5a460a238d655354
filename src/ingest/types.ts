/**
 * The import contract shared by the CLI, the web Imports page and the demo loader
 * (docs/architecture.md, "src/ingest — the import contract").
 *
 * A file of one kind goes through: read (streaming CSV, src/ingest/csv.ts) → header and
 * metadata (src/ingest/header.ts, src/ingest/metadata.ts) → per-cell validation with zod
 * (src/ingest/cells.ts) → the kind's normaliser to SI → the kind's store writer, all inside
 * one transaction (src/ingest/pipeline.ts). A rejected file stores nothing; re-importing the
 * same content (sha256) changes nothing and says so.
 */
import type { z } from 'zod';
import type { Db } from '../store/db.ts';
import type { Zone } from './time.ts';

export type ImportKindName =
  | 'locations'
  | 'counter-samples'
  | 'scans'
  | 'ledger'
  | 'tools'
  | 'products'
  | 'pairs'
  | 'void-inspections';

export const IMPORT_KIND_NAMES: readonly ImportKindName[] = [
  'locations',
  'counter-samples',
  'scans',
  'ledger',
  'tools',
  'products',
  'pairs',
  'void-inspections',
];

/**
 * One broken rule. `line` is the 1-based physical line of the file where the row starts
 * (a quoted field with line breaks makes a row span several lines); 0 for the file as a whole.
 * `column` is the header name as written in the file (null: the row or the file); `value` the cell
 * as written (null: none); `rule` says what was expected, in words.
 */
export interface ImportIssue {
  file: string;
  line: number;
  column: string | null;
  value: string | null;
  rule: string;
}

/** A data-quality flag summarised over a file (also stored in `import_flags`). */
export interface ImportFlag {
  code: string;
  count: number;
  detail: string;
}

/** How the file was read: declared in its metadata block or detected, and reported either way. */
export interface CsvDialect {
  delimiter: ',' | ';' | '\t';
  decimal: '.' | ',';
  /** Where the delimiter came from. */
  delimiterSource: 'declared' | 'detected' | 'default';
  decimalSource: 'declared' | 'detected' | 'default';
  bom: boolean;
  lineBreak: '\n' | '\r\n' | '\r';
}

export interface ImportReport {
  file: string;
  kind: ImportKindName;
  sha256: string;
  status: 'imported' | 'partial' | 'rejected' | 'unchanged';
  rowsRead: number;
  rowsStored: number;
  rowsRejected: number;
  duplicates: number;
  /** Every rejected row (up to `maxIssues`; a last issue says how many more were not listed). */
  issues: ImportIssue[];
  /** Data-quality flags stored with the data. */
  flags: ImportFlag[];
  importId: number | null;
  /** Facts about the reading worth telling the user (detected delimiter, decimal comma, updated rows). */
  notes: string[];
  /** Null when the file could not be read far enough to know (e.g. empty, not UTF-8). */
  dialect: CsvDialect | null;
  bytes: number;
}

export interface ImportProgress {
  bytesRead: number;
  bytesTotal: number;
  rows: number;
}

export interface ImportOptions {
  kind: ImportKindName;
  path: string;
  /** Name shown in issues and stored in `imports` (default: the path's base name). */
  displayName?: string;
  /** Store the valid rows of a file with invalid ones, listing the rest (status 'partial'). Still atomic. */
  acceptValidRows?: boolean;
  /** Called after each chunk read (every 64 KiB) and once at the end. */
  onProgress?: (p: ImportProgress) => void;
  /** Most issues listed in the report (default 10 000); the rest are counted. */
  maxIssues?: number;
  /** The clock for `imports.imported_at` (tests). */
  now?: () => Date;
}

// ——— what a kind is made of ———

/** A unit a column may be written in, and the factor to SI (value_SI = value × toSi). */
export interface UnitSpec {
  /** As written in a header suffix or a `# units:` entry, e.g. `L`, `m3`, `ft3`, `s`, `min`, `um`. */
  name: string;
  /** The SI unit it converts to, e.g. `m³`. */
  si: string;
  toSi: number;
}

/** The per-file facts a cell parser may depend on (zone for local times, decimal separator). */
export interface CellContext {
  /** Time zone declared in the metadata (`# zone:`), or null: times must then carry an offset. */
  zone: Zone | null;
  /** `# units:` entries, lower-cased quantity → unit as written. */
  units: ReadonlyMap<string, string>;
}

/** A cell validator: a zod schema from the text of a cell to its value (the source of truth). */
export interface Cell<T> {
  /** Validates and converts the (trimmed) text of a cell. Its messages are the `rule` of an issue. */
  schema: z.ZodType<T, string>;
  /**
   * Optional hand-written fast path for the success case: returns the same value the schema would,
   * or `CELL_FAIL` (then the schema runs and supplies the message). test/unit/ingest/cells.test.ts
   * proves it never accepts what the schema refuses, and returns the same value when both accept.
   */
  fast?: (text: string) => T | typeof CELL_FAIL;
  /**
   * Optional fast path on a part of a larger text, [start, end) (the plain reader, csv-rows.ts):
   * returns exactly what `fast(text.slice(start, end))` returns, without the substring.
   */
  fastAt?: (text: string, start: number, end: number) => T | typeof CELL_FAIL;
  /** The cell holds a number: the pipeline turns a decimal comma into a point before it runs. */
  numeric?: boolean;
}

export const CELL_FAIL: unique symbol = Symbol('cell-fail');

/** A fixed column of a table kind. */
export interface ColumnSpec {
  /** Canonical header, e.g. `location_id`; matched case-insensitively after trimming. */
  name: string;
  required: boolean;
  /** Unit of the value as written, e.g. `m²`, `L`; null for text, codes and counts. */
  unit: string | null;
  /** One line for docs/formats.md (the docs test checks every column is documented). */
  description: string;
  /** Alternative headers for the same quantity in other units (e.g. `volume_m3` for `volume_L`). */
  group?: string;
  cell: (ctx: CellContext) => Cell<unknown>;
}

/** A family of columns recognised by pattern (e.g. counter channels `ge_0.1um`). */
export interface PatternColumnSpec {
  /** How the family is written in docs, e.g. `ge_<size><unit>`. */
  pattern: string;
  description: string;
  unit: string | null;
  /** Whether a cell of such a column may be empty (false: optional). */
  required?: boolean;
  /** Returns a parsed descriptor if the header belongs to the family, else null. */
  match: (normalisedHeader: string) => unknown | null;
  cell: (ctx: CellContext) => Cell<unknown>;
}

/** A `# key: value` metadata entry a kind accepts. */
export interface MetadataSpec {
  key: string;
  description: string;
  /** Example value for the docs. */
  example: string;
}

/** The header as read: canonical names in file order, with what they were written as. */
export interface HeaderColumn {
  /** Index of the cell in each row. */
  index: number;
  /** As written (trimmed). */
  written: string;
  /** Lower-cased, trimmed: the key used to match specs. */
  key: string;
  spec: ColumnSpec | null;
  pattern: { spec: PatternColumnSpec; descriptor: unknown } | null;
}

export interface FileContext {
  db: Db;
  kind: ImportKindName;
  /** Display name used in issues. */
  file: string;
  importId: number;
  metadata: ReadonlyMap<string, string>;
  /** Line of each metadata entry (same keys as `metadata`), for issues about a metadata value. */
  metadataLines?: ReadonlyMap<string, number>;
  /** `# units:` entries, lower-cased quantity → unit as written. */
  units: ReadonlyMap<string, string>;
  dialect: CsvDialect;
  header: readonly HeaderColumn[];
  /** Line of the header row. */
  headerLine: number;
}

/** An issue raised by a kind: the pipeline fills in the file name. */
export type KindIssue = Omit<ImportIssue, 'file'>;

/** A parsed row: canonical column name → parsed value (absent or empty optional cells are undefined). */
export type ParsedRow = Record<string, unknown>;

/**
 * What a kind does with a file once its header is known. `begin` may reject the header
 * (missing columns, unit conflicts) by returning issues instead of a session.
 */
export interface KindSession {
  /**
   * Normalises one parsed row to SI and stores it. Return nothing (or `'stored'`) when stored,
   * `'duplicate'` when an identical key already exists (not an error), or the issues that reject it.
   * Runs inside the file's transaction; anything thrown aborts the import (reported as a failure).
   */
  row: (
    row: ParsedRow,
    line: number,
    cells: readonly string[],
  ) => undefined | 'stored' | 'duplicate' | KindIssue[];
  /**
   * Optional fast path for the common row, tried on the raw cells (as the CSV reader returns them,
   * untrimmed) before the cell plan, for rows with as many cells as the header row while the file's
   * decimal separator is a point. Returns true when
   * it stored the row exactly as `row` would have; false to leave the row to the cell plan and `row`
   * (it must then have changed nothing). A test keeps it equal to the plain path.
   */
  rawRow?: (cells: readonly string[], line: number) => boolean;
  /**
   * Optional fast path for the common row on a text without quote characters, before any cell is cut
   * out of it: the line is `text.slice(from, to)` (the CR of a CRLF break dropped), its cells what
   * splitting it on the file's delimiter gives, `width` the header's count of cells; tried while the
   * file's decimal separator is a point. The same contract as `rawRow`: true when it stored the row
   * exactly as `row` would have (a line of `width` cells); false to leave the row to the general way
   * (it must then have changed nothing).
   */
  rawText?: (text: string, from: number, to: number, width: number) => boolean;
  /**
   * After the last row: file-level checks (references between rows, cycles) and the flag summary.
   * Issues returned here reject the file (even with acceptValidRows).
   */
  finish: () => { issues?: KindIssue[]; flags?: ImportFlag[]; notes?: string[]; updated?: number };
}

export interface ImportKind {
  name: ImportKindName;
  /** One line for `voidcast import --help` and the Imports page. */
  summary: string;
  columns: readonly ColumnSpec[];
  patternColumns?: readonly PatternColumnSpec[];
  metadata?: readonly MetadataSpec[];
  /** Checks the header and metadata, prepares statements; called inside the transaction. */
  begin: (ctx: FileContext) => KindSession | KindIssue[];
  /**
   * Configuration kinds (JSON files: products, tools) read the whole file instead of CSV rows:
   * the pipeline hands them to src/ingest/kinds/config-import.ts (same idempotency, transaction and
   * bookkeeping). `columns` is then empty and `begin` is never called.
   */
  config?: ConfigKindHandler;
  /** A file with a header and no data rows is valid for this kind (e.g. a scan without defects). */
  allowNoRows?: boolean;
  /**
   * The kind's `row` never reads the raw cells (its third argument): the pipeline may then read plain
   * lines without building them (src/ingest/csv-rows.ts, the plain reader).
   */
  plainRows?: boolean;
  /**
   * The kind resolves every foreign key of the rows it writes itself, inside the transaction (each
   * parent looked up or written once per distinct key): SQLite's per-row checks are then set aside for
   * the file's transaction (src/store/key-checks.ts).
   */
  ownKeyChecks?: boolean;
}

/** What a configuration kind does with a whole file (inside the import's transaction). */
export interface ConfigKindHandler {
  /** Parses, validates, normalises and stores the file; issues reject it (nothing is kept). */
  apply: (
    ctx: { db: Db; file: string; importId: number },
    text: string,
  ) =>
    | { issues: KindIssue[] }
    | {
        rowsRead: number;
        rowsStored: number;
        duplicates: number;
        updated: number;
        flags: ImportFlag[];
        notes: string[];
      };
}
