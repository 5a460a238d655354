/**
 * The pair page's weight on the demo line (docs/performance.md): every pair's page under 150 KB
 * of HTML (issue 17), so that a team opening the same lot is not held up by the die grids — which,
 * drawn one element per die, made the page weigh about 800 KB. Checked on every pair of the demo
 * (the largest is the one that counts), assessed at the demo's frozen clock.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { loadDemoOnce, readDemoManifest } from '../../src/cli/demo.ts';
import { type Db, migrate, openDatabase } from '../../src/store/db.ts';
import { installationClockMs } from '../../src/store/settings.ts';
import { createApp } from '../../src/web/app.ts';

const LIMIT_BYTES = 150 * 1024;

describe('the pair page on the demo line', () => {
  let db: Db;
  let app: ReturnType<typeof createApp>;
  beforeAll(async () => {
    db = openDatabase(':memory:');
    migrate(db);
    await loadDemoOnce(db, { log: () => {} });
    // the pages assess at the demo's frozen clock (docs/demo.md), the time its manifest states
    expect(installationClockMs(db)).toBe(Date.parse(readDemoManifest().asOf));
    app = createApp({ db, dataDir: '.', version: 'test', log: () => {} });
  }, 120_000);
  afterAll(() => db?.close());

  it('weighs under 150 KB for every pair, with its die grid and void map drawn', async () => {
    const lots = ((await (await app.request('/api/lots')).json()) as { lots: { lotId: string }[] }).lots;
    const pairs: string[] = [];
    for (const l of lots) {
      const a = (await (await app.request(`/api/lots/${l.lotId}/assessment`)).json()) as {
        pairs?: { pairId: string }[];
      };
      pairs.push(...(a.pairs ?? []).map((p) => p.pairId));
    }
    expect(pairs.length).toBeGreaterThan(10);
    let largest = { pairId: '', bytes: 0 };
    for (const id of pairs) {
      const res = await app.request(`/pairs/${id}`);
      expect(res.status).toBe(200);
      const html = await res.text();
      const bytes = Buffer.byteLength(html);
      if (bytes > largest.bytes) largest = { pairId: id, bytes };
      expect(html).toContain('data-chart="void-map"');
      expect(html).toMatch(/data-dies="\d{3,}"/);
    }
    expect(largest.bytes, `largest: ${largest.pairId}`).toBeLessThan(LIMIT_BYTES);
  }, 120_000);
});
