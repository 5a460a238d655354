/**
 * Counter-sample imports end to end: SI normalisation, the stored layout, the engine's read helper,
 * idempotency, de-duplication across files, partial imports and every data-quality flag.
 */
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import { SAMPLE_FLAGS } from '../../src/ingest/kinds/counter-samples.ts';
import { importFile } from '../../src/ingest/pipeline.ts';
import type { ImportReport } from '../../src/ingest/types.ts';
import { M3_PER_FT3 } from '../../src/model/units.ts';
import { readCounterSamples, toCumulativeSeries } from '../../src/store/counters.ts';
import { type Db, migrate, openDatabase } from '../../src/store/db.ts';
import { dumpDatabase } from '../helpers/db-dump.ts';

const GOOD = join(import.meta.dirname, '../fixtures/good');
let dir: string;
let db: Db;
let n = 0;

beforeEach(async () => {
  dir = mkdtempSync(join(tmpdir(), 'voidcast-cs-'));
  db = openDatabase(':memory:');
  migrate(db);
  const r = await importFile(db, { kind: 'locations', path: join(GOOD, 'locations-line.csv') });
  expect(r.status).toBe('imported');
});
afterEach(() => {
  db.close();
  rmSync(dir, { recursive: true, force: true });
});

async function importText(text: string, acceptValidRows = false): Promise<ImportReport> {
  const path = join(dir, `f${n++}.csv`);
  writeFileSync(path, text);
  return importFile(db, { kind: 'counter-samples', path, acceptValidRows, displayName: 'test.csv' });
}

const T0 = Date.parse('2026-03-02T08:00:00Z');
const iso = (ms: number) => new Date(ms).toISOString().replace('.000Z', 'Z');

/** A cumulative 3-channel file, one row per [minute offset, counts…]. */
function counterFile(
  rows: [number, number, number, number][],
  extraMeta = '',
  volume = '28.3',
  counter = 'PC-9',
) {
  const head = `# units: counts=raw\n${extraMeta}counter_id,location_id,start,duration_s,volume_L,ge_0.1um,ge_0.5um,ge_1um,status\n`;
  return (
    head +
    rows
      .map(([m, a, b, c]) => `${counter},BAY-BOND,${iso(T0 + m * 60_000)},60,${volume},${a},${b},${c},ok\n`)
      .join('')
  );
}

function flagsOf(locationId = 'BAY-BOND'): number[] {
  return Array.from(readCounterSamples(db, locationId, T0 - 86_400_000, T0 + 30 * 86_400_000).flags);
}

describe('counter-samples: good files to SI', () => {
  it('stores starts in UTC ms, durations in ms, volumes in m³ and raw counts as float64', async () => {
    const r = await importFile(db, { kind: 'counter-samples', path: join(GOOD, 'counter-samples-bay.csv') });
    expect(r.status).toBe('imported');
    expect(r.rowsStored).toBe(20);
    expect(r.flags).toEqual([]);
    const s = readCounterSamples(db, 'BAY-BOND', T0, T0 + 3_600_000);
    expect(s.n).toBe(10);
    expect(s.startMs[0]).toBe(T0);
    expect(s.endMs[0]).toBe(T0 + 60_000);
    expect(s.volumeM3[0]).toBeCloseTo(0.0283, 15); // 28.3 L × 1e-3 m³/L (SI prefix)
    expect(Array.from(s.counts.subarray(0, 6))).toEqual([1200, 400, 180, 60, 12, 0]);
    expect(s.counterIds).toEqual(['PC-07']);
    expect(s.roomState[0]).toBe(3);
    expect(s.channelSets[0]!.lowerM).toEqual([1e-7, 2e-7, 3e-7, 5e-7, 1e-6, 5e-6]);
  });

  it('reads samples overlapping a range, in start order, and unknown locations as empty', async () => {
    await importFile(db, { kind: 'counter-samples', path: join(GOOD, 'counter-samples-bay.csv') });
    // The sample 08:04–08:05 reaches into [08:04:30, 08:06:30); 08:06 starts inside it.
    const s = readCounterSamples(db, 'BAY-BOND', T0 + 4.5 * 60_000, T0 + 6.5 * 60_000);
    expect(Array.from(s.startMs)).toEqual([T0 + 4 * 60_000, T0 + 5 * 60_000, T0 + 6 * 60_000]);
    expect(readCounterSamples(db, 'NO-SUCH', 0, 1e15).n).toBe(0);
  });

  it('cumulative concentrations per m³ for the engine: count / volume', async () => {
    await importFile(db, { kind: 'counter-samples', path: join(GOOD, 'counter-samples-bay.csv') });
    const c = toCumulativeSeries(readCounterSamples(db, 'BAY-BOND', T0, T0 + 60_000));
    expect(Array.from(c.channelSizesM)).toEqual([1e-7, 2e-7, 3e-7, 5e-7, 1e-6, 5e-6]);
    expect(c.cumulativePerM3[0]).toBeCloseTo(1200 / 0.0283, 6); // hand computation
    expect(c.cumulativePerM3[5]).toBe(0);
  });

  it('differential channels with flow × time, end times and a declared zone (Europe/Berlin, CET = UTC+1 in March)', async () => {
    const r = await importFile(db, {
      kind: 'counter-samples',
      path: join(GOOD, 'counter-samples-differential-zone.csv'),
    });
    expect(r.status).toBe('imported');
    expect(r.notes).toContain('no # rated_max declared: the saturation check was not run');
    expect(r.flags).toEqual([
      {
        code: 'fault',
        count: 1,
        detail: 'samples with a flow or laser fault reported by the counter (not used for dose)',
      },
    ]);
    const s = readCounterSamples(db, 'ACT-1-LP', 0, 1e15);
    expect(s.n).toBe(3);
    expect(s.startMs[0]).toBe(Date.parse('2026-03-02T08:00:00Z'));
    expect(s.volumeM3[0]).toBeCloseTo(0.0283, 12); // 28.3 L/min × 1 min
    expect(s.channelSets[0]!.mode).toBe('differential');
    expect(s.channelSets[0]!.upperM).toEqual([3e-7, 5e-7, 1e-6, null]);
    expect(s.flags[2]).toBe(SAMPLE_FLAGS.fault | SAMPLE_FLAGS.statusFlow);
    // Cumulative ≥ d_i = Σ_{j ≥ i} differential counts (open top channel): 100+40+10+2, 40+10+2, 10+2, 2.
    const c = toCumulativeSeries(s);
    expect(Array.from(c.channelSizesM)).toEqual([1e-7, 3e-7, 5e-7, 1e-6]);
    const v = s.volumeM3[0]!;
    expect(Array.from(c.cumulativePerM3.subarray(0, 4)).map((x) => x * v)).toEqual(
      [152, 52, 12, 2].map((x) => expect.closeTo(x, 9)),
    );
    expect(c.flags[2]).toBe(SAMPLE_FLAGS.fault); // the low byte only: what the engine acts on
  });

  it('reads a semicolon + decimal-comma spreadsheet export with BOM, CRLF, header case and spaces, and reports it', async () => {
    const r = await importFile(db, {
      kind: 'counter-samples',
      path: join(GOOD, 'counter-samples-semicolon-decimal-comma.csv'),
    });
    expect(r.status).toBe('imported');
    expect(r.rowsStored).toBe(2);
    expect(r.dialect).toEqual({
      delimiter: ';',
      decimal: ',',
      delimiterSource: 'detected',
      decimalSource: 'detected',
      bom: true,
      lineBreak: '\r\n',
    });
    expect(r.notes).toEqual([
      'a UTF-8 byte-order mark was found and ignored',
      'delimiter ";" detected from the header',
      'decimal comma detected (first on line 4)',
      'no # rated_max declared: the saturation check was not run',
    ]);
    // Counts per ft³ back to raw counts: n = C/ft⁻³ ÷ 0.028316846592 m³/ft³ × V (NIST SP 811 factor).
    const s = readCounterSamples(db, 'BAY-BOND', 0, 1e15);
    expect(s.startMs[0]).toBe(Date.parse('2026-03-02T09:00:00Z'));
    expect(s.counts[0]).toBeCloseTo((102.5 / M3_PER_FT3) * 0.0283, 9);
    expect(s.counts[1]).toBeCloseTo((35.25 / M3_PER_FT3) * 0.0283, 9);
  });

  it('re-importing the same content changes nothing and says so', async () => {
    const path = join(GOOD, 'counter-samples-bay.csv');
    const first = await importFile(db, { kind: 'counter-samples', path });
    const before = dumpDatabase(db);
    const again = await importFile(db, { kind: 'counter-samples', path });
    expect(again.status).toBe('unchanged');
    expect(again.importId).toBe(first.importId);
    expect(again.sha256).toBe(first.sha256);
    expect(again.rowsStored).toBe(0);
    expect(dumpDatabase(db)).toEqual(before);
  });

  it('de-duplicates on (counter, location, start, duration) within a file and against earlier files', async () => {
    const a = await importText(
      counterFile([0, 1, 2, 3, 4].map((m) => [m, 50, 10, 2] as [number, number, number, number])),
    );
    expect(a.rowsStored).toBe(5);
    // Minutes 3–4 again (one with other counts), 5–6 new, and minute 6 twice in the file.
    const b = await importText(
      counterFile([
        [3, 50, 10, 2],
        [4, 51, 10, 2],
        [5, 50, 10, 2],
        [6, 50, 10, 2],
        [6, 50, 10, 2],
      ]),
    );
    expect(b.status).toBe('imported');
    expect(b.rowsStored).toBe(2);
    expect(b.duplicates).toBe(3);
    expect(b.flags).toEqual([
      {
        code: 'duplicate',
        count: 3,
        detail:
          '3 samples repeat (counter, location, start, duration) — 1 within this file, 2 already stored; the first copy was kept; 1 with different counts',
      },
    ]);
    const stored = db.prepare('SELECT code, count FROM import_flags WHERE import_id = ?').all(b.importId);
    expect(stored).toEqual([{ code: 'duplicate', count: 3 }]);
    const s = readCounterSamples(db, 'BAY-BOND', 0, 1e15);
    expect(s.n).toBe(7);
    expect(s.counts[4 * s.width]).toBe(50); // the first copy of minute 4 was kept
  });

  it('--accept-valid-rows stores the valid rows, lists the rest, and records them with the import', async () => {
    const text = counterFile([
      [0, 50, 10, 2],
      [1, 50, 60, 2],
      [2, 50, 10, 2],
    ]);
    const rejected = await importText(text);
    expect(rejected.status).toBe('rejected');
    const r = await importText(text, true);
    expect(r.status).toBe('partial');
    expect(r.rowsRead).toBe(3);
    expect(r.rowsStored).toBe(2);
    expect(r.rowsRejected).toBe(1);
    expect(r.issues).toEqual([
      {
        file: 'test.csv',
        line: 4,
        column: 'ge_0.5um',
        value: '60',
        rule: 'cumulative counts must not rise with size: ge_0.5um = 60 is above ge_0.1um = 50',
      },
    ]);
    const row = db
      .prepare('SELECT status, rows_rejected, issues FROM imports WHERE id = ?')
      .get(r.importId) as {
      status: string;
      rows_rejected: number;
      issues: string;
    };
    expect(row.status).toBe('partial');
    expect(row.rows_rejected).toBe(1);
    expect(JSON.parse(row.issues)).toEqual(r.issues);
  });

  it('a file with nothing valid is rejected even with --accept-valid-rows', async () => {
    const r = await importText(counterFile([[0, 5, 6, 7]]), true);
    expect(r.status).toBe('rejected');
    expect(db.prepare('SELECT count(*) FROM counter_samples').pluck().get()).toBe(0);
  });
});

describe('counter-samples: data-quality flags (stored per sample and summarised)', () => {
  it('flags a long all-channel zero run (≥ 1 m³ of air) on every sample of it, but not a short one', async () => {
    // 10 zero samples (283 L: not flagged), one count, then 40 zero samples (1132 L ≥ 1000 L: flagged).
    const rows: [number, number, number, number][] = [];
    for (let m = 0; m < 10; m++) rows.push([m, 0, 0, 0]);
    rows.push([10, 5, 1, 0]);
    for (let m = 11; m < 51; m++) rows.push([m, 0, 0, 0]);
    rows.push([51, 5, 1, 0]);
    const r = await importText(counterFile(rows));
    expect(r.flags.map((f) => [f.code, f.count])).toEqual([['zero-run', 40]]);
    expect(r.flags[0]!.detail).toMatch(
      /^1 all-channel zero run\(s\) over ≥ 1000 L of air \(zeros kept as counts/,
    );
    const f = flagsOf();
    expect(f.slice(0, 11).every((x) => x === 0)).toBe(true);
    expect(f.slice(11, 51).every((x) => x === SAMPLE_FLAGS.zeroRun)).toBe(true);
    expect(f[51]).toBe(0);
    // Zeros are counts, not gaps: every row is stored with its zeros.
    expect(readCounterSamples(db, 'BAY-BOND', 0, 1e15).n).toBe(52);
  });

  it('flags sentinel constants in every channel and ≥ 3 identical non-trivial rows in a row', async () => {
    const r = await importText(
      counterFile([
        [0, 9999, 9999, 9999],
        [1, 50, 10, 2],
        [2, 120, 30, 5],
        [3, 120, 30, 5],
        [4, 120, 30, 5],
        [5, 120, 30, 5],
        [6, 3, 1, 0],
        [7, 3, 1, 0],
        [8, 3, 1, 0],
      ]),
    );
    expect(r.flags.map((f) => [f.code, f.count])).toEqual([['sentinel', 5]]);
    const S = SAMPLE_FLAGS.sentinel;
    // Repeats of a tiny vector (total < 20) are ordinary Poisson coincidences in clean air: not flagged.
    expect(flagsOf()).toEqual([S, 0, S, S, S, S, 0, 0, 0]);
  });

  it('flags time gaps longer than 3 × the typical interval, during and after the warm-up', async () => {
    const rows: [number, number, number, number][] = [];
    let m = 0;
    for (let i = 0; i < 100; i++) {
      if (i === 10) m += 30; // a 31-minute step inside the warm-up
      if (i === 80) m += 9; // a 10-minute step after it
      rows.push([m, 50 + (i % 7), 10, 2]);
      m += 1;
    }
    const r = await importText(counterFile(rows));
    expect(r.flags.map((f) => [f.code, f.count])).toEqual([['gap', 2]]);
    expect(r.flags[0]!.detail).toBe('time gaps longer than 3 × the typical interval; longest 31.0 min');
    const f = flagsOf();
    expect(f.map((x, i) => (x & SAMPLE_FLAGS.gapBefore ? i : -1)).filter((i) => i >= 0)).toEqual([10, 80]);
  });

  it('flags a sample that starts before the previous one of its counter', async () => {
    const r = await importText(
      counterFile([
        [0, 50, 10, 2],
        [2, 51, 10, 2],
        [1, 52, 10, 2],
        [3, 53, 10, 2],
      ]),
    );
    expect(r.flags.map((f) => [f.code, f.count])).toEqual([['time-backwards', 1]]);
    // Stored in start order; the sample of minute 1 carries the flag.
    expect(flagsOf()).toEqual([0, SAMPLE_FLAGS.timeBackwards, 0, 0]);
  });

  it('flags saturation near the declared rated maximum and overload reported by the counter (lower bounds)', async () => {
    // 4 000 000 per ft³ = 4e6 / 0.028316846592 per m³; 90 % of it in 28.3 L is 3.598e6 counts.
    const rated = (4e6 / M3_PER_FT3) * 0.9 * 0.0283;
    expect(rated).toBeCloseTo(3_597_858, 0); // hand computation: 141 258 667 per m³ × 0.9 × 0.0283 m³
    const text =
      counterFile(
        [
          [0, 3_700_000, 900_000, 10],
          [1, 3_500_000, 900_000, 10],
        ],
        '# rated_max: 4000000 per_ft3\n',
      ) + `PC-9,BAY-BOND,${iso(T0 + 120_000)},60,28.3,10,1,0,overload\n`;
    const r = await importText(text);
    expect(r.flags.map((f) => [f.code, f.count])).toEqual([
      ['overload', 1],
      ['saturation', 1],
    ]);
    expect(flagsOf()).toEqual([
      SAMPLE_FLAGS.saturation | SAMPLE_FLAGS.lowerBound,
      0,
      SAMPLE_FLAGS.statusOverload | SAMPLE_FLAGS.lowerBound,
    ]);
  });

  it('flags an implied flow rate outside 0.5–200 L/min as a suspect unit (m³ written in a litre column)', async () => {
    const r = await importText(counterFile([[0, 50, 10, 2]], '', '0.0283'));
    expect(r.flags).toEqual([
      {
        code: 'unit-suspect',
        count: 1,
        detail:
          'implied flow outside 0.5–200 L/min: check the volume and duration units (line 3: 0.02830 L in 60 s is 0.0283 L/min)',
      },
    ]);
    expect(flagsOf()).toEqual([SAMPLE_FLAGS.unitSuspect]);
  });
});
