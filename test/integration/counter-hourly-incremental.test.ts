/**
 * The counter import's two ways of keeping the hourly aggregates give the same table: the
 * incremental path (src/store/counter-hourly.ts HourlyAccumulator, each sample added as it is stored,
 * merged with what earlier imports stored, the hours of samples flagged back in time recomputed) and
 * its plain twin (refreshCounterHourly: the touched hours recomputed from the stored samples). Both
 * import the same seeded files — cumulative and differential, overlapping earlier imports' hours,
 * with zero runs, repeated rows, gaps, faults and time running backwards — into two databases.
 * Expected values: the plain path's table (itself checked against a recomputation from the raw
 * samples in store-counter-hourly.test.ts).
 */
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { BATCH_MODE, HOURLY_MODE } from '../../src/ingest/kinds/counter-samples.ts';
import { importFile } from '../../src/ingest/pipeline.ts';
import { type Db, migrate, openDatabase } from '../../src/store/db.ts';

const DEFAULT_BATCH_ROWS = BATCH_MODE.rows;
const GOOD = join(import.meta.dirname, '../fixtures/good');
const T0 = Date.parse('2026-03-02T08:00:00Z');
const dir = mkdtempSync(join(tmpdir(), 'voidcast-hourly-twin-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

/** Deterministic xorshift32 (Marsaglia 2003). */
function rng(seed: number) {
  let x = seed >>> 0 || 1;
  return () => {
    x ^= x << 13;
    x >>>= 0;
    x ^= x >>> 17;
    x ^= x << 5;
    x >>>= 0;
    return x / 4294967296;
  };
}

/** A seeded counter file: two counters at two locations, with the quality events the import flags. */
function file(seed: number, differential: boolean, offsetMin: number): string[] {
  const rand = rng(seed);
  const lines = [
    '# units: counts=raw',
    differential
      ? 'counter_id,location_id,start,duration_s,volume_L,d_0.3-0.5um,d_0.5-1um,ge_1um,status,room_state'
      : 'counter_id,location_id,start,duration_s,volume_L,ge_0.1um,ge_0.5um,ge_1um,status,room_state',
  ];
  const states = ['at-rest', 'operational', ''];
  for (let m = 0; m < 400; m++) {
    for (const [c, loc] of [
      [`PC-${seed}-1`, 'BAY-BOND'],
      [`PC-${seed}-2`, 'BND-1-EFEM'],
    ] as const) {
      // a gap after the warm-up, a stretch of zeros, a stretch of identical rows, one step back in time
      if (m >= 150 && m < 170) continue;
      const t = T0 + (offsetMin + (m === 300 ? 298 : m)) * 60_000 + (rand() < 0.5 ? 0 : 7_000);
      let a = Math.floor(50 + rand() * 500);
      let b = Math.floor(a * rand());
      let d = Math.floor(b * rand());
      if (m >= 200 && m < 260) [a, b, d] = [0, 0, 0];
      if (m >= 270 && m < 276) [a, b, d] = [400, 100, 30];
      const status = rand() < 0.02 ? 'flow' : rand() < 0.02 ? 'overload' : 'ok';
      const line = `${c},${loc},${new Date(t).toISOString()},60,28.3,${a},${b},${d},${status},${states[m % 3]}`;
      lines.push(line);
      // a row repeated within the file now and then (a duplicate: the first copy is kept)
      if (m % 97 === 5) lines.push(line);
    }
  }
  return lines;
}

function table(db: Db): Record<string, number | null>[] {
  return db
    .prepare('SELECT * FROM counter_hourly ORDER BY location, diameter_nm, room_state, hour_ms')
    .all() as Record<string, number | null>[];
}

function samples(db: Db): Record<string, unknown>[] {
  return db
    .prepare(
      'SELECT location, start_ms, counter, duration_ms, volume_m3, channel_set, hex(counts) AS counts, flags, room_state, line FROM counter_samples ORDER BY location, start_ms, counter, duration_ms',
    )
    .all() as Record<string, unknown>[];
}

interface Outcome {
  stored: number;
  duplicates: number;
  flags: unknown;
}

async function importAll(
  mode: 'incremental' | 'refresh',
  files: string[][],
  batchRows = DEFAULT_BATCH_ROWS,
): Promise<Db & { reports: Outcome[] }> {
  const db = openDatabase(':memory:');
  migrate(db);
  await importFile(db, { kind: 'locations', path: join(GOOD, 'locations-line.csv') });
  HOURLY_MODE.current = mode;
  BATCH_MODE.rows = batchRows;
  const reports: Outcome[] = [];
  try {
    for (const [i, lines] of files.entries()) {
      const path = join(dir, `${mode}-${i}.csv`);
      writeFileSync(path, `${lines.join('\n')}\n`);
      const r = await importFile(db, { kind: 'counter-samples', path });
      expect(r.status).toBe('imported');
      reports.push({ stored: r.rowsStored, duplicates: r.duplicates, flags: r.flags });
    }
  } finally {
    HOURLY_MODE.current = 'incremental';
    BATCH_MODE.rows = DEFAULT_BATCH_ROWS;
  }
  return Object.assign(db, { reports });
}

describe('counter_hourly: incremental path and plain twin', () => {
  it('give the same table after several overlapping imports of seeded files', async () => {
    // the fourth file repeats the first (plus one row): its rows are duplicates of stored ones
    const files = [file(1, false, 0), file(2, true, 90), file(3, false, 200), [...file(1, false, 0)]];
    files[3]!.push(`PC-9,BAY-BOND,${new Date(T0 - 3_600_000).toISOString()},60,28.3,5,4,3,ok,at-rest`);
    const inc = await importAll('incremental', files);
    const plain = await importAll('refresh', files, 1);
    // a batch width that leaves part batches of every size (written in falling powers of two)
    const odd = await importAll('incremental', files, 7);
    // the same samples stored, the same counts in the reports, whether rows are batched or not
    expect(samples(inc)).toEqual(samples(plain));
    expect(inc.reports).toEqual(plain.reports);
    expect(samples(odd)).toEqual(samples(plain));
    expect(odd.reports).toEqual(plain.reports);
    odd.close();
    expect(plain.reports[3]!.duplicates).toBe(plain.reports[0]!.stored + plain.reports[0]!.duplicates);
    expect(plain.reports[0]!.duplicates).toBeGreaterThan(0);
    const a = table(inc);
    const b = table(plain);
    expect(b.length).toBeGreaterThan(100);
    // the files do raise the flags that are set back in time (zero runs, sentinels, gaps)
    expect(b.some((r) => (r.flags! & 8) !== 0)).toBe(true);
    expect(b.some((r) => (r.flags! & 4) !== 0)).toBe(true);
    expect(b.some((r) => (r.flags! & 16) !== 0)).toBe(true);
    expect(a.length).toBe(b.length);
    // Sums in a different order may differ in the last bits: 1e-12 relative (doubles carry ~1e-16).
    a.forEach((r, i) => {
      const q = b[i]!;
      for (const key of Object.keys(q)) {
        const x = r[key];
        const y = q[key];
        if (x === null || y === null || x === undefined || y === undefined) expect(x).toBe(y);
        else expect(Math.abs(x - y)).toBeLessThanOrEqual(1e-12 * Math.max(1, Math.abs(y)));
      }
    });
    inc.close();
    plain.close();
  });
});
