/**
 * The hourly counter aggregates (migration 0023, src/store/counter-hourly.ts) equal a recomputation
 * from the raw samples — read back through the store's row-by-row reader and summed here, an
 * independent path — after several imports, including a rejected file (which adds nothing), and the
 * migration's own SQL back-fill gives the same table as the import's refresh.
 */
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { importFile } from '../../src/ingest/pipeline.ts';
import { readCounterSamplesByRows } from '../../src/store/counters.ts';
import { type Db, migrate, openDatabase } from '../../src/store/db.ts';

const GOOD = join(import.meta.dirname, '../fixtures/good');
const T0 = Date.parse('2026-03-02T08:00:00Z');
const MIGRATION = readFileSync(
  join(import.meta.dirname, '../../src/store/migrations/0023_counter_hourly.sql'),
  'utf8',
);
let dir: string;
let db: Db;

type Row = Record<string, number | null>;

/** The aggregates recomputed from the raw samples of the given locations. */
function recompute(locations: string[]): Row[] {
  const out = new Map<string, Row>();
  for (const loc of locations) {
    const locRow = (db.prepare('SELECT id FROM locations WHERE location_id = ?').get(loc) as { id: number })
      .id;
    const s = readCounterSamplesByRows(db, loc, -1e15, 1e15);
    for (let i = 0; i < s.n; i++) {
      const set = s.channelSets[s.channelSet[i]!]!;
      const k = set.lowerM.length;
      const raw = Array.from(s.counts.subarray(i * s.width, i * s.width + k));
      const ge = set.mode === 'cumulative' ? raw : raw.map((_, j) => raw.slice(j).reduce((a, b) => a + b, 0));
      const flags = s.flags[i]!;
      const usable = (flags & 5) === 0;
      const hour = Math.floor(s.startMs[i]! / 3_600_000) * 3_600_000;
      const vol = s.volumeM3[i]!;
      const dur = s.endMs[i]! - s.startMs[i]!;
      set.lowerM.forEach((d, j) => {
        const nm = Math.round(d * 1e9);
        const key = `${locRow}|${nm}|${s.roomState[i]}|${hour}`;
        const a = out.get(key) ?? {
          location: locRow,
          diameter_nm: nm,
          room_state: s.roomState[i]!,
          hour_ms: hour,
          n: 0,
          n_usable: 0,
          count_sum: 0,
          volume_m3: 0,
          conc_sum: 0,
          max_per_m3: null,
          min_volume_m3: null,
          min_duration_ms: null,
          flags: 0,
          n_fault: 0,
          n_lower_bound: 0,
          n_sentinel: 0,
          n_zero_run: 0,
          n_gap: 0,
        };
        a.n! += 1;
        a.flags = a.flags! | flags;
        a.n_fault! += flags & 1 ? 1 : 0;
        a.n_lower_bound! += flags & 2 ? 1 : 0;
        a.n_sentinel! += flags & 4 ? 1 : 0;
        a.n_zero_run! += flags & 8 ? 1 : 0;
        a.n_gap! += flags & 16 ? 1 : 0;
        if (usable) {
          a.n_usable! += 1;
          a.count_sum! += ge[j]!;
          a.volume_m3! += vol;
          a.conc_sum! += ge[j]! / vol;
          a.max_per_m3 = Math.max(a.max_per_m3 ?? -1, ge[j]! / vol);
          a.min_volume_m3 = Math.min(a.min_volume_m3 ?? Number.POSITIVE_INFINITY, vol);
          a.min_duration_ms = Math.min(a.min_duration_ms ?? Number.POSITIVE_INFINITY, dur);
        }
        out.set(key, a);
      });
    }
  }
  return [...out.values()].sort(order);
}

function order(a: Row, b: Row): number {
  return (
    a.location! - b.location! ||
    a.diameter_nm! - b.diameter_nm! ||
    a.room_state! - b.room_state! ||
    a.hour_ms! - b.hour_ms!
  );
}

function stored(): Row[] {
  return (db.prepare('SELECT * FROM counter_hourly').all() as Row[]).sort(order);
}

/** Sums in a different order may differ in the last bits: compare numbers to 1e-12 relative. */
function expectSame(a: Row[], b: Row[]) {
  expect(a.length).toBe(b.length);
  a.forEach((r, i) => {
    const q = b[i]!;
    expect(Object.keys(r).sort()).toEqual(Object.keys(q).sort());
    for (const key of Object.keys(r)) {
      const x = r[key];
      const y = q[key];
      if (x === null || y === null) expect(x).toBe(y);
      else expect(Math.abs(x! - y!)).toBeLessThanOrEqual(1e-12 * Math.max(1, Math.abs(y!)));
    }
  });
}

async function importLines(name: string, lines: string[]) {
  const path = join(dir, name);
  writeFileSync(path, `${lines.join('\n')}\n`);
  return importFile(db, { kind: 'counter-samples', path });
}

beforeAll(async () => {
  dir = mkdtempSync(join(tmpdir(), 'voidcast-hourly-'));
  db = openDatabase(':memory:');
  migrate(db);
  expect((await importFile(db, { kind: 'locations', path: join(GOOD, 'locations-line.csv') })).status).toBe(
    'imported',
  );
});
afterAll(() => {
  db.close();
  rmSync(dir, { recursive: true, force: true });
});

describe('counter_hourly', () => {
  it('equals a recomputation from the raw samples after each of several imports; a rejected file adds nothing', async () => {
    // 1. Cumulative, 2 h of one-minute samples, with a flow fault and a laser fault, at-rest then operational.
    const a = [
      '# units: counts=raw',
      'counter_id,location_id,start,duration_s,volume_L,ge_0.1um,ge_0.5um,status,room_state',
    ];
    for (let m = 0; m < 120; m++)
      a.push(
        `PC-A,BAY-BOND,${new Date(T0 + m * 60_000).toISOString()},60,28.3,${500 + m},${20 + (m % 7)},${m === 10 ? 'flow' : m === 70 ? 'laser' : 'ok'},${m < 50 ? 'at-rest' : 'operational'}`,
      );
    expect((await importLines('a.csv', a)).status).toBe('imported');
    expectSame(stored(), recompute(['BAY-BOND']));

    // 2. Differential, another counter in the same hours (2-minute samples) and into a third hour.
    const b = [
      '# units: counts=raw',
      'counter_id,location_id,start,duration_s,volume_L,d_0.3-0.5um,d_0.5-1um,ge_1um',
    ];
    for (let m = 30; m < 200; m += 2)
      b.push(
        `PC-B,BAY-BOND,${new Date(T0 + m * 60_000).toISOString()},120,56.6,${40 + m},${10 + (m % 4)},${m % 2}`,
      );
    expect((await importLines('b.csv', b)).status).toBe('imported');
    const afterB = stored();
    expectSame(afterB, recompute(['BAY-BOND']));

    // 3. A rejected file (a cumulative row rising with size): nothing added, the table unchanged.
    const bad = ['# units: counts=raw', 'counter_id,location_id,start,duration_s,volume_L,ge_0.1um,ge_0.5um'];
    bad.push(`PC-C,BAY-BOND,${new Date(T0 + 5 * 60_000).toISOString()},60,28.3,10,5`);
    bad.push(`PC-C,BAY-BOND,${new Date(T0 + 6 * 60_000).toISOString()},60,28.3,5,10`);
    const r = await importLines('bad.csv', bad);
    expect(r.status).toBe('rejected');
    expectSame(stored(), afterB);

    // 4. More samples into hours that already hold some (a third counter), and a repeated file (unchanged).
    const c = ['# units: counts=raw', 'counter_id,location_id,start,duration_s,volume_L,ge_0.1um,ge_0.5um'];
    for (let m = 0; m < 90; m += 3)
      c.push(
        `PC-C,BAY-BOND,${new Date(T0 + m * 60_000 + 15_000).toISOString()},30,14.15,${300 + m},${m % 9}`,
      );
    expect((await importLines('c.csv', c)).status).toBe('imported');
    expect((await importLines('c.csv', c)).status).toBe('unchanged');
    expectSame(stored(), recompute(['BAY-BOND']));
    expect(stored().length).toBeGreaterThan(0);
  });

  it('the migration’s back-fill SQL gives the same table as the import’s refresh', () => {
    const before = stored();
    db.exec('DELETE FROM counter_hourly');
    // The INSERT … SELECT of migration 0023, run again on the samples now stored.
    db.exec(MIGRATION.slice(MIGRATION.indexOf('INSERT INTO counter_hourly')));
    expectSame(stored(), before);
  });
});
