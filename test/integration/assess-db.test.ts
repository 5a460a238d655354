/**
 * The engine end to end from the database: inputs written into the real tables, read back by the
 * loader, assessed, served by the JSON API and printed by the CLI; sign-off stored and refused
 * when the inputs changed since the assessment.
 */
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import { main } from '../../src/cli/main.ts';
import { assessPairFromDb, loadPair } from '../../src/engine/loader.ts';
import { assessPair } from '../../src/engine/pair.ts';
import type { LotAssessment, PairAssessment } from '../../src/engine/types.ts';
import { DATABASE_FILE_NAME, type Db, openDataDir } from '../../src/store/db.ts';
import { readDispositions } from '../../src/store/dispositions.ts';
import { createApp } from '../../src/web/app.ts';
import { CSRF_COOKIE, csrfSecret, tokenFor } from '../../src/web/csrf.ts';
import { seedLine, seedPairs } from '../helpers/engine-db.ts';
import {
  counterSeries,
  H,
  line,
  location,
  pair,
  someParticles,
  standardWafer,
  T0,
} from '../helpers/engine-inputs.ts';

const CH = [0.1e-6, 0.2e-6, 0.3e-6, 0.5e-6, 1e-6, 5e-6];
const ISO5 = [100000, 23700, 10200, 3520, 832, 29];
const AS_OF = T0 + 7 * H;

let dir: string;
let db: Db;

function seed() {
  const data = line({
    locations: {
      BAY: location('BAY', { levels: { atDiameterM: 0.5e-6, alertPerM3: 1000, actionPerM3: 5000 } }),
    },
    counters: { BAY: counterSeries('BAY', T0, T0 + 8 * H, CH, () => ISO5.map((v) => v * 0.01)) },
  });
  const pairs = [0, 1, 2].map((i) =>
    pair(
      `P${i}`,
      standardWafer(`W${i}-T`, someParticles(100 + 50 * i, i)),
      standardWafer(`W${i}-B`, someParticles(120, i + 10)),
      { bondTimeMs: T0 + 6 * H },
    ),
  );
  seedLine(db, data);
  seedPairs(db, pairs);
  return { data, pairs };
}

beforeEach(() => {
  dir = mkdtempSync(join(tmpdir(), 'voidcast-assess-'));
  db = openDataDir(dir);
});
afterEach(() => {
  db.close();
  rmSync(dir, { recursive: true, force: true });
});

describe('loader + engine from the database', () => {
  it('loads what was stored and assesses it exactly as the same inputs built in memory', () => {
    const { data, pairs } = seed();
    const loaded = loadPair(db, 'P1', AS_OF)!;
    expect(loaded.pair.top.latestScan!.particles.count).toBe(150);
    expect(loaded.pair.top.ledger.map((s) => s.kind)).toEqual(['clean', 'activation', 'wait']);
    expect(loaded.line.counters.BAY!.startMs.length).toBe(180); // the wait's 3 h of one-minute samples
    const fromDb = assessPairFromDb(db, 'P1', { asOfMs: AS_OF })!;
    const inMemory = assessPair(pairs[1]!, data, { asOfMs: AS_OF });
    // tolerance: concentrations pass through counts = C·V and back C = counts/V (a rounding each way)
    expect(fromDb.figures.voids.value).toBeCloseTo(inMemory.figures.voids.value, 9);
    expect(fromDb.figures.dieKillsNB!.value).toBeCloseTo(inMemory.figures.dieKillsNB!.value, 9);
    expect(fromDb.call).toBe(inMemory.call);
  });
});

describe('JSON API', () => {
  function app() {
    return createApp({ db, dataDir: dir, version: 'test', log: () => {} });
  }

  it('lists lots and serves lot and pair assessments as JSON', async () => {
    seed();
    const a = app();
    const lots = await (await a.request('/api/lots')).json();
    expect(lots).toEqual({ lots: [{ lotId: 'LOT-1', productId: 'HB-1', waferCount: 6, pairCount: 3 }] });
    const lot = await a.request(`/api/lots/LOT-1/assessment?asOf=${AS_OF}`);
    expect(lot.status).toBe(200);
    const lj = (await lot.json()) as LotAssessment;
    expect(lj.pairs).toHaveLength(3);
    expect(lj.pairs[0]!.voidMap).toBeNull(); // summary detail in the lot
    expect(['bond', 're-clean', 'hold']).toContain(lj.call);
    const p = await a.request(`/api/pairs/P0/assessment?asOf=${new Date(AS_OF).toISOString()}`);
    const pj = (await p.json()) as PairAssessment;
    expect(pj.pairId).toBe('P0');
    expect(pj.voidMap!.dieGrid!.dies.length).toBeGreaterThan(500);
    expect(pj.spectrum!.edgesM).toHaveLength(49);
    expect(pj.inputsHash).toMatch(/^[0-9a-f]{64}$/);
  });

  it('answers unknown ids with 404 JSON and a bad asOf with 400', async () => {
    seed();
    const a = app();
    const r = await a.request('/api/pairs/NOPE/assessment');
    expect(r.status).toBe(404);
    expect(await r.json()).toEqual({ error: 'not found', detail: 'There is no pair "NOPE".' });
    expect((await a.request('/api/lots/LOT-1/assessment?asOf=2030-01-01T00:00:00')).status).toBe(400);
  });

  it('stores a sign-off, and refuses one whose inputs changed since the assessment (409)', async () => {
    seed();
    const a = app();
    const first = await a.request('/api/lots');
    const cookie = (first.headers.get('set-cookie') ?? '').split(';')[0]!;
    const token = tokenFor(csrfSecret(db), cookie.slice(CSRF_COOKIE.length + 1));
    const assessed = (await (
      await a.request(`/api/pairs/P2/assessment?asOf=${AS_OF}`)
    ).json()) as PairAssessment & { assessmentRef: string };
    const post = (body: unknown) =>
      a.request('/api/pairs/P2/signoff', {
        method: 'POST',
        headers: {
          'content-type': 'application/json',
          cookie,
          'X-CSRF-Token': token,
          origin: 'http://localhost',
        },
        body: JSON.stringify(body),
      });
    // The assessment time is the server's (issue 14): a client's own time, without the reference the
    // GET returned, is refused and stores nothing.
    const ownTime = await post({ inputsHash: assessed.inputsHash, asOfMs: 1e300, signedBy: 'A. Engineer' });
    expect(ownTime.status).toBe(400);
    expect(readDispositions(db, 'pair', 'P2')).toHaveLength(0);
    const ok = await post({
      inputsHash: assessed.inputsHash,
      assessmentRef: assessed.assessmentRef,
      signedBy: 'A. Engineer',
    });
    expect(ok.status).toBe(201);
    const rec = readDispositions(db, 'pair', 'P2');
    expect(rec).toHaveLength(1);
    expect(rec[0]!.inputsHash).toBe(assessed.inputsHash);
    expect(rec[0]!.call).toBe(assessed.call);
    expect(rec[0]!.modelVersion).toBe(assessed.modelVersion);
    expect(rec[0]!.specVersion).toBe('spec-1');
    // A different call without a comment is refused; with one it is kept with both calls.
    const other = assessed.call === 'hold' ? 'bond' : 'hold';
    expect(
      (
        await post({
          inputsHash: assessed.inputsHash,
          assessmentRef: assessed.assessmentRef,
          signedBy: 'B',
          call: other,
        })
      ).status,
    ).toBe(400);
    expect(
      (
        await post({
          inputsHash: assessed.inputsHash,
          assessmentRef: assessed.assessmentRef,
          signedBy: 'B',
          call: other,
          comment: 'line decision',
        })
      ).status,
    ).toBe(201);
    // New data arrive (a particle of the top wafer's scan moves): the old hash no longer matches.
    const row = db.prepare("SELECT x_m FROM scans WHERE scan_key = 'S-W2-T'").get() as { x_m: Buffer };
    const x = Buffer.from(row.x_m);
    x.writeDoubleLE(x.readDoubleLE(0) + 1e-4, 0);
    db.prepare("UPDATE scans SET x_m = ? WHERE scan_key = 'S-W2-T'").run(x);
    const refused = await post({
      inputsHash: assessed.inputsHash,
      assessmentRef: assessed.assessmentRef,
      signedBy: 'A. Engineer',
    });
    expect(refused.status).toBe(409);
    const body = (await refused.json()) as { error: string; currentHash: string };
    expect(body.error).toBe('inputs changed');
    expect(body.currentHash).not.toBe(assessed.inputsHash);
    expect(readDispositions(db, 'pair', 'P2')).toHaveLength(2);
  });
});

describe('voidcast assess / signoff', () => {
  function io() {
    const out: string[] = [];
    const err: string[] = [];
    return {
      io: {
        out: (t: string) => out.push(t),
        err: (t: string) => err.push(t),
        isTty: false,
        env: {},
        cwd: dir,
      },
      out,
      err,
    };
  }

  it('prints a readable lot table and a pair report, and JSON with --json', async () => {
    seed();
    const a = io();
    expect(await main(['assess', '--lot', 'LOT-1', '--as-of', String(AS_OF), '--data', dir], a.io)).toBe(0);
    const text = a.out.join('');
    expect(text).toMatch(/^Lot LOT-1 \(product HB-1\)/);
    expect(text).toMatch(/pair\s+call\s+voids/);
    expect(text).toMatch(/^P0\s+(bond|re-clean|hold)/m);
    const b = io();
    expect(await main(['assess', '--pair', 'P1', '--as-of', String(AS_OF), '--data', dir], b.io)).toBe(0);
    const t2 = b.out.join('');
    expect(t2).toMatch(/CALL: (BOND|RE-CLEAN|HOLD)/);
    expect(t2).toMatch(/Pareto by clean \(residual\)/);
    expect(t2).toMatch(/400 Monte Carlo draws/);
    // Counts (voids, killed dies) have whole-number intervals.
    expect(t2).toMatch(/reportable voids \(95 %\)\s+\S+ \[\d+–\d+\]/);
    expect(t2).toMatch(/die kills NB \(95 %\)\s+\S+ \[\d+–\d+\]/);
    expect(text).toMatch(/^P0\s+\S+\s+\S+ \[\d+–\d+\]/m);
    const c = io();
    expect(
      await main(['assess', '--pair', 'P1', '--json', '--as-of', String(AS_OF), '--data', dir], c.io),
    ).toBe(0);
    const j = JSON.parse(c.out.join('')) as PairAssessment;
    expect(j.pairId).toBe('P1');
    expect(j.inputsHash).toBe(assessPairFromDb(db, 'P1', { asOfMs: AS_OF })!.inputsHash);
  });

  it('signs off from the command line and refuses a stale hash with exit code 3', async () => {
    seed();
    const h = assessPairFromDb(db, 'P0', { asOfMs: AS_OF })!.inputsHash;
    const a = io();
    expect(
      await main(
        [
          'signoff',
          '--pair',
          'P0',
          '--hash',
          h,
          '--as-of',
          String(AS_OF),
          '--by',
          'C. Approver',
          '--data',
          dir,
        ],
        a.io,
      ),
    ).toBe(0);
    expect(a.out.join('')).toMatch(/^signed: pair P0 /);
    const b = io();
    expect(
      await main(
        [
          'signoff',
          '--pair',
          'P0',
          '--hash',
          'f'.repeat(64),
          '--as-of',
          String(AS_OF),
          '--by',
          'C',
          '--data',
          dir,
        ],
        b.io,
      ),
    ).toBe(3);
    expect(b.err.join('')).toMatch(
      /refused: The inputs' hash given is not that of the assessment of the current data as of /,
    );
  });

  it('reports a missing database, an unknown lot and a bad option', async () => {
    const empty = mkdtempSync(join(tmpdir(), 'voidcast-none-'));
    const a = io();
    expect(await main(['assess', '--lot', 'X', '--data', empty], a.io)).toBe(4);
    expect(a.err.join('')).toContain(DATABASE_FILE_NAME);
    rmSync(empty, { recursive: true, force: true });
    seed();
    const b = io();
    expect(await main(['assess', '--lot', 'NOPE', '--data', dir], b.io)).toBe(4);
    const c = io();
    expect(await main(['assess', '--data', dir], c.io)).toBe(2);
    expect(c.err.join('')).toMatch(/exactly one of --lot or --pair/);
  });
});
