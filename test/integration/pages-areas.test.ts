import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { type Db, migrate, openDatabase } from '../../src/store/db.ts';
import { createApp } from '../../src/web/app.ts';
import { importPageLine, type LineFiles } from '../helpers/pages-data.ts';

let db: Db;
let files: LineFiles;
let app: ReturnType<typeof createApp>;

beforeAll(async () => {
  db = openDatabase(':memory:');
  migrate(db);
  files = await importPageLine(db);
  app = createApp({ db, dataDir: files.dir, version: 'test', log: () => {} });
});
afterAll(() => {
  files?.cleanup();
  db?.close();
});

/** The table row of a location. */
function row(html: string, id: string): string {
  const m = new RegExp(`<tr data-location="${id}"[^>]*>([\\s\\S]*?)</tr>`).exec(html);
  if (!m) throw new Error(`no row for ${id}`);
  return m[1]!;
}

describe('GET /areas', () => {
  it('lists locations by area with target class, achieved class and pass/fail by word and glyph', async () => {
    const res = await app.request('/areas');
    expect(res.status).toBe(200);
    const html = await res.text();
    expect(html.startsWith('<!doctype html>')).toBe(true);
    expect(html).toContain('<h1>Areas</h1>');
    const bay = row(html, 'bay-3');
    expect(bay).toContain('ISO 5');
    expect(bay).toContain('✗ fail');
    const me = row(html, 'me-1');
    expect(me).toContain('ISO 3');
    expect(me).toContain('✓ pass');
    expect(me).toContain('≥ 100 nm, ≥ 300 nm, ≥ 500 nm'); // 1 µm is n/a for class 3 (ISO 14644-1:2015 Table 1)
  });

  it('finds the class Bay 3 achieves from the ISO 14644-1:2015 formula applied to its mean concentrations', async () => {
    // Bay 3, ≥ 0.5 µm: 300 + 5·(i mod 7) counts per 28.3 L, +80 at sample 70; ≥ 0.1 µm 8×, ≥ 0.3 µm 2×,
    // ≥ 1 µm ⌊/4⌋ (test/helpers/pages-data.ts). Class limit C_n = 10^N (0.1/D)^2.08 (ISO 14644-1:2015
    // eq. (1)): the lowest N with every mean ≤ C_n is N* = max_D log10(mean_D · (D/0.1)^2.08), taken up
    // to the next 0.1 step. Table 1 rounds limits to 3 significant figures, which can move the
    // answer by one step at most: tolerance 0.1.
    const idx = Array.from({ length: 96 }, (_, i) => i).filter((i) => !(i > 40 && i < 52));
    const c05 = idx.map((i) => 300 + (i % 7) * 5 + (i === 70 ? 80 : 0));
    const v = 0.0283;
    const mean = (f: (c: number) => number) => c05.reduce((a, c) => a + f(c) / v, 0) / c05.length;
    const sizes: [number, number][] = [
      [0.1, mean((c) => 8 * c)],
      [0.3, mean((c) => 2 * c)],
      [0.5, mean((c) => c)],
      [1, mean((c) => Math.floor(c / 4))],
    ];
    const nStar = Math.max(...sizes.map(([d, m]) => Math.log10(m * (d / 0.1) ** 2.08)));
    const expected = Math.ceil(nStar * 10 - 1e-9) / 10;
    const html = await (await app.request('/areas')).text();
    const cells = [...row(html, 'bay-3').matchAll(/<td class="num">ISO ([\d.]+)<\/td>/g)].map((m) =>
      Number(m[1]),
    );
    expect(cells[0]).toBe(5);
    expect(Math.abs(cells[1]! - expected)).toBeLessThanOrEqual(0.1 + 1e-9);
  });

  it('escapes location and area names from the file', async () => {
    const html = await (await app.request('/areas')).text();
    expect(html).not.toContain('<script>alert(1)</script>');
    expect(html).toContain('&lt;script&gt;alert(1)&lt;/script&gt; &quot;Bay&quot; &amp; Co&#39;s');
  });

  it('draws the default trend (the first location with levels, at the levels’ channel) with a gap', async () => {
    const html = await (await app.request('/areas')).text();
    const panel = /<section class="vc-trend-panel[\s\S]*?<\/section>/.exec(html)![0];
    expect(panel).toContain('data-chart="trend"');
    expect(panel).toMatch(/data-level="alert" data-value="12000"/);
    expect(panel).toMatch(/data-level="action" data-value="13000"/);
    expect(panel).toMatch(/data-level="class-limit" data-value="3520"/); // ISO 5 at 0.5 µm, Table 1
    expect(panel.match(/class="vc-gap"/g)).toHaveLength(1);
    expect(panel.match(/vc-point-action/g)).toHaveLength(1);
  });

  it('logs the excursion above the action level with its time', async () => {
    const html = await (await app.request('/areas')).text();
    const log = /<table class="vc-table vc-table-compact vc-excursions">[\s\S]*?<\/table>/.exec(html)![0];
    expect(log.match(/<tr>/g)).toHaveLength(2); // header + one excursion
    expect(log).toContain('2025-03-03 17:30 UTC');
    expect(log).toContain('none recorded');
  });
});

describe('GET /areas/trend', () => {
  it('returns the panel alone to htmx, for the chosen location, channel and window', async () => {
    const res = await app.request('/areas/trend?location=me-1&channel=0.3&window=all', {
      headers: { 'HX-Request': 'true' },
    });
    expect(res.status).toBe(200);
    const html = await res.text();
    expect(html.startsWith('<section class="vc-trend-panel')).toBe(true);
    expect(html).not.toContain('<!doctype');
    expect(html).toContain('Bonder mini-environment: particles ≥ 300 nm per m³');
    expect(html).toMatch(/<option value="me-1" selected="">/);
    expect(html).toMatch(/data-level="class-limit" data-value="102"/); // ISO 3 at 0.3 µm, Table 1
  });

  it('redirects a plain request to the full page with the same choice', async () => {
    const res = await app.request('/areas/trend?location=me-1&window=24h');
    expect(res.status).toBe(303);
    expect(res.headers.get('location')).toBe('/areas?location=me-1&window=24h#trend-panel');
  });

  it('answers 404 naming the unknown location asked for, shown escaped', async () => {
    const res = await app.request('/areas?location=%3Cnope%3E');
    expect(res.status).toBe(404);
    const html = await res.text();
    expect(html).not.toContain('<nope>');
    expect(html).toContain('there is no location &quot;&lt;nope&gt;&quot;');
  });
});
