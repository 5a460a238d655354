/**
 * CSV writer after RFC 4180 ("Common Format and MIME Type for Comma-Separated Values (CSV) Files",
 * IETF, 2005, §2):
 *
 *   - records end with CRLF (rule 1), the last one too (rule 2 allows either);
 *   - the first record is the header (rule 3);
 *   - a field holding a comma, a double quote, CR or LF is enclosed in double quotes (rule 6);
 *   - a double quote inside a quoted field is written as two double quotes (rule 7);
 *   - other fields are written as they are (spaces are part of a field, rule 4).
 *
 * Two variants:
 *
 *   - `plain` (default): exactly RFC 4180, UTF-8 without a byte-order mark — for programs.
 *   - `spreadsheet`: the same, preceded by the UTF-8 byte-order mark U+FEFF (so that spreadsheet
 *     programs read µ, ≥, – and accented names as UTF-8), and with a guard against formula
 *     injection: a text cell that starts with `=`, `+`, `-`, `@`, a tab or CR would be read by a
 *     spreadsheet as a formula, so it is written with a leading apostrophe `'` (the text `=1+2`
 *     becomes `'=1+2`), which spreadsheets show as text. Cells written from numbers are never
 *     prefixed (−3.5 stays a number). The guard changes the text: a program reading the spreadsheet
 *     variant sees the apostrophe; use the plain variant for programs.
 *
 * Numbers are written with JavaScript's shortest round-trip form (String(x)); a non-finite number,
 * null and undefined are written as an empty field; booleans as `true` / `false`.
 */

export type CsvCell = string | number | boolean | null | undefined;

export type CsvVariant = 'plain' | 'spreadsheet';

/** A table to write: a header row and rows of the same width. */
export interface CsvTable {
  header: readonly string[];
  rows: readonly (readonly CsvCell[])[];
}

/** The UTF-8 byte-order mark the spreadsheet variant starts with. */
export const UTF8_BOM = '\uFEFF';

/** Characters that make a spreadsheet read a cell as a formula (the spreadsheet variant guards them). */
export const FORMULA_TRIGGERS: readonly string[] = ['=', '+', '-', '@', '\t', '\r'];

const NEEDS_QUOTES = /[",\r\n]/;

/**
 * One field, quoted when RFC 4180 requires it; the spreadsheet variant prefixes a text cell that
 * starts with a formula trigger with an apostrophe.
 *
 * @example csvField('a,b') // '"a,b"'
 * @example csvField('say "hi"') // '"say ""hi"""'
 * @example csvField('=SUM(A1)', 'spreadsheet') // "'=SUM(A1)"
 * @example csvField(-3.5, 'spreadsheet') // '-3.5'
 */
export function csvField(value: CsvCell, variant: CsvVariant = 'plain'): string {
  let text: string;
  if (value === null || value === undefined) text = '';
  else if (typeof value === 'number') text = Number.isFinite(value) ? String(value) : '';
  else if (typeof value === 'boolean') text = value ? 'true' : 'false';
  else {
    text = String(value);
    if (variant === 'spreadsheet' && text.length > 0 && FORMULA_TRIGGERS.includes(text[0]!))
      text = `'${text}`;
  }
  return NEEDS_QUOTES.test(text) ? `"${text.replaceAll('"', '""')}"` : text;
}

/**
 * A whole table as CSV text: header then rows, each record ended by CRLF; the spreadsheet variant
 * starts with the UTF-8 byte-order mark. Throws when a row's width differs from the header's (RFC
 * 4180 rule 4: every record has the same number of fields).
 *
 * @example toCsv({ header: ['a', 'b'], rows: [[1, 'x,y']] }) // 'a,b\r\n1,"x,y"\r\n'
 */
export function toCsv(table: CsvTable, variant: CsvVariant = 'plain'): string {
  const width = table.header.length;
  const lines: string[] = [table.header.map((h) => csvField(h, variant)).join(',')];
  table.rows.forEach((row, i) => {
    if (row.length !== width)
      throw new Error(`CSV row ${i + 1} has ${row.length} fields; the header has ${width}`);
    lines.push(row.map((c) => csvField(c, variant)).join(','));
  });
  return (variant === 'spreadsheet' ? UTF8_BOM : '') + lines.join('\r\n') + '\r\n';
}

/** The media type of each variant (RFC 4180 §3 registers text/csv with the header parameter). */
export function csvMediaType(): string {
  return 'text/csv; charset=utf-8; header=present';
}
