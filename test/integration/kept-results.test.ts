/**
 * Kept results (src/engine/cache.ts) and kept pages (src/web/page-cache.ts): a repeated request is
 * served from the kept answer (the same bytes, no second assessment), an import and a parameter-set
 * adoption start a new data generation and the next answer is computed afresh from the new inputs,
 * and a kept page never carries another browser's CSRF token.
 * Expected values: the invented line of test/helpers/pages-data.ts and the set made below; no
 * figure is stored — each "after" answer is compared with the engine's fresh answer on the same data.
 */
import { writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { gunzipSync } from 'node:zlib';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { keptStats } from '../../src/engine/cache.ts';
import { assessPairFromDb } from '../../src/engine/loader.ts';
import { adoptParameterSetInDb, proposeParameterSet } from '../../src/engine/parameter-sets.ts';
import { importFile } from '../../src/ingest/pipeline.ts';
import { touchApiToken } from '../../src/store/accounts.ts';
import { type Db, migrate, openDatabase } from '../../src/store/db.ts';
import { setSetting } from '../../src/store/settings.ts';
import { dataGeneration } from '../../src/store/writer.ts';
import { createApp } from '../../src/web/app.ts';
import { csrfSecret, tokenFor } from '../../src/web/csrf.ts';
import { AS_OF_SETTING } from '../../src/web/routes/lots.tsx';
import { AS_OF_MS, importPageLine, type LineFiles, lineFiles, rescanCsv } from '../helpers/pages-data.ts';
import { fittedUnexplained } from '../helpers/parameter-values.ts';

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

type PairJson = { inputsHash: string; expectedVoids?: number; parameters: { id: number | null } };
const pairJson = async () => (await (await app.request('/api/pairs/P-01/assessment')).json()) as PairJson;
const fresh = () => assessPairFromDb(db, 'P-01', { asOfMs: AS_OF_MS, detail: 'full' })!;

describe('kept answers', () => {
  it('serves a repeated request from the kept answer: same bytes, a hit, no new assessment', async () => {
    const first = await (await app.request('/api/pairs/P-01/assessment')).text();
    const before = keptStats(db);
    const second = await (await app.request('/api/pairs/P-01/assessment')).text();
    const after = keptStats(db);
    expect(second).toBe(first);
    expect(after.hits).toBe(before.hits + 1);
    expect(after.misses).toBe(before.misses);
  });

  it('keeps nothing for a route that is not kept (a page of another kind takes no room in the store)', async () => {
    const before = keptStats(db);
    for (const q of ['a', 'b', 'c']) expect((await app.request(`/calculators?x=${q}`)).status).toBe(200);
    expect((await app.request('/healthz')).status).toBe(200);
    const after = keptStats(db);
    // /calculators is kept, /healthz is not: three entries for the three URLs and none for /healthz
    expect(after.entries - before.entries).toBe(3);
    expect(after.misses - before.misses).toBe(3);
  });

  it('computes afresh after an import changes the inputs (a later scan of a wafer of P-01)', async () => {
    const old = await pairJson();
    const gen = dataGeneration(db);
    const scan = rescanCsv();
    const path = join(files.dir, 'rescan.csv');
    writeFileSync(path, scan);
    const r = await importFile(db, { kind: 'scans', path });
    expect(r.status).toBe('imported');
    expect(dataGeneration(db)).not.toBe(gen);
    const now = await pairJson();
    expect(now.inputsHash).not.toBe(old.inputsHash);
    expect(now.inputsHash).toBe(fresh().inputsHash);
  });

  it('computes afresh after a parameter set is adopted, and names the set', async () => {
    const old = await pairJson();
    expect(old.parameters.id).toBeNull();
    const p = proposeParameterSet(
      db,
      { unexplainedVoids: { 'HB300-LOGIC': fittedUnexplained('HB300-LOGIC', { ratePerPair: 1.5 }) } },
      [],
      'kept-results test set',
      'A. Fitter',
      AS_OF_MS,
    );
    if (!p.ok) throw new Error(p.message);
    const before = keptStats(db).invalidations;
    adoptParameterSetInDb(db, p.set.id, 'B. Approver', AS_OF_MS);
    const now = await pairJson();
    expect(keptStats(db).invalidations).toBeGreaterThan(before);
    expect(now.parameters.id).toBe(p.set.id);
    expect(now.inputsHash).toBe(fresh().inputsHash);
  });

  it('gives each browser its own CSRF token on a kept page', async () => {
    const a = await app.request('/pairs/P-01');
    const b = await app.request('/pairs/P-01');
    const cookieA = (a.headers.get('set-cookie') ?? '').split(';')[0]!;
    const cookieB = (b.headers.get('set-cookie') ?? '').split(';')[0]!;
    expect(cookieA).not.toBe(cookieB);
    const tokenOf = async (cookie: string) => {
      const html = await (await app.request('/pairs/P-01', { headers: { cookie } })).text();
      return [...html.matchAll(/name="_csrf" value="([^"]+)"/g)].map((m) => m[1]);
    };
    const hits = keptStats(db).hits;
    const ta = await tokenOf(cookieA);
    const tb = await tokenOf(cookieB);
    expect(keptStats(db).hits).toBeGreaterThanOrEqual(hits + 1);
    expect(ta.length).toBeGreaterThan(0);
    expect(new Set(ta).size).toBe(1);
    expect(new Set(tb).size).toBe(1);
    expect(ta[0]).not.toBe(tb[0]);
    // Each token is the one that goes with that browser's cookie (HMAC of its id, src/web/csrf.ts).
    const idOf = (cookie: string) => decodeURIComponent(cookie.slice(cookie.indexOf('=') + 1));
    expect(ta[0]).toBe(tokenFor(csrfSecret(db), idOf(cookieA)));
    expect(tb[0]).toBe(tokenFor(csrfSecret(db), idOf(cookieB)));
  });

  it('sends a kept page gzipped to a client that accepts it: the same text, with the asker’s own token', async () => {
    const first = await app.request('/pairs/P-01');
    const cookie = (first.headers.get('set-cookie') ?? '').split(';')[0]!;
    const plain = await (await app.request('/pairs/P-01', { headers: { cookie } })).text();
    const res = await app.request('/pairs/P-01', {
      headers: { cookie, 'accept-encoding': 'gzip, deflate, br' },
    });
    expect(res.headers.get('content-encoding')).toBe('gzip');
    // gunzip checks the stream, its CRC-32 and its length (RFC 1952)
    const text = gunzipSync(Buffer.from(await res.arrayBuffer())).toString('utf8');
    expect(text).toBe(plain);
    expect(text).toContain(
      `value="${tokenFor(csrfSecret(db), decodeURIComponent(cookie.slice(cookie.indexOf('=') + 1)))}"`,
    );
    const json = await app.request('/api/pairs/P-01/assessment', { headers: { 'accept-encoding': 'gzip' } });
    expect(JSON.parse(gunzipSync(Buffer.from(await json.arrayBuffer())).toString('utf8')).pairId).toBe(
      'P-01',
    );
  });

  it('keeps answers across bookkeeping (an API token’s last-used time) but not across a setting', () => {
    const gen = dataGeneration(db);
    touchApiToken(db, 1, AS_OF_MS); // no such token: the UPDATE changes nothing, the write commits
    expect(dataGeneration(db)).toBe(gen);
    setSetting(db, 'bench.note', 'x');
    expect(dataGeneration(db)).not.toBe(gen);
  });
});
