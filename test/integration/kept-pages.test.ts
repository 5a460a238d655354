/**
 * Kept pages beyond the assessments (src/web/page-cache.ts): the Areas page and its trend, an area's
 * audit page and its table downloads, the line view and its table downloads, the what-if of every
 * waiting lot and its export, and the Imports page. Each is served again from the kept answer (a hit, the same bytes), equals the answer of a
 * plain twin — a second connection to the same database file with an app that keeps nothing
 * (keepPages false), so nothing of the first connection's kept results can answer it — and, after a
 * write that changes it (a counter import, a scan import, levels derived, an excursion
 * acknowledged, a parameter set adopted), is renewed: it
 * differs from the answer before and equals the plain twin's again.
 * Expected values: none stored; every answer is compared with the plain twin's on the same data
 * (the invented line of test/helpers/pages-data.ts).
 */
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { acknowledgeExcursion, deriveAndStoreLevels } from '../../src/engine/audit/index.ts';
import { keptStats } from '../../src/engine/cache.ts';
import { adoptParameterSetInDb, proposeParameterSet } from '../../src/engine/parameter-sets.ts';
import { whatIfWaiting } from '../../src/engine/tuning/index.ts';
import { importFile } from '../../src/ingest/pipeline.ts';
import { type Db, openDatabase, openDataDir } from '../../src/store/db.ts';
import { setSetting } from '../../src/store/settings.ts';
import { dataGeneration } from '../../src/store/writer.ts';
import { createApp } from '../../src/web/app.ts';
import { AS_OF_SETTING } from '../../src/web/routes/lots.tsx';
import { waitingWhatIf } from '../../src/web/routes/whatif-context.ts';
import {
  AS_OF_MS,
  importPageLine,
  type LineFiles,
  lineFiles,
  rescanCsv,
  T0_MS,
} from '../helpers/pages-data.ts';
import { fittedUnexplained } from '../helpers/parameter-values.ts';

let db: Db;
let files: LineFiles;
let app: ReturnType<typeof createApp>;
/** One browser: its CSRF cookie goes with every request, to both apps (the token is the same). */
let cookie: string;
let dataDir: string;

const HX = { 'hx-request': 'true' };
const PERIOD = 'from=2025-03-03T00:00Z&to=2025-03-04T00:00Z';
/** The routes newly kept, each with the headers a browser sends for it. */
const ROUTES: { path: string; headers?: Record<string, string> }[] = [
  { path: '/areas' },
  { path: '/areas/trend', headers: HX },
  { path: '/line' },
  { path: '/line/tables/pareto-wait-location?format=xls-csv' },
  { path: '/whatif/waiting' },
  { path: '/whatif/waiting', headers: HX },
  { path: '/whatif/waiting/export' },
  { path: '/imports' },
  { path: `/areas/fab-1/audit?${PERIOD}` },
  { path: `/areas/fab-1/audit/tables/levels?${PERIOD}&format=json` },
];
const label = (r: (typeof ROUTES)[number]) => `${r.path}${r.headers ? ' (htmx)' : ''}`;

beforeAll(async () => {
  // A database file (not :memory:), so that the plain twin can open a second connection to it.
  dataDir = mkdtempSync(join(tmpdir(), 'voidcast-kept-pages-'));
  db = openDataDir(dataDir);
  files = await importPageLine(db, lineFiles());
  setSetting(db, AS_OF_SETTING, new Date(AS_OF_MS).toISOString());
  app = createApp({ db, dataDir, version: 'test', log: () => {} });
  const first = await app.request('/imports');
  cookie = (first.headers.get('set-cookie') ?? '').split(';')[0]!;
  expect(cookie).toMatch(/=/);
});
afterAll(() => {
  files?.cleanup();
  db?.close();
  if (dataDir) rmSync(dataDir, { recursive: true, force: true });
});

/** The answer's bytes as UTF-8 text (a byte-order mark kept), with its content type and file name. */
async function answer(res: Response) {
  const bytes = Buffer.from(await res.arrayBuffer());
  return {
    status: res.status,
    type: res.headers.get('content-type'),
    disposition: res.headers.get('content-disposition'),
    body: bytes.toString('utf8'),
    bom: bytes[0] === 0xef && bytes[1] === 0xbb && bytes[2] === 0xbf,
  };
}

async function kept(r: (typeof ROUTES)[number]) {
  return answer(await app.request(r.path, { headers: { cookie, ...r.headers } }));
}

/** The plain twin: a new connection to the same file, an app that keeps nothing. */
async function plain(r: (typeof ROUTES)[number]) {
  const other = openDatabase(db.name);
  try {
    const twin = createApp({
      db: other,
      dataDir: files.dir,
      version: 'test',
      log: () => {},
      keepPages: false,
    });
    return await answer(await twin.request(r.path, { headers: { cookie, ...r.headers } }));
  } finally {
    other.close();
  }
}

/** Imports a file of the line's format through the real import (a write: a new data generation). */
async function importText(kind: 'counter-samples' | 'scans', name: string, text: string) {
  const path = join(files.dir, name);
  writeFileSync(path, text);
  const gen = dataGeneration(db);
  const r = await importFile(db, { kind, path });
  expect(r.status).toBe('imported');
  expect(dataGeneration(db)).not.toBe(gen);
}

const before = new Map<string, string>();

/** Each listed route (by its label): renewed after the write (differs from before), equal to the plain twin. */
async function expectRenewed(which: string[]) {
  for (const r of ROUTES.filter((x) => which.includes(label(x)))) {
    const now = await kept(r);
    expect(now.status, label(r)).toBe(200);
    expect(now.body, `${label(r)} renewed`).not.toBe(before.get(label(r)));
    expect(now, `${label(r)} equals the plain twin`).toEqual(await plain(r));
    before.set(label(r), now.body);
  }
}

describe('kept pages: Areas, line view, waiting what-if, Imports', () => {
  it('serves each from the kept answer (a hit, the same bytes), equal to the plain twin', async () => {
    for (const r of ROUTES) {
      const first = await kept(r);
      expect(first.status, label(r)).toBe(200);
      const stats = keptStats(db);
      const again = await kept(r);
      const after = keptStats(db);
      expect(after.hits, `${label(r)} is a hit`).toBe(stats.hits + 1);
      expect(after.misses, label(r)).toBe(stats.misses);
      expect(again, label(r)).toEqual(first);
      expect(first, `${label(r)} equals the plain twin`).toEqual(await plain(r));
      before.set(label(r), first.body);
    }
    // The downloads keep their file name; the spreadsheet CSV its byte-order mark.
    const csv = await kept(ROUTES[3]!);
    expect(csv.bom).toBe(true);
    expect(csv.disposition).toMatch(/^attachment; filename="line-pareto-wait-location-.*-spreadsheet\.csv"$/);
    expect((await kept(ROUTES[6]!)).disposition).toBe('attachment; filename="whatif-waiting.json"');
  });

  it('gives the waiting what-if from the kept lot contexts exactly as the engine gives it from the database', () => {
    const ctx = { db, dataDir: files.dir, version: 'test', log: () => {} };
    for (const scenario of [
      { levers: [] },
      { levers: [{ kind: 'air' as const, locationId: 'bay-3', scale: 3 }] },
      { levers: [{ kind: 'air' as const, locationId: 'no-such-place', scale: 3 }] },
    ]) {
      const fast = waitingWhatIf(ctx, scenario, AS_OF_MS);
      expect(fast).toEqual(whatIfWaiting(db, scenario, { asOfMs: AS_OF_MS }));
      expect(waitingWhatIf(ctx, scenario, AS_OF_MS)).toBe(fast); // kept for the page, swap and export
    }
  });

  it('keeps a swap apart from its page and from a history restore (the whole page)', async () => {
    const page = before.get('/whatif/waiting')!;
    const swap = before.get('/whatif/waiting (htmx)')!;
    expect(page.startsWith('<!doctype html>')).toBe(true);
    expect(swap.startsWith('<!doctype html>')).toBe(false);
    const restore = await kept({
      path: '/whatif/waiting',
      headers: { ...HX, 'hx-history-restore-request': 'true' },
    });
    expect(restore.body).toBe(page);
  });

  it('renews the Areas page, its trend and the Imports page after a counter import (a new excursion)', async () => {
    // Bay 3 the next morning: eight 15-min samples of 28.3 L × 15, the fourth far above the action
    // level of 13,000 per m³ at ≥ 0.5 µm (900 per 28.3 L ≈ 31,800 per m³).
    const rows = [
      '# units: counts=raw',
      'counter_id,location_id,start,duration_s,volume_L,status,ge_0.1um,ge_0.3um,ge_0.5um,ge_1um',
    ];
    for (let i = 0; i < 8; i++) {
      const t = new Date(T0_MS + 86_400_000 + i * 900_000).toISOString().replace('.000Z', 'Z');
      const c05 = i === 3 ? 900 : 300;
      rows.push(
        `CPC-bay-3,bay-3,${t},900,424.5,ok,${c05 * 8 * 15},${c05 * 2 * 15},${c05 * 15},${Math.floor(c05 / 4) * 15}`,
      );
    }
    await importText('counter-samples', 'counters-next-day.csv', `${rows.join('\n')}\n`);
    await expectRenewed(['/areas', '/areas/trend (htmx)', '/imports']);
  });

  it('renews an area’s audit page and its tables after levels are derived (no import)', async () => {
    const gen = dataGeneration(db);
    deriveAndStoreLevels(db, {
      locationId: 'bay-3',
      diameterM: 0.5e-6,
      method: 'class-fraction',
      window: null,
      name: 'kept-pages test levels',
      setBy: 'A. Auditor',
      nowMs: AS_OF_MS,
    });
    expect(dataGeneration(db)).not.toBe(gen);
    await expectRenewed([ROUTES.at(-2)!, ROUTES.at(-1)!].map(label));
  });

  it('renews an area’s audit page after an excursion is acknowledged (no import)', async () => {
    const html = before.get(label(ROUTES.at(-2)!))!;
    const id = /<select id="ack-id" name="excursion"><option value="([^"]+)"/.exec(html)?.[1];
    expect(id).toBeDefined();
    acknowledgeExcursion(db, id!.replaceAll('&amp;', '&'), 'Door left open; closed.', 'A. Auditor', AS_OF_MS);
    await expectRenewed([label(ROUTES.at(-2)!)]);
  });

  it('keeps an area’s audit report per real minute (it states when it was made), renewed after levels are derived', async () => {
    // Away from the end of a minute, so that the requests below fall in one minute.
    const intoMinute = Date.now() % 60_000;
    if (intoMinute > 50_000) await new Promise((r) => setTimeout(r, 60_000 - intoMinute + 100));
    const r = { path: `/areas/fab-1/audit/report?${PERIOD}` };
    const first = await kept(r);
    expect(first.status).toBe(200);
    const stats = keptStats(db);
    expect(await kept(r)).toEqual(first);
    expect(keptStats(db).hits).toBe(stats.hits + 1);
    expect(first).toEqual(await plain(r));
    deriveAndStoreLevels(db, {
      locationId: 'bay-3',
      diameterM: 0.5e-6,
      method: 'class-fraction',
      window: null,
      parameters: { alert: 0.4, action: 0.8 },
      name: 'kept-pages test levels, second version',
      setBy: 'A. Auditor',
      nowMs: AS_OF_MS,
    });
    const now = await kept(r);
    expect(now.body).not.toBe(first.body);
    expect(now).toEqual(await plain(r));
  }, 90_000);

  it('renews the line view, its tables, the waiting what-if and its export after a scan import', async () => {
    // A later scan of a wafer of the waiting lot L-01 (P-01), 40 particles of 900 nm, before the clock.
    const scan = rescanCsv();
    await importText('scans', 'rescan.csv', scan);
    await expectRenewed([
      '/line',
      '/line/tables/pareto-wait-location?format=xls-csv',
      '/whatif/waiting',
      '/whatif/waiting (htmx)',
      '/whatif/waiting/export',
      '/imports',
    ]);
  });

  it('renews the waiting what-if page after a parameter set is adopted (no import); every other answer stays its plain twin’s', async () => {
    const p = proposeParameterSet(
      db,
      { unexplainedVoids: { 'HB300-LOGIC': fittedUnexplained('HB300-LOGIC', { ratePerPair: 1.5 }) } },
      [],
      'kept-pages test set',
      'A. Fitter',
      AS_OF_MS,
    );
    if (!p.ok) throw new Error(p.message);
    adoptParameterSetInDb(db, p.set.id, 'B. Approver', AS_OF_MS);
    // The page offers the adopted set among its levers.
    await expectRenewed(['/whatif/waiting']);
    // The line view's Pareto sums the sources of voids by tool, wait location and clean, and the
    // swap and the export compare the scenario with the as-is: the unexplained rate of the set is
    // in none of them. Kept or not, each answer is the plain twin's.
    for (const r of ROUTES.filter((x) => label(x) !== '/whatif/waiting'))
      expect(await kept(r), label(r)).toEqual(await plain(r));
  });
});
