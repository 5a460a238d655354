/**
 * Downloads of the audit pages' tables: CSV after RFC 4180, the spreadsheet variant (UTF-8 byte-order
 * mark and formula guard, src/engine/export/csv.ts), and JSON of the same rows. Every table on the
 * area audit, its report and the line view is built once (views/pages/audit-table.tsx) and sent
 * from here, so a download holds the rows the page shows.
 */
import type { Context } from 'hono';
import { type AuditTable, tableForCsv, tableForJson } from '../../../views/pages/audit-table.tsx';
import { csvMediaType, toCsv } from '../../engine/export/csv.ts';
import { BadParamError, choiceValue } from '../params.ts';

export const DOWNLOAD_FORMATS = ['csv', 'xls-csv', 'json'] as const;
export type DownloadFormat = (typeof DOWNLOAD_FORMATS)[number];

/** `?format=`: csv (RFC 4180), xls-csv (with BOM, for spreadsheets) or json; default csv. */
export function queryFormat(c: Context): DownloadFormat {
  return choiceValue('format', c.req.query('format'), DOWNLOAD_FORMATS) ?? 'csv';
}

/** A file name part: letters, digits, dot, dash and underscore only. */
export function fileSafe(s: string): string {
  return s.replace(/[^A-Za-z0-9._-]+/g, '-').replace(/^-+|-+$/g, '') || 'table';
}

/** The UTC date of a time as yyyymmdd, for a file name. */
export function fileDate(ms: number): string {
  return new Date(ms).toISOString().slice(0, 10).replaceAll('-', '');
}

/** One table, chosen by id from those a page shows; 404 when the page has no such table. */
export function pickTable(tables: AuditTable[], id: string): AuditTable {
  const t = tables.find((x) => x.id === id);
  if (!t)
    throw new BadParamError(
      'table',
      `names no table of this page: "${id.slice(0, 40)}" (tables: ${tables.map((x) => x.id).join(', ')})`,
      404,
    );
  return t;
}

/**
 * The table as a download: text/csv; charset=utf-8 (RFC 4180 §3, header=present) or
 * application/json, attached under `${stem}.csv` / `${stem}.json`.
 */
export function sendTable(table: AuditTable, format: DownloadFormat, stem: string): Response {
  const name = fileSafe(stem);
  if (format === 'json')
    return new Response(`${JSON.stringify(tableForJson(table), null, 2)}\n`, {
      headers: {
        'content-type': 'application/json; charset=utf-8',
        'content-disposition': `attachment; filename="${name}.json"`,
      },
    });
  const body = toCsv(tableForCsv(table), format === 'xls-csv' ? 'spreadsheet' : 'plain');
  return new Response(body, {
    headers: {
      'content-type': csvMediaType(),
      'content-disposition': `attachment; filename="${format === 'xls-csv' ? `${name}-spreadsheet` : name}.csv"`,
    },
  });
}
