/**
 * The database-free half of a CSV import: the metadata block, the dialect, the header matched to the
 * kind's columns, and every row's cells through their zod schemas (fast path first) with the decimal
 * separator handled. src/ingest/pipeline.ts runs it inside the import's transaction and hands each
 * parsed row to the kind; readCsvSource runs it alone (the property tests use it at volume).
 */
import { CELL_FAIL } from './cells.ts';
import { type ByteSource, CsvReadError, CsvReader, isBlank } from './csv.ts';
import { matchHeader } from './header.ts';
import { parseMetadata } from './metadata.ts';
import type {
  Cell,
  CellContext,
  CsvDialect,
  HeaderColumn,
  ImportKind,
  KindIssue,
  ParsedRow,
} from './types.ts';

/** Cell plan of one header column. */
export interface Slot {
  index: number;
  written: string;
  /** Canonical key in the parsed row (spec name, or the normalised header of a pattern column). */
  key: string;
  required: boolean;
  cell: Cell<unknown>;
}

/** A CSV file read up to its rows: metadata, dialect, header and the cell plan. */
export interface CsvStart {
  meta: ReturnType<typeof parseMetadata>;
  dialect: CsvDialect;
  header: ReturnType<typeof matchHeader>;
  slots: Slot[];
  width: number;
  decimal: DecimalState;
}

/**
 * The database-free start of a CSV import: the metadata block, the dialect, the header matched to
 * the kind's columns and the cell plan. Returns null when the file is refused before its rows (the
 * issues were added).
 */
export function startCsv(
  kind: ImportKind,
  reader: CsvReader,
  addIssue: (i: KindIssue) => void,
  sink: { notes: string[]; dialect: CsvDialect | null },
): CsvStart | null {
  const notes = sink.notes;
  let md: ReturnType<typeof parseMetadata> | null = null;
  try {
    reader.readPreamble((lines) => {
      md = parseMetadata(lines, kind.metadata ?? [], kind.name);
      return md.delimiter;
    });
  } catch (e) {
    if (e instanceof CsvReadError) {
      addIssue({ line: e.line, column: null, value: null, rule: e.message });
      return null;
    }
    throw e;
  }
  const meta = md as ReturnType<typeof parseMetadata> | null;
  if (!meta) throw new Error('metadata not parsed');
  for (const n of meta.notes) notes.push(n);
  let refused = meta.issues.length > 0;
  for (const i of meta.issues) addIssue(i);
  const dialect: CsvDialect = {
    delimiter: reader.delimiter,
    decimal: meta.decimal ?? '.',
    delimiterSource: reader.delimiterSource,
    decimalSource: meta.decimal ? 'declared' : 'default',
    bom: reader.bom,
    lineBreak: reader.lineBreak,
  };
  sink.dialect = dialect;
  if (reader.bom) notes.push('a UTF-8 byte-order mark was found and ignored');
  if (reader.delimiterSource === 'detected' && reader.delimiter !== ',') {
    notes.push(
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
    return null;
  }
  const header = matchHeader(kind, reader.header, reader.headerLine, reader.delimiter);
  if (header.issues.length > 0) refused = true;
  for (const i of header.issues) addIssue(i);
  if (refused) return { meta, dialect, header, slots: [], width: 0, decimal: new DecimalState(dialect) };
  const cellCtx: CellContext = { zone: meta.zone, units: meta.units };
  const slots: Slot[] = header.columns.map((c: HeaderColumn) => ({
    index: c.index,
    written: c.written,
    key: c.spec ? c.spec.name : c.key,
    required: c.spec ? c.spec.required : c.pattern!.spec.required === true,
    cell: c.spec ? c.spec.cell(cellCtx) : c.pattern!.spec.cell(cellCtx),
  }));
  return { meta, dialect, header, slots, width: reader.header.length, decimal: new DecimalState(dialect) };
}

/**
 * The plain reader (readPlainLines) on or off. On by default; the tests turn it off to compare with
 * the general path (papaparse, then parseRow), its plain twin.
 */
export const PLAIN_READER = { enabled: true };

/** The raw cells handed on by the plain reader, which builds none (see `readRows`' `needCells`). */
const NO_CELLS: readonly string[] = Object.freeze([]);

/**
 * Reads every row of a started CSV file through the cell plan, handing each to `onRow` (its parsed
 * cells or its issues), unless `rawRow` took it first (see KindSession.rawRow). Returns false when the
 * file cannot be read on (a CSV problem, added as an issue).
 *
 * When the caller does not need the raw cells (`needCells` false) and the text holds no quote
 * character, lines go through the plain reader (readPlainLines), which reads the cells straight from
 * the text; the rows it cannot read plainly, and every quoted text, go the general way (papaparse,
 * then parseRow). Both give the same rows, lines and issues (test/unit/ingest/plain-reader.test.ts).
 */
export function readRows(
  reader: CsvReader,
  start: CsvStart,
  addIssue: (i: KindIssue) => void,
  onRow: (row: ParsedRow | KindIssue[], line: number, cells: readonly string[]) => void,
  rawRow?: (cells: readonly string[], line: number) => boolean,
  needCells = true,
  rawText?: RawText,
): boolean {
  const plain = !needCells && PLAIN_READER.enabled ? new PlainLines(start, reader.delimiter, onRow) : null;
  const raw =
    plain === null && rawText !== undefined && PLAIN_READER.enabled
      ? new RawLines(start, reader.delimiter, onRow, rawText, rawRow)
      : null;
  const textLines = plain ?? raw;
  for (;;) {
    let batch: ReturnType<CsvReader['nextBatch']>;
    try {
      if (textLines) {
        const t = reader.nextPlainText();
        if (t === null) return true;
        if (t !== 'general') {
          textLines.read(t.text, t.line);
          continue;
        }
      }
      batch = reader.nextBatch();
    } catch (e) {
      if (e instanceof CsvReadError) {
        addIssue({ line: e.line, column: null, value: null, rule: e.message });
        return false;
      }
      throw e;
    }
    if (!batch) return true;
    const { rows, lines } = batch;
    for (let r = 0; r < rows.length; r++) {
      const cells = rows[r]!;
      const line = lines[r]!;
      // A kind's fast path on the raw cells (KindSession.rawRow): rows as wide as the header, while
      // numbers take a decimal point.
      if (
        rawRow !== undefined &&
        cells.length === start.width &&
        start.decimal.mode === '.' &&
        rawRow(cells, line)
      )
        continue;
      onRow(parseRow(cells, line, start.slots, start.width, start.decimal), line, cells);
    }
  }
}

/**
 * The plain reader: lines of a text without quotes, cells found by the delimiter and read where they
 * stand (numbers from their characters, other cells from one substring each), with no array of cells
 * per row and no papaparse. It reads a row only when every cell is plain — no white space to trim at
 * either end, not empty, accepted by its cell's fast path, a point as decimal separator — and hands
 * any other row (blank lines, a wrong number of cells, an empty or refused cell) to the general
 * way: `split` on the delimiter (what papaparse returns for a line without quotes), then parseRow,
 * which finds the same values and words the issues.
 */
class PlainLines {
  private readonly starts: Int32Array;
  private readonly ends: Int32Array;
  private readonly delim: number;
  constructor(
    private readonly start: CsvStart,
    private readonly delimiter: string,
    private readonly onRow: (row: ParsedRow | KindIssue[], line: number, cells: readonly string[]) => void,
  ) {
    this.starts = new Int32Array(start.width);
    this.ends = new Int32Array(start.width);
    this.delim = delimiter.charCodeAt(0);
  }

  read(text: string, firstLine: number): void {
    const { slots, width, decimal } = this.start;
    const { starts, ends, delim, onRow } = this;
    const n = text.length;
    let line = firstLine;
    let a = 0;
    while (a < n) {
      let nl = text.indexOf('\n', a);
      if (nl === -1) nl = n;
      let b = nl;
      if (b > a && text.charCodeAt(b - 1) === 13) b--;
      // Cells of the line [a, b): plain only with exactly `width` cells, a first character that is
      // not blank and a point as the decimal separator.
      let row: ParsedRow | null = null;
      const c0 = a < b ? text.charCodeAt(a) : 0;
      if (c0 > 32 && c0 < 127 && c0 !== delim && decimal.mode === '.') {
        let count = 0;
        let p = a;
        for (;;) {
          const d = text.indexOf(this.delimiter, p);
          const e = d === -1 || d > b ? b : d;
          if (count === width) {
            count++;
            break;
          }
          starts[count] = p;
          ends[count] = e;
          count++;
          if (e === b) break;
          p = e + 1;
        }
        if (count === width) row = this.cells(text, slots);
      }
      if (row !== null) onRow(row, line, NO_CELLS);
      else {
        const cells = text.slice(a, b).split(this.delimiter);
        if (!isBlank(cells)) onRow(parseRow(cells, line, slots, width, decimal), line, cells);
      }
      line++;
      a = nl + 1;
    }
  }

  /** The parsed row when every cell is plain, else null (the row then goes the general way). */
  private cells(text: string, slots: readonly Slot[]): ParsedRow | null {
    const { starts, ends } = this;
    const row: ParsedRow = {};
    for (let i = 0; i < slots.length; i++) {
      const slot = slots[i]!;
      const s = starts[slot.index]!;
      const e = ends[slot.index]!;
      if (e <= s) return null;
      const f = text.charCodeAt(s);
      const l = text.charCodeAt(e - 1);
      if (f <= 32 || f >= 127 || l <= 32 || l >= 127) return null;
      const cell = slot.cell;
      let v: unknown;
      if (cell.fastAt) v = cell.fastAt(text, s, e);
      else if (cell.fast) v = cell.fast(text.slice(s, e));
      else return null;
      if (v === CELL_FAIL) return null;
      row[slot.key] = v;
    }
    return row;
  }
}

/** A kind's fast path on the lines of a text without quotes (KindSession.rawText). */
export type RawText = (text: string, from: number, to: number, width: number) => boolean;

/**
 * `rawText` counting each row it takes as read and stored in `counts` (the pipeline's report).
 */
export function countingRawText(
  rawText: RawText | undefined,
  counts: { rowsRead: number; rowsStored: number },
): RawText | undefined {
  if (rawText === undefined) return undefined;
  return (text, from, to, width) => {
    if (!rawText(text, from, to, width)) return false;
    counts.rowsRead++;
    counts.rowsStored++;
    return true;
  };
}

/**
 * The lines of a text without quotes for a kind with a fast path on the text (KindSession.rawText):
 * each line handed to `rawText` where it stands (no array or string per line or cell); a line it
 * does not take (a wrong number of cells, an unusual row, a problem to report) goes the general way:
 * `split` on the delimiter (what papaparse returns for a line without quotes, the CR of a CRLF break
 * dropped), blank lines skipped, then `rawRow` and parseRow as in readRows. Both give the same rows,
 * lines and issues (test/unit/properties/import-scans-fast.test.ts).
 */
class RawLines {
  constructor(
    private readonly start: CsvStart,
    private readonly delimiter: string,
    private readonly onRow: (row: ParsedRow | KindIssue[], line: number, cells: readonly string[]) => void,
    private readonly rawText: RawText,
    private readonly rawRow: ((cells: readonly string[], line: number) => boolean) | undefined,
  ) {}

  read(text: string, firstLine: number): void {
    const { slots, width, decimal } = this.start;
    const { rawText, rawRow, onRow } = this;
    const n = text.length;
    let line = firstLine;
    let a = 0;
    while (a < n) {
      let nl = text.indexOf('\n', a);
      if (nl === -1) nl = n;
      let b = nl;
      if (b > a && text.charCodeAt(b - 1) === 13) b--;
      if (decimal.mode !== '.' || !rawText(text, a, b, width)) {
        const cells = text.slice(a, b).split(this.delimiter);
        if (!isBlank(cells)) {
          if (
            !(rawRow !== undefined && cells.length === width && decimal.mode === '.' && rawRow(cells, line))
          )
            onRow(parseRow(cells, line, slots, width, decimal), line, cells);
        }
      }
      line++;
      a = nl + 1;
    }
  }
}

/** What the database-free reading of a CSV file found (readCsvSource). */
export interface CsvReadResult {
  issues: KindIssue[];
  notes: string[];
  dialect: CsvDialect | null;
  rowsRead: number;
  /** The rows whose every cell passed its schema (parsed values, not yet normalised by the kind). */
  rows: ParsedRow[];
  /** False when the file was refused before its rows (metadata, header) or could not be read on. */
  readToEnd: boolean;
}

/**
 * The first half of a CSV import without a database: the same metadata, header and cell checks
 * as importSource, on any byte source, stopping before the kind stores anything (its `begin` and
 * row normalisation need the store). The property tests run it at volume.
 */
export function readCsvSource(kind: ImportKind, source: ByteSource): CsvReadResult {
  const out: CsvReadResult = {
    issues: [],
    notes: [],
    dialect: null,
    rowsRead: 0,
    rows: [],
    readToEnd: false,
  };
  const addIssue = (i: KindIssue) => out.issues.push(i);
  const reader = new CsvReader(source);
  try {
    const start = startCsv(kind, reader, addIssue, out);
    if (!start || out.issues.length > 0) return out;
    out.readToEnd = readRows(
      reader,
      start,
      addIssue,
      (row) => {
        out.rowsRead++;
        if (Array.isArray(row)) for (const i of row) addIssue(i);
        else out.rows.push(row);
      },
      undefined,
      false,
    );
    return out;
  } finally {
    reader.close();
  }
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
