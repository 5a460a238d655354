import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { type Db, migrate, openDatabase } from '../../src/store/db.ts';
import { setSetting } from '../../src/store/settings.ts';
import { createApp } from '../../src/web/app.ts';
import { AS_OF_SETTING } from '../../src/web/routes/lots.tsx';
import { AS_OF_MS, importPageLine, type LineFiles, lineFiles } from '../helpers/pages-data.ts';

let db: Db;
let files: LineFiles;
let app: ReturnType<typeof createApp>;

beforeAll(async () => {
  db = openDatabase(':memory:');
  migrate(db);
  files = await importPageLine(db, lineFiles());
  setSetting(db, AS_OF_SETTING, new Date(AS_OF_MS).toISOString());
  app = createApp({ db, dataDir: files.dir, version: 'test', log: () => {} });
});
afterAll(() => {
  files?.cleanup();
  db?.close();
});

function table(html: string, which: 'waiting' | 'bonded'): string {
  return (
    new RegExp(`<table class="vc-table vc-lot-table" data-table="${which}">([\\s\\S]*?)</table>`).exec(
      html,
    )?.[1] ?? ''
  );
}

describe('GET /lots', () => {
  it('puts the lot whose pairs wait in the queue with its worst call, and the bonded lot below', async () => {
    const res = await app.request('/lots');
    expect(res.status).toBe(200);
    const html = await res.text();
    expect(html.startsWith('<!doctype html>')).toBe(true);
    const waiting = table(html, 'waiting');
    expect(waiting).toContain('data-lot="L-01"');
    expect(waiting).not.toContain('data-lot="L-02"');
    // L-01: pairs bond, re-clean, hold → the lot's call is hold, counted by glyph and word.
    expect(waiting).toMatch(/data-lot="L-01"[\s\S]*?data-call="hold"/);
    expect(waiting).toContain('● 1 bond');
    expect(waiting).toContain('◐ 1 re-clean');
    expect(waiting).toContain('■ 1 hold');
    const bonded = table(html, 'bonded');
    expect(bonded).toContain('data-lot="L-02"');
    expect(bonded).toContain('2025-03-03 19:40 UTC');
  });

  it('assesses at ?asOf= when given: before the bond of L-02 both lots wait', async () => {
    const html = await (await app.request(`/lots?asOf=${encodeURIComponent('2025-03-03T19:35:00Z')}`)).text();
    expect(table(html, 'waiting')).toContain('data-lot="L-02"');
    expect(table(html, 'bonded')).toBe('');
  });
});

describe('GET /lots/:id', () => {
  it('lists each pair with its call, intervals, die loss in both forms and reasons', async () => {
    const res = await app.request('/lots/L-01');
    expect(res.status).toBe(200);
    const html = await res.text();
    const rows = [...html.matchAll(/<tr data-pair="([^"]+)">([\s\S]*?)<\/tr>/g)];
    expect(rows.map((r) => r[1])).toEqual(['P-01', 'P-02', 'P-03']);
    expect(rows.map((r) => /data-call="([^"]+)"/.exec(r[2]!)![1])).toEqual(['bond', 're-clean', 'hold']);
    for (const r of rows) {
      // expected voids, unbonded fraction, die loss Poisson and NB, each over its interval "low–high"
      expect(r[2]!.match(/<span class="vc-small">[^<]*\d[^<]*–[^<]*<\/span>/g)).toHaveLength(4);
      expect(r[2]).toContain('class="vc-reasons"');
    }
    expect(rows[2]![2]).toContain('A re-clean is not allowed');
    expect(html).toContain('Lot Pareto');
    expect(html).toContain('data-chart="pareto"');
    // The tool name from the tools file (with markup, quotes, ampersand) in the Pareto, escaped.
    expect(html).not.toContain('<script>alert(1)</script>');
    expect(html).toContain('Bonder &lt;script&gt;alert(1)&lt;/script&gt; &quot;Bay&quot; &amp; Co&#39;s');
    // The lot's call is hold; the caution goes with re-clean calls only.
    expect(html).toMatch(/<h1>Lot L-01 <span class="vc-call vc-call-hold"/);
  });

  it('answers 404 with its own page for an unknown lot, the id escaped', async () => {
    const res = await app.request('/lots/%3Cb%3Enope');
    expect(res.status).toBe(404);
    const html = await res.text();
    expect(html).toContain('There is no lot &lt;b&gt;nope.');
  });

  it('swaps the Pareto grouping as a fragment for htmx, and redirects a plain request', async () => {
    const res = await app.request(`/lots/L-01/pareto?by=size&asOf=${AS_OF_MS}`, {
      headers: { 'HX-Request': 'true' },
    });
    expect(res.status).toBe(200);
    const html = await res.text();
    expect(html.startsWith('<section class="vc-pareto-panel" id="pareto-panel" data-by="size">')).toBe(true);
    expect(html).toContain('by size band');
    const plain = await app.request('/lots/L-01/pareto?by=clean');
    expect(plain.status).toBe(303);
    expect(plain.headers.get('location')).toBe('/lots/L-01?pareto=clean#pareto-panel');
  });
});

describe('count intervals', () => {
  it('shows the interval of a count (voids, killed dies) in whole numbers on the lot page', async () => {
    const html = await (await app.request('/lots/L-01')).text();
    const body = /<table class="vc-table vc-pair-table">[\s\S]*?<tbody>([\s\S]*?)<\/tbody>/.exec(html)![1]!;
    // Columns: expected voids, unbonded area, die loss Poisson, die loss NB (lot.tsx); the count
    // columns are the cells whose interval has no unit.
    const intervals = [
      ...body.matchAll(/<td class="num vc-estimate">[^<]*<br\/?>\s*<span class="vc-small">([^<]*)<\/span>/g),
    ]
      .map((m) => m[1]!)
      .filter((t) => !t.includes('%'));
    expect(intervals.length).toBe(9); // 3 pairs × voids, die loss Poisson, die loss NB
    for (const t of intervals) expect(t).toMatch(/^\d+–\d+$/);
  });

  it('says a spec bound on voids as a whole count in the reasons', async () => {
    const html = await (await app.request('/lots/L-01')).text();
    const bounds = [...html.matchAll(/reportable voids: 95 % upper bound ([^,]+), spec ≤ ([^;<.]+)/g)];
    for (const b of bounds) {
      expect(b[1]).toMatch(/^\d+$/);
      expect(b[2]).toMatch(/^\d+$/);
    }
  });
});
