/**
 * The import history reaches every import: one page of 50 at a time, newest first, filtered by
 * kind on demand; a page or kind that does not exist is a 400 with the reason, never a 500. Works
 * without script (links and a GET form on /imports) and swaps in place with htmx (/imports/history).
 *
 * The database holds 61 imports made through the real pipeline: 60 one-row locations files
 * (loc-01 … loc-60, imported in that order) and one tools file, the newest.
 */
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { importFile } from '../../src/ingest/pipeline.ts';
import { type Db, migrate, openDatabase } from '../../src/store/db.ts';
import { createApp } from '../../src/web/app.ts';
import { TOOLS_JSON } from '../helpers/pages-data.ts';

const N = 60;
const name = (i: number) => `loc-${String(i).padStart(2, '0')}.csv`;

let db: Db;
let dir: string;
let app: ReturnType<typeof createApp>;

beforeAll(async () => {
  db = openDatabase(':memory:');
  migrate(db);
  dir = mkdtempSync(join(tmpdir(), 'voidcast-history-'));
  for (let i = 1; i <= N; i++) {
    const path = join(dir, name(i));
    writeFileSync(
      path,
      `location_id,parent_id,level,name,environment,iso_class,floor_area_m2\nsite-${i},,site,Site ${i},open-room,,\n`,
    );
    const r = await importFile(db, { kind: 'locations', path });
    if (r.status !== 'imported') throw new Error(`${name(i)}: ${JSON.stringify(r.issues)}`);
  }
  writeFileSync(join(dir, 'tools.json'), TOOLS_JSON);
  await importFile(db, { kind: 'tools', path: join(dir, 'tools.json') });
  app = createApp({ db, dataDir: dir, version: 'test', log: () => {} });
}, 60_000);
afterAll(() => {
  db?.close();
  if (dir) rmSync(dir, { recursive: true, force: true });
});

/** File names listed in the history section of a page or fragment. */
function files(html: string): string[] {
  const section = /<section id="import-history"[\s\S]*?<\/section>/.exec(html)?.[0] ?? '';
  return [...section.matchAll(/<a href="\/imports\/history\/\d+">([^<]+)<\/a>/g)].map((m) => m[1]!);
}

describe('the import history', () => {
  it('shows the newest 50 of 61 and says which ones, with a link to the older ones', async () => {
    const res = await app.request('/imports');
    expect(res.status).toBe(200);
    const html = await res.text();
    expect(files(html)).toHaveLength(50);
    expect(files(html)[0]).toBe('tools.json');
    expect(html).toContain('Imports 1–50 of 61, newest first (page 1 of 2).');
    expect(html).toContain('href="/imports?history=2#import-history"');
    expect(html).toContain('hx-get="/imports/history?history=2"');
  });

  it('reaches every import by following the pages (no script)', async () => {
    const seen = [...files(await (await app.request('/imports')).text())];
    const res = await app.request('/imports?history=2');
    expect(res.status).toBe(200);
    const html = await res.text();
    expect(html).toContain('Imports 51–61 of 61, newest first (page 2 of 2).');
    seen.push(...files(html));
    expect(seen).toHaveLength(61);
    expect(new Set(seen).size).toBe(61);
    for (let i = 1; i <= N; i++) expect(seen).toContain(name(i));
    // The oldest import is the last row of the last page.
    expect(seen.at(-1)).toBe(name(1));
  });

  it('filters by kind with a GET form that works without script', async () => {
    const page = await (await app.request('/imports')).text();
    expect(page).toMatch(
      /<form class="vc-inline-form vc-history-filter" method="get" action="\/imports#import-history"/,
    );
    const html = await (await app.request('/imports?historyKind=tools')).text();
    expect(files(html)).toEqual(['tools.json']);
    expect(html).toContain('1 import of kind tools.');
    const locs = await (await app.request('/imports?historyKind=locations&history=2')).text();
    expect(files(locs)).toHaveLength(10);
  });

  it('swaps one page in place for htmx and sends a plain request to the full page', async () => {
    const res = await app.request('/imports/history?history=2', { headers: { 'HX-Request': 'true' } });
    expect(res.status).toBe(200);
    const html = await res.text();
    expect(html.startsWith('<section id="import-history"')).toBe(true);
    expect(files(html)).toHaveLength(11);
    const plain = await app.request('/imports/history?history=2&historyKind=locations');
    expect(plain.status).toBe(303);
    expect(plain.headers.get('location')).toBe('/imports?history=2&historyKind=locations#import-history');
  });

  it('answers a page or kind that does not exist with 400 and the reason, never 500', async () => {
    const cases: [string, string][] = [
      ['history=0', 'History page “0” is not a page number: pages are whole numbers from 1.'],
      ['history=-1', 'History page “-1” is not a page number'],
      ['history=1.5', 'History page “1.5” is not a page number'],
      ['history=abc', 'History page “abc” is not a page number'],
      ['history=99999999999999999999', 'History page 99999999999999999999 does not exist'],
      ['history=3', 'History page 3 does not exist: the history has 2 pages of 50 imports.'],
      [
        'history=2&historyKind=tools',
        'History page 2 does not exist: the tools history has 1 page of 50 imports.',
      ],
      ['historyKind=nope', '“nope” is not a kind of import'],
    ];
    for (const [q, reason] of cases) {
      const res = await app.request(`/imports?${q}`);
      expect(res.status, q).toBe(400);
      const html = await res.text();
      expect(html, q).toContain(reason.replaceAll('“', '“'));
      // The page still works: the form and the first page of the history are there.
      expect(files(html), q).toHaveLength(50);
      const frag = await app.request(`/imports/history?${q}`, { headers: { 'HX-Request': 'true' } });
      expect(frag.status, q).toBe(400);
      expect(await frag.text(), q).toContain(reason);
    }
  });
});
