import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { removalEfficiency } from '../../src/model/clean.ts';
import { type Db, migrate, openDatabase } from '../../src/store/db.ts';
import { createApp } from '../../src/web/app.ts';
import { paramsFromWidth } from '../../src/web/routes/tools.tsx';
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

describe('paramsFromWidth', () => {
  it('gives the same curve as the tools file’s logistic in log10 d with a width in decades', () => {
    // Tools file form: PRE = E/(1 + exp(−(log10 d − log10 d50)/w)) (src/ingest/kinds/tools.ts);
    // model form: PRE = E/(1 + (d50/d)^k). Evaluated directly from the file's formula here.
    const E = 0.99;
    const d50 = 30e-9;
    const w = 0.2;
    const p = paramsFromWidth(E, d50, w);
    for (const d of [10e-9, 30e-9, 45e-9, 100e-9, 1e-6]) {
      const fileForm = E / (1 + Math.exp(-(Math.log10(d) - Math.log10(d50)) / w));
      expect(removalEfficiency(d, p)).toBeCloseTo(fileForm, 12);
    }
  });
});

describe('GET /tools', () => {
  it('lists adders per wafer pass per tool and chamber, largest first, with escaped names', async () => {
    const res = await app.request('/tools');
    expect(res.status).toBe(200);
    const html = await res.text();
    expect(html).toContain('<h1>Tools &amp; cleans</h1>');
    const rows = [
      ...html.matchAll(/<tr data-tool="([^"]+)"(?: data-chamber="[^"]+")?>([\s\S]*?)<\/tr>/g),
    ].map((m) => [m[1], m[2]!]);
    expect(rows.map((r) => r[0])).toEqual(['ACT-1', 'BOND-1', 'BOND-1', 'CLN-1', 'STK-1']);
    expect(rows[0]![1]).toContain('2.5 ≥ 45 nm'); // bands 2 + 0.5 from 45 nm
    expect(rows[1]![1]).toContain('1.5 ≥ 45 nm');
    expect(rows[1]![1]).toContain('×/÷ 2');
    expect(rows[2]![1]).toContain('ALN');
    expect(rows[4]![1]).toContain('none stated');
    expect(html).not.toContain('<script>alert(1)</script>');
    expect(html).toContain('Bonder &lt;script&gt;alert(1)&lt;/script&gt;');
  });

  it('shows each tool once: its chambers are rows of its group, not tools of their own', async () => {
    const html = await (await app.request('/tools')).text();
    const table = /<table class="vc-table vc-table-compact vc-adders">([\s\S]*?)<\/table>/.exec(html)![1]!;
    // The bonder's name (tools file of test/helpers/pages-data.ts) appears once, in its group.
    expect(table.match(/Bonder &lt;script&gt;/g)).toHaveLength(1);
    const group = /<tbody class="vc-tool-group" data-tool-group="BOND-1">([\s\S]*?)<\/tbody>/.exec(
      table,
    )![1]!;
    expect(group).toMatch(/<tr data-tool="BOND-1">[\s\S]*?whole tool/);
    expect(group).toMatch(/<tr data-tool="BOND-1" data-chamber="ALN">[\s\S]*?ALN[\s\S]*?0.6 ≥ 45 nm/);
    const groups = [...table.matchAll(/data-tool-group="([^"]+)"/g)].map((m) => m[1]);
    expect(new Set(groups).size).toBe(groups.length);
  });

  it('draws a removal curve per clean, with measured bands where the file has them', async () => {
    const html = await (await app.request('/tools')).text();
    const fig = (id: string) =>
      new RegExp(`<figure class="vc-panel vc-clean" data-clean="${id}">([\\s\\S]*?)</figure>`).exec(
        html,
      )![1]!;
    const meg = fig('PBC-MEG');
    expect(meg).toContain('data-chart="removal-curve"');
    expect(meg.match(/class="vc-mark vc-curve"/g)).toHaveLength(1);
    expect(meg.match(/class="vc-mark vc-band"/g)).toBeNull();
    expect(meg).toContain('Logistic in log d: maximum 99 %, half of it at 30 nm');
    const rinse = fig('RINSE');
    expect(rinse.match(/class="vc-mark vc-band"/g)).toHaveLength(4);
    expect(rinse.match(/class="vc-mark vc-curve"/g)).toHaveLength(1);
    expect(rinse).toContain('Logistic fitted to the measured bands');
    expect(rinse).toContain('Rinse &lt;script&gt;');
    const diw = fig('DIW');
    expect(diw.match(/class="vc-mark vc-band"/g)).toHaveLength(2);
    expect(diw.match(/class="vc-mark vc-curve"/g)).toBeNull();
    expect(diw).toContain('too few to fit a curve');
    // Measured efficiency is 1 − after/before: 30–50 nm band 1 − 220/400 = 45 %.
    expect(rinse).toContain('30 nm–50 nm: 45 %');
  });

  it('keeps the safety note on cleans', async () => {
    const html = await (await app.request('/tools')).text();
    expect(html).toContain('chemical hygiene plan and the safety data');
  });
});
