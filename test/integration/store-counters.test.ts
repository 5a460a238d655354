/** The engine's counter read: the chunked packed path equals the row-by-row path; mixed channel sets. */
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { importFile } from '../../src/ingest/pipeline.ts';
import {
  COUNTER_READ,
  readCounterSamples,
  readCounterSamplesByRows,
  toCumulativeSeries,
} from '../../src/store/counters.ts';
import { type Db, migrate, openDatabase } from '../../src/store/db.ts';

const GOOD = join(import.meta.dirname, '../fixtures/good');
const T0 = Date.parse('2026-03-02T08:00:00Z');
let dir: string;
let db: Db;

beforeAll(async () => {
  dir = mkdtempSync(join(tmpdir(), 'voidcast-read-'));
  db = openDatabase(':memory:');
  migrate(db);
  expect((await importFile(db, { kind: 'locations', path: join(GOOD, 'locations-line.csv') })).status).toBe(
    'imported',
  );
  // Two counters at one location with different channel sets: cumulative 0.1/0.3/0.5/1 µm every minute,
  // differential 0.3–0.5/0.5–1/≥1 µm every 2 minutes (overlapping the first), and a 5-minute sample.
  const a = [
    '# units: counts=raw',
    'counter_id,location_id,start,duration_s,volume_L,ge_0.1um,ge_0.3um,ge_0.5um,ge_1um',
  ];
  const b = [
    '# units: counts=raw',
    'counter_id,location_id,start,duration_s,volume_L,d_0.3-0.5um,d_0.5-1um,ge_1um',
  ];
  for (let m = 0; m < 60; m++)
    a.push(
      `PC-A,BND-1,${new Date(T0 + m * 60_000).toISOString()},60,28.3,${500 + m},${100 + m},${20 + (m % 5)},${m % 3}`,
    );
  for (let m = 0; m < 60; m += 2)
    b.push(
      `PC-B,BND-1,${new Date(T0 + m * 60_000).toISOString()},120,56.6,${40 + m},${10 + (m % 4)},${m % 2}`,
    );
  b.push(`PC-B,BND-1,${new Date(T0 + 30 * 60_000).toISOString()},300,141.5,1,1,1`);
  for (const [name, lines] of [
    ['a.csv', a],
    ['b.csv', b],
  ] as const) {
    const path = join(dir, name);
    writeFileSync(path, `${lines.join('\n')}\n`);
    const r = await importFile(db, { kind: 'counter-samples', path });
    expect(r.issues).toEqual([]);
  }
});
afterAll(() => {
  db.close();
  rmSync(dir, { recursive: true, force: true });
});

describe('readCounterSamples', () => {
  it('the streamed read equals the row-by-row read, for whole and partial ranges', () => {
    for (const [from, to] of [
      [0, 1e15],
      [T0 + 31 * 60_000, T0 + 33 * 60_000],
      [T0 + 59.5 * 60_000, T0 + 3_600_000],
      [T0 + 3_600_000, T0 + 7_200_000],
    ] as const) {
      const streamed = readCounterSamples(db, 'BND-1', from, to);
      const rows = readCounterSamplesByRows(db, 'BND-1', from, to);
      expect(streamed).toEqual(rows);
    }
    expect(readCounterSamples(db, 'BND-1', 0, 1e15).n).toBe(91);
  });

  it('reads the same in chunks of any size, a chunk’s last start shared by the next samples included', () => {
    // Counters A and B both start a sample at every even minute (and the 5-minute sample at minute
    // 30 shares its start too), so small chunks end inside a run of samples with one start.
    const kept = COUNTER_READ.chunkRows;
    try {
      for (const size of [1, 2, 3, 7, 64]) {
        COUNTER_READ.chunkRows = size;
        for (const [from, to] of [
          [0, 1e15],
          [T0 + 31 * 60_000, T0 + 33 * 60_000],
          [T0 + 10 * 60_000, T0 + 50 * 60_000],
        ] as const)
          expect(readCounterSamples(db, 'BND-1', from, to)).toEqual(
            readCounterSamplesByRows(db, 'BND-1', from, to),
          );
      }
      COUNTER_READ.chunkRows = 1;
      expect(readCounterSamples(db, 'BND-1', 0, 1e15).n).toBe(91);
    } finally {
      COUNTER_READ.chunkRows = kept;
    }
  });

  it('includes a sample that started before the range and reaches into it', () => {
    const s = readCounterSamples(db, 'BND-1', T0 + 31 * 60_000, T0 + 32 * 60_000);
    // PC-A 08:31; PC-B 08:30–08:32 (2 min) and 08:30–08:35 (5 min).
    expect(Array.from(s.startMs).map((t) => (t - T0) / 60_000)).toEqual([30, 30, 31]);
    expect(s.counterIds).toEqual(['PC-B', 'PC-A']);
    expect(Array.from(s.endMs).map((t) => (t - T0) / 60_000)).toEqual([32, 35, 31 + 1]);
  });

  it('cumulative series on the sizes every set shares (0.3, 0.5, 1 µm), differential sets summed from the top', () => {
    const s = readCounterSamples(db, 'BND-1', T0, T0 + 60_000);
    const c = toCumulativeSeries(s);
    expect(Array.from(c.channelSizesM)).toEqual([3e-7, 5e-7, 1e-6]);
    // Row 0 is PC-A (cumulative 500, 100, 20, 0 in 28.3 L); row 1 is PC-B (differential 40, 10, 0 in 56.6 L).
    const order = Array.from(s.counter).map((i) => s.counterIds[i]);
    const a = order.indexOf('PC-A');
    const b = order.indexOf('PC-B');
    // Volumes are 28.3 L / 1000 in floating point (0.028300000000000002 m³): compare to 1e-9 relative.
    expect(Array.from(c.cumulativePerM3.subarray(a * 3, a * 3 + 3))).toEqual(
      [100 / 0.0283, 20 / 0.0283, 0].map((x) => expect.closeTo(x, 6)),
    );
    expect(Array.from(c.cumulativePerM3.subarray(b * 3, b * 3 + 3)).map((x) => x * 0.0566)).toEqual(
      [50, 10, 0].map((x) => expect.closeTo(x, 9)),
    );
  });

  it('an unknown location reads as empty', () => {
    expect(readCounterSamples(db, 'NOWHERE', 0, 1e15).n).toBe(0);
    expect(toCumulativeSeries(readCounterSamples(db, 'NOWHERE', 0, 1e15)).channelSizesM.length).toBe(0);
  });
});
