/**
 * An area's audit page, its report, its downloads and the search, through app.request() on the
 * small page line of test/helpers/pages-data.ts (imported through the real import path), plus an
 * area without any location of its own.
 *
 * Downloads are checked against the page: every table's CSV (RFC 4180 §2, read back with papaparse),
 * its spreadsheet variant (UTF-8 byte-order mark, RFC 3629 §6) and its JSON hold the rows the HTML
 * table shows; the headers are those RFC 4180 §3 and RFC 6266 §4 name (text/csv with charset,
 * an attachment with a file name).
 */
import Papa from 'papaparse';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { type Db, migrate, openDatabase } from '../../src/store/db.ts';
import { createApp } from '../../src/web/app.ts';
import { downloadLinks, htmlTables } from '../helpers/html-tables.ts';
import { importPageLine, type LineFiles, lineFiles } from '../helpers/pages-data.ts';

let db: Db;
let files: LineFiles;
let app: ReturnType<typeof createApp>;

/** An area with no location inside it and no samples of its own. */
const EMPTY_AREA_CSV = [
  'location_id,parent_id,level,name,environment,iso_class,floor_area_m2',
  'empty-1,site-a,area,Empty annex,open-room,7,30',
  '',
].join('\n');

beforeAll(async () => {
  db = openDatabase(':memory:');
  migrate(db);
  files = await importPageLine(db, [
    ...lineFiles(),
    { kind: 'locations', name: 'annex.csv', text: EMPTY_AREA_CSV },
  ]);
  app = createApp({ db, dataDir: files.dir, version: 'test', log: () => {} });
}, 60_000);
afterAll(() => {
  files?.cleanup();
  db?.close();
});

const PERIOD = 'from=2025-03-03T00:00Z&to=2025-03-04T00:00Z';

async function page(path: string): Promise<string> {
  const res = await app.request(path);
  expect(res.status, path).toBe(200);
  return res.text();
}

describe('an area’s audit page', () => {
  it('classifies the area over the period and offers every table as CSV, spreadsheet CSV and JSON holding the rows shown', async () => {
    const html = await page(`/areas/fab-1/audit?${PERIOD}`);
    const tables = htmlTables(html);
    expect(tables.map((t) => t.id)).toEqual(
      expect.arrayContaining(['classification-summary', 'classification-sizes', 'classification-locations']),
    );
    const links = downloadLinks(html);
    for (const t of tables) {
      const l = links.get(t.id);
      expect(l, `download links beside ${t.id}`).toBeDefined();
      // CSV after RFC 4180.
      const csv = await app.request(l!.csv!);
      expect(csv.status).toBe(200);
      expect(csv.headers.get('content-type')).toMatch(/^text\/csv; charset=utf-8/);
      expect(csv.headers.get('content-disposition')).toBe(
        `attachment; filename="audit-fab-1-${t.id}-20250303-20250304.csv"`,
      );
      const text = await csv.text();
      expect(text.endsWith('\r\n')).toBe(true);
      const parsed = Papa.parse<string[]>(text, { skipEmptyLines: true });
      expect(parsed.errors).toEqual([]);
      expect(parsed.data[0]).toEqual(t.header);
      expect(parsed.data.slice(1)).toEqual(t.rows);
      // The spreadsheet variant: the same rows after a byte-order mark.
      const sheet = await app.request(l!['xls-csv']!);
      expect(sheet.headers.get('content-disposition')).toContain('-spreadsheet.csv"');
      const bytes = new Uint8Array(await sheet.arrayBuffer());
      expect([...bytes.slice(0, 3)]).toEqual([0xef, 0xbb, 0xbf]);
      const sheetRows = Papa.parse<string[]>(new TextDecoder().decode(bytes.slice(3)), {
        skipEmptyLines: true,
      });
      expect(sheetRows.data.length).toBe(parsed.data.length);
      // JSON: one object per row, keyed by column.
      const json = await app.request(l!.json!);
      expect(json.headers.get('content-type')).toMatch(/^application\/json/);
      const body = (await json.json()) as {
        table: string;
        columns: { key: string }[];
        rows: Record<string, unknown>[];
      };
      expect(body.table).toBe(t.id);
      expect(
        body.rows.map((r) => body.columns.map((c) => (r[c.key] === null ? '' : String(r[c.key])))),
      ).toEqual(t.rows);
    }
  });

  it('says "no data" for a period without samples, with the reason, and never a pass', async () => {
    const html = await page('/areas/fab-1/audit?from=2024-01-01T00:00Z&to=2024-01-02T00:00Z');
    expect(html).toContain('data-problems');
    expect(html).toContain('No usable counter sample of this area’s locations falls in this period');
    const summary = htmlTables(html).find((t) => t.id === 'classification-summary')!;
    const verdict = summary.rows.find((r) => r[0] === 'Area verdict')!;
    expect(verdict[1]).not.toBe('pass');
    expect(html).toMatch(/data-verdict="(no data|not judged|fail)"/);
  });

  it('says so for an area with no location, and never a pass', async () => {
    const res = await app.request(`/areas/empty-1/audit?${PERIOD}`);
    expect(res.status).toBe(200);
    const html = await res.text();
    expect(html).toContain('data-problems');
    expect(html).not.toContain('data-verdict="pass"');
    expect(html).toMatch(/No sampling location|no sampling location|not judged|no data/);
  });

  it('refuses a period that ends before it starts, or is longer than 400 days, with 400 naming the parameter', async () => {
    for (const q of [
      'from=2025-03-04T00:00Z&to=2025-03-03T00:00Z',
      'from=2020-01-01T00:00Z&to=2025-01-01T00:00Z',
    ]) {
      const res = await app.request(`/areas/fab-1/audit?${q}`);
      expect(res.status, q).toBe(400);
      expect(await res.text()).toContain('to must');
    }
  });

  it('refuses a chart baseline window given by half or ending before it starts, with 400 naming it', async () => {
    for (const [q, name] of [
      ['limitsFrom=2025-03-01T00:00Z', 'limitsTo'],
      ['limitsTo=2025-03-01T00:00Z', 'limitsFrom'],
      ['limitsFrom=2025-03-02T00:00Z&limitsTo=2025-03-01T00:00Z', 'limitsTo'],
    ] as const) {
      const res = await app.request(`/areas/fab-1/audit?${PERIOD}&${q}`);
      expect(res.status, q).toBe(400);
      expect(await res.text(), q).toContain(name);
    }
    // A good window is kept in the form and in every link of the page (report, downloads).
    const html = await page(
      `/areas/fab-1/audit?${PERIOD}&limitsFrom=2025-03-01T00:00Z&limitsTo=2025-03-02T00:00Z`,
    );
    expect(html).toContain('name="limitsFrom" value="2025-03-01T00:00Z"');
    expect(html).toContain('limitsFrom=2025-03-01T00%3A00Z&amp;limitsTo=2025-03-02T00%3A00Z');
  });

  it('shows every part of the audit, each table or the words of its empty state, none left out', async () => {
    const html = await page(`/areas/fab-1/audit?${PERIOD}`);
    const ids = [
      ...htmlTables(html).map((t) => t.id),
      ...[...html.matchAll(/data-empty="([^"]+)"/g)].map((m) => m[1]!),
    ];
    for (const id of [
      'classification-summary',
      'classification-sizes',
      'classification-locations',
      'levels',
      'excursions',
      'events',
      'exposed-wafers',
      'lot-costs',
      'control-charts',
    ])
      expect(ids, id).toContain(id);
    expect(html).not.toContain('not available');
  });
});

describe('the audit report', () => {
  it('has our section headings in order and no download links or forms', async () => {
    const html = await page(`/areas/fab-1/audit/report?${PERIOD}`);
    const heads = [
      'Contamination audit report',
      '1. Classification against ISO 14644-1',
      '2. Alert and action levels and how they were set',
      '3. Excursions and what they added',
      '4. Control charts',
      '5. Sign-offs',
    ].map((h) => html.indexOf(h));
    expect(heads.every((i) => i > 0)).toBe(true);
    expect([...heads].sort((a, b) => a - b)).toEqual(heads);
    expect(html).not.toContain('data-downloads');
    expect(html).toContain('<link rel="stylesheet" href="/assets/print.css" media="print"');
    const css = await app.request('/assets/print.css');
    expect(css.headers.get('content-type')).toContain('text/css');
    expect(await css.text()).toContain('break-before: page');
  });
});

describe('search by id', () => {
  it('is on every page as a plain GET form', async () => {
    for (const p of ['/', '/lots', '/areas', `/areas/fab-1/audit?${PERIOD}`]) {
      const html = await page(p);
      expect(html).toMatch(/<form class="vc-search" method="get" action="\/search"/);
      expect(html).toContain('name="q"');
    }
  });

  it('goes straight to the one thing an exact id names, lists several, and says when nothing matches', async () => {
    const one = await app.request('/search?q=bay-3');
    expect(one.status).toBe(303);
    expect(one.headers.get('location')).toBe('/areas/bay-3/audit');
    const lot = await app.request('/search?q=L-01');
    const html = await lot.text();
    expect(html).toContain('data-kind="lot"');
    expect(html).toContain('data-kind="wafer"');
    expect(html).toContain('href="/lots/L-01"');
    const none = await page('/search?q=%3Cnothing%3E');
    expect(none).toContain('data-hits="0"');
    expect(none).not.toContain('<nothing>');
  });
});
