/**
 * Scaling benchmark (not a test): how the time of each data-heavy path grows with its data, as the
 * exponent b of t ∝ n^b fitted by least squares in log–log over at least two decades (1 = linear).
 *
 *   node --import tsx bench/scaling.ts [quick]     (or: npm run bench -- scaling)
 *
 * 1. A pair's assessment (assessPair, pure engine, 400 Monte Carlo draws) against the number of
 *    detected particles per wafer: 10³ … 10⁶ (quick: 10³ … 10⁵), the bench line of bench/assess.ts.
 *    CPU time, median of the runs (CPU time is less disturbed than wall time by other work).
 * 2. Reading counter samples (readCounterSamples, every location) against the number of rows read:
 *    10⁵ … 10⁷ rows (quick: 3·10³ … 3·10⁵) out of one database holding the largest size, written
 *    into the real tables by direct inserts and copies (seedCounters); the range read grows.
 */
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { assessPair } from '../src/engine/pair.ts';
import { createRng } from '../src/model/rng.ts';
import { readCounterSamples } from '../src/store/counters.ts';
import { migrate, openDatabase } from '../src/store/db.ts';
import { seedLine } from '../test/helpers/engine-db.ts';
import { counterSeries, line, location } from '../test/helpers/engine-inputs.ts';
import { build } from './assess.ts';
import {
  type BenchConfig,
  defaultConfig,
  fmt,
  type Growth,
  logLogSlope,
  median,
  runsFrom,
  type Section,
  type Target,
  timed,
} from './common.ts';

const LOCATIONS = 12;
const START_MS = Date.UTC(2026, 1, 1);
const H = 3_600_000;
const LINEAR_LIMIT = 1.1;
const CH = [0.1e-6, 0.2e-6, 0.3e-6, 0.5e-6, 1e-6, 5e-6];
const ISO5 = [100000, 23700, 10200, 3520, 832, 29];

async function pairGrowth(cfg: BenchConfig): Promise<Growth> {
  const sizes = cfg.quick ? [1e3, 1e4, 1e5] : [1e3, 1e4, 1e5, 1e6];
  const ms: number[] = [];
  for (const n of sizes) {
    const { data, pairs } = build(1, n);
    const asOfMs = pairs[0]!.bondTimeMs! - 0.1 * H;
    const runs = n >= 1e6 ? Math.min(3, runsFrom(cfg, 3, 2)) : runsFrom(cfg, 5, 3);
    assessPair(pairs[0]!, data, { asOfMs, detail: 'full' }); // warm-up
    const t: number[] = [];
    for (let r = 0; r < runs; r++)
      t.push(timed(() => assessPair(pairs[0]!, data, { asOfMs, detail: 'full' })).cpuMs);
    ms.push(median(t));
    cfg.log(
      `assessPair, ${n.toLocaleString('en-US')} detected particles per wafer: ${fmt(median(t))} ms CPU (median of ${runs})`,
    );
  }
  return {
    path: 'a pair’s assessment (assessPair, 2 wafers, full detail)',
    unit: 'detected particles per wafer',
    sizes,
    ms,
    exponent: logLogSlope(sizes, ms),
  };
}

/**
 * The counter rows of the growth fit: 12 locations of one-minute samples over 6 cumulative
 * channels, noisy ISO 5 levels (seeded), in the real tables. The first location's rows are written
 * by the direct inserts of the engine's test helpers (test/helpers/engine-db.ts), in time order as
 * an import stores them; each other location gets the same minutes with the first location's
 * counts rotated by a different number of minutes (location l: by l × 7,919), copied inside SQLite
 * (`INSERT … SELECT`, the foreign keys off for the copy: every key copied is one just checked).
 * The import itself is measured in the import section; going through it here cost six minutes of
 * the whole run at 10⁷ rows, and inserting every row from JavaScript 72 s, without changing what
 * is read (the reads see the same number of rows, keys and bytes per row).
 */
function seedCounters(db: ReturnType<typeof openDatabase>, total: number): void {
  const perLocation = Math.ceil(total / LOCATIONS);
  const locations: Record<string, ReturnType<typeof location>> = {};
  for (let l = 0; l < LOCATIONS; l++) locations[`LOC-${l + 1}`] = location(`LOC-${l + 1}`);
  const rng = createRng(300);
  const first = counterSeries('LOC-1', START_MS, START_MS + perLocation * 60_000, CH, () =>
    ISO5.map((v) => v * 0.01 * (0.5 + rng.uniform())),
  );
  db.transaction(() => seedLine(db, line({ locations, counters: { 'LOC-1': first } })))();
  const id = db.prepare('SELECT id FROM locations WHERE location_id = ?').pluck();
  // The first location's rows numbered in time order, in a temporary table (an insert that reads
  // its own table would copy what it reads first).
  db.exec(
    `CREATE TEMP TABLE seed_rows (i INTEGER PRIMARY KEY, start_ms, counter, duration_ms, volume_m3, channel_set, counts, flags, room_state, import_id, line)`,
  );
  db.prepare(
    `INSERT INTO seed_rows SELECT row_number() OVER (ORDER BY start_ms, counter, duration_ms) - 1, start_ms, counter, duration_ms, volume_m3, channel_set, counts, flags, room_state, import_id, line
       FROM counter_samples WHERE location = ?`,
  ).run(id.get('LOC-1'));
  // Row i of location l takes the counts and flags of the first location's row (i + l·7919) mod n.
  const copy = db.prepare(
    `INSERT INTO counter_samples (location, start_ms, counter, duration_ms, volume_m3, channel_set, counts, flags, room_state, import_id, line)
     SELECT @to, a.start_ms, a.counter, a.duration_ms, a.volume_m3, a.channel_set, b.counts, b.flags, a.room_state, a.import_id, a.line
       FROM seed_rows a JOIN seed_rows b ON b.i = (a.i + @shift) % @n
      ORDER BY a.i`,
  );
  db.pragma('foreign_keys = OFF');
  try {
    db.transaction(() => {
      for (let l = 1; l < LOCATIONS; l++)
        copy.run({ to: id.get(`LOC-${l + 1}`), shift: l * 7919, n: perLocation });
    })();
  } finally {
    db.pragma('foreign_keys = ON');
    db.exec('DROP TABLE temp.seed_rows');
  }
}

async function counterGrowth(cfg: BenchConfig): Promise<Growth> {
  const total = cfg.quick ? 3e5 : 1e7;
  const sizes = cfg.quick ? [3e3, 3e4, 3e5] : [1e5, 1e6, 1e7];
  const dir = mkdtempSync(join(tmpdir(), 'voidcast-bench-scaling-'));
  try {
    const t0 = performance.now();
    const db = openDatabase(join(dir, 'scaling.db'));
    migrate(db);
    seedCounters(db, total);
    cfg.log(
      `wrote ${total.toLocaleString('en-US')} counter rows (12 locations, 1-min samples, 6 channels) in ${((performance.now() - t0) / 1000).toFixed(0)} s`,
    );
    const ms: number[] = [];
    for (const n of sizes) {
      // rows are location-interleaved one-minute samples: n rows span n / 12 minutes
      const to = START_MS + Math.ceil(n / LOCATIONS) * 60_000;
      const read = () => {
        let k = 0;
        for (let l = 0; l < LOCATIONS; l++) k += readCounterSamples(db, `LOC-${l + 1}`, START_MS, to).n;
        return k;
      };
      // Warm-up and several runs below 10⁷ rows. At 10⁷ (15–20 s of CPU a read here) one run, no
      // warm-up: the smaller sizes have warmed the code and the rows were just written, so they are
      // in the page cache; a read that long varies by a few per cent from run to run, and 5 % at the
      // top size moves the exponent over 10⁵–10⁷ by 0.01 (half of log10 1.05), while a second
      // read cost 15–40 s of the run.
      if (n < 1e7) read();
      else cfg.log(`reading ${n.toLocaleString('en-US')} rows (one run, about 15–20 s of CPU)…`);
      const runs = n >= 1e7 ? 1 : runsFrom(cfg, 5, 3);
      const t: number[] = [];
      let got = 0;
      for (let i = 0; i < runs; i++) {
        const x = timed(read);
        t.push(x.cpuMs);
        got = x.value;
      }
      ms.push(median(t));
      cfg.log(
        `readCounterSamples, ${got.toLocaleString('en-US')} rows: ${fmt(median(t))} ms CPU (${runs > 1 ? `median of ${runs}` : 'one run'})`,
      );
    }
    db.close();
    return {
      path: 'reading counter samples (readCounterSamples, 12 locations)',
      unit: 'rows read',
      sizes,
      ms,
      exponent: logLogSlope(sizes, ms),
    };
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
}

export async function run(cfg: BenchConfig = defaultConfig()): Promise<Section> {
  const growth = [await pairGrowth(cfg), await counterGrowth(cfg)];
  const targets: Target[] = growth.map((g) => ({
    name: `growth of ${g.path}`,
    target: `linear or better: exponent ≤ ${LINEAR_LIMIT} over ${g.sizes[0]!.toExponential(0)}–${g.sizes.at(-1)!.toExponential(0)} ${g.unit}${cfg.quick ? ' (quick: smaller sizes than the target’s)' : ''}`,
    measured: `n^${g.exponent.toFixed(2)}`,
    met: g.exponent <= LINEAR_LIMIT,
    why: g.exponent <= LINEAR_LIMIT ? undefined : 'see docs/performance.md',
  }));
  return {
    name: 'scaling',
    data: `the bench line of bench/assess.ts with one pair; ${cfg.quick ? '3·10⁵' : '10⁷'} counter rows in the real tables (12 locations, 1-min samples, 6 channels: the first location’s by direct inserts, the others copied with its counts rotated)`,
    figures: [],
    targets,
    growth,
  };
}

if (process.argv[1] && fileURLToPath(import.meta.url) === process.argv[1])
  console.log(JSON.stringify(await run(), null, 2));
