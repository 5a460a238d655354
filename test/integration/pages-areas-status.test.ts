/**
 * The Areas page's status words on a line built for them (through the real imports): a location
 * without samples is "no data" and never counted as passing; the area and the site, which have no
 * samples of their own, roll up the locations inside them; a location whose mean passes but whose
 * samples rose above its action level is flagged with that excursion in the table.
 *
 * Counts per 28.3 L sample (1 min at 28.3 L/min), one channel ≥ 0.5 µm; concentration =
 * count / 0.0283 m³. ISO 14644-1:2015 Table 1, class 5 at 0.5 µm: 3520 per m³.
 * Counts vary by sample (n − 2 + i mod 5, mean n over 20 samples), as a working counter's do.
 * - bay-ok: n = 20 (707 per m³), sample 12 (20 by the rule) replaced by 150 (5300 per m³) against
 *   an action level of 3000 per m³: the mean (400 − 20 + 150)/20 = 26.5 → 936 per m³ passes
 *   class 5; one excursion.
 * - bay-bad: n = 200 (7067 per m³): fails class 5.
 * - bay-empty: no samples → no data.
 * - bay-free: n = 20, no target class → no target.
 */
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { importFile } from '../../src/ingest/pipeline.ts';
import type { ImportKindName } from '../../src/ingest/types.ts';
import { type Db, migrate, openDatabase } from '../../src/store/db.ts';
import { createApp } from '../../src/web/app.ts';

const LOCATIONS = [
  'location_id,parent_id,level,name,environment,iso_class,floor_area_m2,alert_ge_0.5um_per_m3,action_ge_0.5um_per_m3',
  'site,,site,Test site,open-room,,,,',
  'area,site,area,Test area,open-room,5,100,,',
  'bay-ok,area,bay,Bay with a peak,open-room,5,,2000,3000',
  'bay-bad,area,bay,Dirty bay,open-room,5,,,',
  'bay-empty,area,bay,Bay without a counter,open-room,5,,,',
  'bay-free,area,bay,Bay without a target,open-room,,,,',
  '',
].join('\n');

const T0 = Date.UTC(2025, 5, 2, 8, 0);
function counters(): string {
  const rows = ['# units: counts=raw', 'counter_id,location_id,start,duration_s,volume_L,status,ge_0.5um'];
  for (const [loc, n] of [
    ['bay-ok', 20],
    ['bay-bad', 200],
    ['bay-free', 20],
  ] as const)
    for (let i = 0; i < 20; i++) {
      const t = new Date(T0 + i * 60_000).toISOString().replace('.000Z', 'Z');
      rows.push(`C-${loc},${loc},${t},60,28.3,ok,${loc === 'bay-ok' && i === 12 ? 150 : n - 2 + (i % 5)}`);
    }
  return `${rows.join('\n')}\n`;
}

let db: Db;
let dir: string;
let app: ReturnType<typeof createApp>;
let html: string;

beforeAll(async () => {
  db = openDatabase(':memory:');
  migrate(db);
  dir = mkdtempSync(join(tmpdir(), 'voidcast-areas-status-'));
  const files: [ImportKindName, string, string][] = [
    ['locations', 'locations.csv', LOCATIONS],
    ['counter-samples', 'counters.csv', counters()],
  ];
  for (const [kind, name, text] of files) {
    writeFileSync(join(dir, name), text);
    const r = await importFile(db, { kind, path: join(dir, name) });
    if (r.status !== 'imported') throw new Error(`${name}: ${JSON.stringify(r.issues)}`);
  }
  app = createApp({ db, dataDir: dir, version: 'test', log: () => {} });
  const res = await app.request('/areas');
  expect(res.status).toBe(200);
  html = await res.text();
});
afterAll(() => {
  db?.close();
  if (dir) rmSync(dir, { recursive: true, force: true });
});

function row(id: string): { state: string; cells: string } {
  const m = new RegExp(`<tr data-location="${id}" data-state="([^"]*)">([\\s\\S]*?)</tr>`).exec(html);
  if (!m) throw new Error(`no row for ${id}`);
  return { state: m[1]!, cells: m[2]! };
}

describe('Areas status words', () => {
  it('calls a location without samples "no data", never a pass', () => {
    const r = row('bay-empty');
    expect(r.state).toBe('no data');
    expect(r.cells).toContain('○ no data');
    expect(r.cells).not.toContain('pass');
  });

  it('counts the states honestly in the lede instead of calling them all passing', () => {
    // 6 locations: bay-ok passes, bay-bad fails, bay-free has no target, and bay-empty, the area
    // and the site have no data of their own.
    expect(html).toContain(
      '1 of 6 locations passes its target class; 1 fails; 1 has data but no target class; 3 have no usable counter data of their own.',
    );
    expect(html).not.toMatch(/All \d+ classified locations pass/);
    expect(html).toContain('1 location that passes on the mean rose above its action level in the window');
  });

  it('rolls the area and the site up from the locations inside them, the worst state first', () => {
    for (const id of ['area', 'site']) {
      const r = row(id);
      expect(r.state).toBe('roll-up');
      expect(r.cells).toContain('✗ 1 location fails');
      expect(r.cells).toContain('rolls up 4 locations: 1 fail, 1 pass, 1 without target, 1 no data');
      expect(r.cells).toContain('▲ 1 above action in the window');
    }
  });

  it('flags a passing location whose samples rose above its action level, with when and the peak', () => {
    const r = row('bay-ok');
    expect(r.state).toBe('pass');
    expect(r.cells).toContain('✓ pass');
    expect(r.cells).toContain('▲ above action');
    // Peak 150 / 0.0283 m³ = 5300.4 per m³, shown whole; the action level as set (3000).
    expect(r.cells).toContain('peak 5300 per m³ ≥ 500 nm (action 3000) at 2025-06-02 08:12 UTC');
    expect(row('bay-bad').cells).toContain('✗ fail');
    expect(row('bay-bad').cells).not.toContain('▲');
  });
});
