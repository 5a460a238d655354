/**
 * One table model for the audit pages, their report and their downloads: a table is built once
 * from the audit's results (columns and rows of cells) and then either rendered as HTML or written
 * as CSV (RFC 4180, or the spreadsheet variant with a byte-order mark) or JSON. So a download holds
 * exactly the rows the page shows.
 *
 * A cell has the words the page shows and, where they differ, the value a program reads (a number
 * in the column's stated unit, without digit grouping or rounding). The HTML cell carries that value
 * in `data-value`, so a reader of the page and a reader of the file see the same row.
 */
import type { Child } from 'hono/jsx';
import type { CsvCell } from '../../src/engine/export/csv.ts';

export interface AuditCell {
  /** What the page shows. */
  text: string;
  /** What a download holds, when it differs from `text` (a number in the column's unit). */
  value?: CsvCell;
  /** A link for the page (downloads carry the text or value only). */
  href?: string;
  /** A CSS class for the page (pass / fail words, numbers). */
  cls?: string;
}

export interface AuditColumn {
  /** The column's key in JSON. */
  key: string;
  /** The heading, with its unit where it has one. */
  label: string;
  numeric?: boolean;
}

export interface AuditTable {
  /** Stable id used in the download URL and the file name ("classification", "excursions" …). */
  id: string;
  title: string;
  columns: AuditColumn[];
  rows: AuditCell[][];
  /** Said instead of an empty table. */
  empty: string;
}

/** A cell from plain words. */
export function cell(text: string, extra: Omit<AuditCell, 'text'> = {}): AuditCell {
  return { text, ...extra };
}

/** The value a download holds for a cell. */
export function cellValue(c: AuditCell): CsvCell {
  return c.value !== undefined ? c.value : c.text;
}

/** The table as a header row and rows of download values (for the CSV writer). */
export function tableForCsv(t: AuditTable): { header: string[]; rows: CsvCell[][] } {
  return { header: t.columns.map((c) => c.label), rows: t.rows.map((r) => r.map(cellValue)) };
}

/** The table as JSON: its title, columns and one object per row keyed by column key. */
export function tableForJson(t: AuditTable): {
  table: string;
  title: string;
  columns: AuditColumn[];
  rows: Record<string, CsvCell>[];
} {
  return {
    table: t.id,
    title: t.title,
    columns: t.columns,
    rows: t.rows.map((r) => Object.fromEntries(t.columns.map((c, i) => [c.key, cellValue(r[i]!)]))),
  };
}

/** The download links beside a table: CSV, CSV for spreadsheets, JSON. */
export function DownloadLinks(props: {
  href: (format: 'csv' | 'xls-csv' | 'json') => string;
  table: string;
}) {
  return (
    <p class="vc-downloads" data-downloads={props.table}>
      <span>Download this table:</span> <a href={props.href('csv')}>CSV</a>{' '}
      <a href={props.href('xls-csv')}>CSV for spreadsheets</a> <a href={props.href('json')}>JSON</a>
    </p>
  );
}

/**
 * A wide table cut into tables of at most `max` columns for a printed page, each part repeating the
 * first column (the row's name) so that every part reads on its own. Each part keeps the table's id.
 */
export function splitColumns(t: AuditTable, max: number): AuditTable[] {
  if (t.columns.length <= max || max < 2) return [t];
  // As few parts as fit, of nearly equal width (no part left with one column beside the name).
  const rest = t.columns.length - 1;
  const size = Math.ceil(rest / Math.ceil(rest / (max - 1)));
  const out: AuditTable[] = [];
  for (let start = 1; start < t.columns.length; start += size) {
    const idx = [0, ...Array.from({ length: Math.min(size, t.columns.length - start) }, (_, k) => start + k)];
    out.push({
      ...t,
      columns: idx.map((i) => t.columns[i]!),
      rows: t.rows.map((r) => idx.map((i) => r[i]!)),
    });
  }
  return out;
}

/**
 * A table as HTML, with its download links (omitted in the printed report, where `href` is null);
 * with `maxColumns`, a wider table is shown as parts that fit a printed page (splitColumns).
 */
export function AuditTableView(props: {
  table: AuditTable;
  href: ((format: 'csv' | 'xls-csv' | 'json') => string) | null;
  caption?: Child;
  maxColumns?: number;
}) {
  if (props.maxColumns && props.table.columns.length > props.maxColumns && props.table.rows.length > 0)
    return (
      <>
        {splitColumns(props.table, props.maxColumns).map((part) => (
          <AuditTableView table={part} href={null} caption={props.caption} />
        ))}
        {props.href ? <DownloadLinks href={props.href} table={props.table.id} /> : null}
      </>
    );
  const t = props.table;
  return (
    <div class="vc-audit-table" id={`table-${t.id}`}>
      {t.rows.length === 0 ? (
        <p class="vc-note" data-empty={t.id}>
          {t.empty}
        </p>
      ) : (
        <table class="vc-table vc-table-compact" data-table={t.id}>
          {props.caption ? <caption>{props.caption}</caption> : null}
          <thead>
            <tr>
              {t.columns.map((c) => (
                <th scope="col" class={c.numeric ? 'num' : undefined}>
                  {c.label}
                </th>
              ))}
            </tr>
          </thead>
          <tbody>
            {t.rows.map((r) => (
              <tr>
                {r.map((c, i) => (
                  <td
                    class={[t.columns[i]?.numeric ? 'num' : '', c.cls ?? ''].join(' ').trim() || undefined}
                    data-value={c.value === undefined ? undefined : c.value === null ? '' : String(c.value)}
                  >
                    {c.href ? <a href={c.href}>{c.text}</a> : c.text}
                  </td>
                ))}
              </tr>
            ))}
          </tbody>
        </table>
      )}
      {props.href ? <DownloadLinks href={props.href} table={t.id} /> : null}
    </div>
  );
}
