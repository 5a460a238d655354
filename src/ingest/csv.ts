/**
 * Streaming CSV reading on papaparse's parser, in constant memory, with 1-based physical line numbers.
 *
 * The file is read synchronously in chunks (default 64 KiB) so that the whole import can run inside
 * one better-sqlite3 transaction (which cannot span an `await`). Each chunk is decoded as UTF-8
 * (fatal: invalid bytes are an error, never replacement characters), the unfinished last record is
 * carried into the next chunk (papaparse's own `ignoreLastRow` mechanism), and every record is
 * returned with the line it starts on.
 *
 * Real-world variants handled here:
 * - a UTF-8 byte-order mark (stripped, reported);
 * - LF, CRLF and lone-CR line breaks (detected from the first break, reported); the parser splits on
 *   LF and the CR of a CRLF is trimmed from the last cell, so files mixing LF and CRLF still work;
 * - quoted fields with delimiters, doubled quotes and line breaks (a record then spans several
 *   physical lines: the next record's line number counts the breaks inside the quoted fields);
 * - a leading metadata block of `#` lines and blank lines before the header (see metadata.ts);
 * - blank (or whitespace-only) lines anywhere, including trailing ones: skipped, lines still counted.
 *
 * The delimiter is declared in the metadata (`# delimiter: ;`) or detected from the header line
 * (the most frequent of `,` `;` tab outside quotes; comma when none occurs).
 */
import { closeSync, fstatSync, openSync, readSync } from 'node:fs';
import Papa from 'papaparse';

/** Bytes a source can deliver synchronously: a file descriptor or an in-memory buffer. */
export interface ByteSource {
  size: number;
  /** Fills `buf` from the current position; returns the number of bytes read (0 at the end). */
  read: (buf: Buffer) => number;
  close: () => void;
}

export function fileSource(path: string): ByteSource {
  const fd = openSync(path, 'r');
  const size = fstatSync(fd).size;
  return {
    size,
    read: (buf) => readSync(fd, buf, 0, buf.length, null),
    close: () => closeSync(fd),
  };
}

export function bufferSource(data: Buffer | string): ByteSource {
  const bytes = typeof data === 'string' ? Buffer.from(data, 'utf8') : data;
  let pos = 0;
  return {
    size: bytes.length,
    read: (buf) => {
      const n = Math.min(buf.length, bytes.length - pos);
      bytes.copy(buf, 0, pos, pos + n);
      pos += n;
      return n;
    },
    close: () => {},
  };
}

/** A problem that stops the reading of the file (not a row problem). */
export class CsvReadError extends Error {
  override readonly name = 'CsvReadError';
  constructor(
    readonly line: number,
    message: string,
  ) {
    super(message);
  }
}

export interface MetadataLine {
  line: number;
  /** Text after the `#`, trimmed. */
  text: string;
}

export interface CsvBatch {
  /** Records, each an array of raw cells (untrimmed, as papaparse returns them). */
  rows: string[][];
  /** Starting physical line of each record (1-based). */
  lines: number[];
}

export type Delimiter = ',' | ';' | '\t';

export interface CsvReaderOptions {
  chunkBytes?: number;
  /** A declared delimiter wins over detection. */
  delimiter?: Delimiter | null;
  onProgress?: (bytesRead: number, bytesTotal: number) => void;
}

const BOM = '\uFEFF';

/**
 * Bytes read at a time. Small enough that a chunk's records (strings, arrays, parsed rows) die in V8's
 * young generation instead of being promoted: measured with bench/import.ts, 64 KiB read a 1 M-row file
 * ~8 % faster and with ~90 MB less peak RSS than 1 MiB (16–128 KiB were within noise of each other).
 */
export const DEFAULT_CHUNK_BYTES = 64 * 1024;

/**
 * Reads a CSV source: first `readPreamble()` (metadata lines and the header), then `nextBatch()`
 * until it returns null. Always `close()` (also on error).
 */
export class CsvReader {
  readonly size: number;
  bytesRead = 0;
  bom = false;
  lineBreak: '\n' | '\r\n' | '\r' = '\n';
  delimiter: Delimiter = ',';
  delimiterSource: 'declared' | 'detected' | 'default' = 'default';
  /** The header's cells (raw) and line, set by readPreamble. */
  header: string[] | null = null;
  headerLine = 0;

  private readonly source: ByteSource;
  private readonly buf: Buffer;
  private readonly decoder = new TextDecoder('utf-8', { fatal: true });
  private readonly onProgress: CsvReaderOptions['onProgress'];
  private pending = '';
  private eof = false;
  private first = true;
  /** Line number of the first character of `pending`. */
  private line = 1;
  private parser: Papa.Parser | null = null;
  private baseIndex = 0;
  private declared: Delimiter | null;

  constructor(source: ByteSource, opts: CsvReaderOptions = {}) {
    this.source = source;
    this.size = source.size;
    this.buf = Buffer.allocUnsafe(opts.chunkBytes ?? DEFAULT_CHUNK_BYTES);
    this.onProgress = opts.onProgress;
    this.declared = opts.delimiter ?? null;
  }

  close(): void {
    this.source.close();
  }

  /** Reads one more chunk into `pending`; false at the end of the source. */
  private fill(): boolean {
    if (this.eof) return false;
    const n = this.source.read(this.buf);
    let text: string;
    try {
      if (n === 0) {
        this.eof = true;
        text = this.decoder.decode();
      } else {
        let bytes = this.buf.subarray(0, n);
        if (this.first && n >= 3 && bytes[0] === 0xef && bytes[1] === 0xbb && bytes[2] === 0xbf) {
          this.bom = true;
          bytes = bytes.subarray(3);
        }
        text = this.decoder.decode(bytes, { stream: true });
      }
    } catch {
      // Find the first undecodable byte: decode leniently and look for the replacement character.
      const lenient = new TextDecoder('utf-8').decode(this.buf.subarray(0, n));
      const bad = lenient.indexOf('\uFFFD');
      const before = bad === -1 ? lenient : lenient.slice(0, bad);
      const line =
        this.line +
        countNewlines(this.pending, 0, this.pending.length) +
        countNewlines(before, 0, before.length);
      const offset = this.bytesRead + Buffer.byteLength(before, 'utf8');
      throw new CsvReadError(
        line,
        `the file is not valid UTF-8 text (byte ${offset + 1} is not part of a UTF-8 character); save it as UTF-8`,
      );
    }
    this.bytesRead += n;
    if (this.first && text.length > 0) {
      this.first = false;
      if (text.startsWith(BOM)) {
        // A BOM split across reads, or a second one: strip it as well.
        this.bom = true;
        text = text.slice(1);
      }
      const cr = text.indexOf('\r');
      const lf = text.indexOf('\n');
      if (cr !== -1 && (lf === -1 || cr < lf)) this.lineBreak = text[cr + 1] === '\n' ? '\r\n' : '\r';
      else this.lineBreak = '\n';
    }
    if (this.lineBreak === '\r') text = text.replace(/\r/g, '\n');
    this.pending += text;
    this.onProgress?.(this.bytesRead, this.size);
    return n > 0 || text.length > 0;
  }

  /**
   * Reads the metadata block (`#` lines and blank lines before the header) and the header record.
   * `configure` sees the metadata lines before the header is split, and may return a declared
   * delimiter. Returns the metadata lines; `header` is null for a file with no header at all.
   */
  readPreamble(configure?: (meta: MetadataLine[]) => Delimiter | null): MetadataLine[] {
    const meta: MetadataLine[] = [];
    for (;;) {
      let nl = this.pending.indexOf('\n');
      while (nl === -1 && this.fill()) nl = this.pending.indexOf('\n');
      const lineText = nl === -1 ? this.pending : this.pending.slice(0, nl);
      const trimmed = lineText.trim();
      if (nl === -1 && trimmed === '') {
        this.pending = '';
        break; // the end: no header
      }
      if (trimmed.startsWith('#')) {
        meta.push({ line: this.line, text: trimmed.slice(1).trim() });
      } else if (trimmed !== '') {
        break; // the header starts here
      }
      this.pending = nl === -1 ? '' : this.pending.slice(nl + 1);
      this.line++;
      if (nl === -1) break;
    }
    const declared = configure?.(meta) ?? this.declared;
    if (this.pending === '' && this.eof) return meta;
    if (declared) {
      this.delimiter = declared;
      this.delimiterSource = 'declared';
    } else {
      const nl = this.pending.indexOf('\n');
      const detected = detectDelimiter(nl === -1 ? this.pending : this.pending.slice(0, nl));
      if (detected) {
        this.delimiter = detected;
        this.delimiterSource = 'detected';
      }
    }
    this.parser = new Papa.Parser({
      delimiter: this.delimiter,
      newline: '\n',
      quoteChar: '"',
      escapeChar: '"',
    });
    const batch = this.nextBatch(1);
    if (batch && batch.rows.length > 0) {
      this.header = batch.rows[0]!;
      this.headerLine = batch.lines[0]!;
    }
    return meta;
  }

  private carry: { rows: string[][]; lines: number[] } | null = null;

  /**
   * The next run of whole lines as one text, for a reader of plain CSV (csv-rows.ts readPlainLines):
   * `{ text, line }` with the line number of its first line, when the text holds no quote character;
   * 'general' when the records must come from `nextBatch` this time (a quote somewhere in the text,
   * or records already parsed and waiting); null at the end. The text ends at a line break unless it
   * is the end of the file; the CR of a CRLF break is left in it (the caller drops it).
   */
  nextPlainText(): { text: string; line: number } | 'general' | null {
    if (!this.parser) return 'general';
    if (this.carry && this.carry.rows.length > 0) return 'general';
    for (;;) {
      if (this.pending === '' && this.eof) return null;
      const lastBreak = this.pending.lastIndexOf('\n');
      if (!this.eof && lastBreak === -1) {
        this.fill();
        continue;
      }
      const end = this.eof ? this.pending.length : lastBreak + 1;
      const text = end === this.pending.length ? this.pending : this.pending.slice(0, end);
      if (text.indexOf('"') !== -1) return 'general';
      const line = this.line;
      this.line += countNewlines(text, 0, text.length);
      this.pending = end === this.pending.length ? '' : this.pending.slice(end);
      if (!this.eof) this.fill();
      return { text, line };
    }
  }

  /**
   * The next records (skipping blank lines), or null at the end. `max` limits how many are
   * returned (the rest are kept for the next call).
   */
  nextBatch(max = Number.POSITIVE_INFINITY): CsvBatch | null {
    if (!this.parser) {
      if (this.eof && this.pending === '') return null; // nothing after the metadata: no header, no rows
      throw new Error('CsvReader: readPreamble() first');
    }
    for (;;) {
      if (this.carry && this.carry.rows.length > 0) {
        const c = this.carry;
        if (c.rows.length <= max) {
          this.carry = null;
          return c;
        }
        const out = { rows: c.rows.slice(0, max), lines: c.lines.slice(0, max) };
        this.carry = { rows: c.rows.slice(max), lines: c.lines.slice(max) };
        return out;
      }
      if (this.pending === '' && this.eof) return null;
      // Make sure the pending text ends in a complete line unless the source is exhausted.
      if (!this.eof && this.pending.lastIndexOf('\n') === -1) {
        this.fill();
        continue;
      }
      const input = this.pending;
      const last = this.eof;
      const result = this.parser.parse(input, this.baseIndex, !last) as {
        data: string[][];
        errors: { type: string; code: string; message: string; row?: number; index?: number }[];
        meta: { cursor: number };
      };
      const consumed = last ? input.length : result.meta.cursor - this.baseIndex;
      if (!last && consumed === 0) {
        // One record longer than the text read so far (a long quoted field): read more.
        if (!this.fill()) continue;
        continue;
      }
      const quoted = input.indexOf('"') !== -1;
      for (const err of result.errors) {
        if (err.code === 'MissingQuotes') {
          const at = err.index ?? 0;
          throw new CsvReadError(
            this.line + countNewlines(input, 0, Math.min(at, input.length)),
            'a quoted field is not closed before the end of the file (a " without its closing ")',
          );
        }
      }
      const rows: string[][] = [];
      const lines: number[] = [];
      let line = this.line;
      for (const row of result.data) {
        let spanned = 0;
        if (quoted) for (const cell of row) spanned += countNewlines(cell, 0, cell.length);
        if (!isBlank(row)) {
          // The CR of a CRLF break (the parser splits on LF; files may mix both).
          const li = row.length - 1;
          const lastCell = row[li]!;
          if (lastCell.charCodeAt(lastCell.length - 1) === 13) row[li] = lastCell.slice(0, -1);
          rows.push(row);
          lines.push(line);
        }
        line += 1 + spanned;
      }
      this.line = line;
      this.pending = input.slice(consumed);
      this.baseIndex += consumed;
      if (last) this.pending = '';
      // Keep the parser's base index small: it only feeds meta.cursor.
      if (this.baseIndex > 1 << 30) this.baseIndex = 0;
      if (rows.length > 0) {
        this.carry = { rows, lines };
        continue;
      }
      if (!last) this.fill();
    }
  }
}

/** A record whose every cell is empty or white space (skipped, its line still counted). */
export function isBlank(row: readonly string[]): boolean {
  const first = row[0]!;
  if (first.length > 0 && first.charCodeAt(0) > 32) return false;
  for (const c of row) if (c.trim() !== '') return false;
  return true;
}

function countNewlines(s: string, from: number, to: number): number {
  let n = 0;
  let i = s.indexOf('\n', from);
  while (i !== -1 && i < to) {
    n++;
    i = s.indexOf('\n', i + 1);
  }
  return n;
}

/** The most frequent of `,` `;` tab outside double quotes in a header line; null when none occurs. */
export function detectDelimiter(headerLine: string): Delimiter | null {
  let inQuotes = false;
  let comma = 0;
  let semi = 0;
  let tab = 0;
  for (let i = 0; i < headerLine.length; i++) {
    const ch = headerLine.charCodeAt(i);
    if (ch === 34) inQuotes = !inQuotes;
    else if (!inQuotes) {
      if (ch === 44) comma++;
      else if (ch === 59) semi++;
      else if (ch === 9) tab++;
    }
  }
  if (comma === 0 && semi === 0 && tab === 0) return null;
  if (semi > comma && semi >= tab) return ';';
  if (tab > comma && tab > semi) return '\t';
  return ',';
}
