/**
 * Import benchmark (not a test): counter-sample files end to end through importFile, against the
 * sqlite3 command-line shell's `.import` of the same file into an equivalent table, in the same run.
 *
 *   node --import tsx bench/import.ts [--rows 1000000] [--rss-rows 5000000] [--keep]
 *
 * 1. Generates a counter-samples file (12 locations, one counter each, one-minute samples,
 *    6 cumulative channels) in a temp directory.
 * 2. Imports it through importFile into a fresh database file (locations first); reports rows/s.
 * 3. Imports the same file with `/usr/bin/sqlite3` (`.mode csv`, `.import --skip`) into a table with
 *    the same columns and the same primary key (the de-duplication key, clustered WITHOUT ROWID);
 *    reports rows/s and the ratio ours / sqlite3 (target ≥ 1.0, wall and CPU).
 * 4. Reads two weeks of one-minute data at all 12 locations with readCounterSamples and reports the time.
 * 5. In a child process, imports a --rss-rows file and reports its peak resident set size
 *    (process.resourceUsage().maxRSS; target < 250 MB).
 */
import { execFileSync, spawnSync } from 'node:child_process';
import { closeSync, mkdtempSync, openSync, readFileSync, rmSync, statSync, writeSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { importFile } from '../src/ingest/pipeline.ts';
import { readCounterSamples } from '../src/store/counters.ts';
import { migrate, openDatabase } from '../src/store/db.ts';
import {
  type BenchConfig,
  defaultConfig,
  type Figure,
  fmt,
  median,
  type Section,
  type Target,
  timed,
} from './common.ts';

const LOCATIONS = 12;
const CHANNELS = ['ge_0.1um', 'ge_0.2um', 'ge_0.3um', 'ge_0.5um', 'ge_1um', 'ge_5um'];
const START_MS = Date.UTC(2026, 1, 1);
const METADATA_LINES = 3;

/** Deterministic xorshift32 (Marsaglia 2003), for reproducible files. */
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

export function writeLocations(path: string): void {
  const lines = ['# format: voidcast locations 1', 'location_id,parent_id,level,environment,iso_class'];
  lines.push('FAB,,site,open-room,');
  for (let l = 0; l < LOCATIONS; l++) lines.push(`LOC-${l + 1},FAB,point,mini-environment,4`);
  const fd = openSync(path, 'w');
  writeSync(fd, `${lines.join('\n')}\n`);
  closeSync(fd);
}

/** Writes `rows` samples: location-interleaved, one-minute samples, cumulative counts falling with size. */
export function writeCounterFile(path: string, rows: number): void {
  const rand = rng(20260201);
  const fd = openSync(path, 'w');
  let buf = [
    '# format: voidcast counter-samples 1',
    '# units: counts=raw',
    '# rated_max: 4000000 per_ft3',
    `counter_id,location_id,start,duration_s,volume_L,${CHANNELS.join(',')},status,room_state`,
    '',
  ].join('\n');
  for (let i = 0; i < rows; i++) {
    const l = i % LOCATIONS;
    const minute = Math.floor(i / LOCATIONS);
    const start = new Date(START_MS + minute * 60_000).toISOString().replace('.000Z', 'Z');
    let c = Math.floor(200 + rand() * 800);
    const counts: number[] = [];
    for (let k = 0; k < CHANNELS.length; k++) {
      counts.push(c);
      c = Math.floor(c * (0.2 + rand() * 0.4));
    }
    buf += `PC-${l + 1},LOC-${l + 1},${start},60,28.3,${counts.join(',')},ok,operational\n`;
    if (buf.length > 1 << 20) {
      writeSync(fd, buf);
      buf = '';
    }
  }
  writeSync(fd, buf);
  closeSync(fd);
}

function sqliteImport(dir: string, csv: string): { ms: number; cpuMs: number } {
  const db = join(dir, 'sqlite3-baseline.db');
  rmSync(db, { force: true });
  const script = join(dir, 'baseline.sql');
  const fd = openSync(script, 'w');
  writeSync(
    fd,
    [
      'PRAGMA journal_mode = WAL;',
      'PRAGMA synchronous = NORMAL;',
      `CREATE TABLE samples (counter_id TEXT NOT NULL, location_id TEXT NOT NULL, start TEXT NOT NULL,
        duration_s REAL NOT NULL, volume_l REAL NOT NULL, ${CHANNELS.map((c) => `"${c}" INTEGER NOT NULL`).join(', ')},
        status TEXT, room_state TEXT, PRIMARY KEY (location_id, start, counter_id, duration_s)) WITHOUT ROWID;`,
      '.mode csv',
      `.import --skip ${METADATA_LINES + 1} ${csv} samples`,
      'SELECT count(*) FROM samples;',
      '',
    ].join('\n'),
  );
  closeSync(fd);
  const timing = join(dir, 'sqlite3-time.txt');
  const t0 = performance.now();
  const out = execFileSync(
    '/usr/bin/time',
    ['-f', '%U %S %M', '-o', timing, '/usr/bin/sqlite3', db, `.read ${script}`],
    {
      encoding: 'utf8',
    },
  );
  const ms = performance.now() - t0;
  const n = Number(out.trim().split('\n').at(-1));
  if (!Number.isFinite(n) || n <= 0) throw new Error(`sqlite3 baseline imported nothing: ${out}`);
  const [user, sys] = readFileSync(timing, 'utf8').trim().split('\n').at(-1)!.split(' ').map(Number) as [
    number,
    number,
  ];
  return { ms, cpuMs: (user + sys) * 1000 };
}

async function importOurs(dir: string, csv: string, name: string) {
  const dbFile = join(dir, `${name}.db`);
  for (const ext of ['', '-wal', '-shm']) rmSync(dbFile + ext, { force: true });
  const db = openDatabase(dbFile);
  migrate(db);
  const locs = join(dir, 'locations.csv');
  writeLocations(locs);
  const lr = await importFile(db, { kind: 'locations', path: locs });
  if (lr.status !== 'imported') throw new Error(`locations: ${JSON.stringify(lr.issues)}`);
  const c0 = process.cpuUsage();
  const t0 = performance.now();
  const r = await importFile(db, { kind: 'counter-samples', path: csv });
  const ms = performance.now() - t0;
  const c = process.cpuUsage(c0);
  const cpuMs = (c.user + c.system) / 1000;
  if (r.status !== 'imported')
    throw new Error(`counter samples: ${r.status} ${JSON.stringify(r.issues.slice(0, 3))}`);
  return { db, ms, cpuMs, report: r };
}

async function child(csv: string, dir: string) {
  const { ms, report, db } = await importOurs(dir, csv, 'rss');
  db.close();
  const maxRssKb = process.resourceUsage().maxRSS;
  process.stdout.write(`${JSON.stringify({ ms, rows: report.rowsStored, maxRssKb })}\n`);
}

/** Sizes: --rows (the ratio), --rss-rows (peak memory), --repeat; quick mode makes them small. */
function sizes(args: string[], quick: boolean) {
  const opt = (name: string, def: number) => {
    const i = args.indexOf(name);
    return i === -1 ? def : Number(args[i + 1]);
  };
  return {
    rows: opt('--rows', quick ? 100_000 : 1_000_000),
    rssRows: opt('--rss-rows', quick ? 300_000 : 5_000_000),
    repeat: opt('--repeat', quick ? 2 : 3),
  };
}

export async function run(cfg: BenchConfig = defaultConfig()): Promise<Section> {
  const args = process.argv.slice(2);
  if (args[0] === '--child') {
    await child(args[1]!, args[2]!);
    return { name: 'import', data: '', figures: [], targets: [] };
  }
  const { rows, rssRows, repeat } = sizes(args, cfg.quick);
  const log = cfg.log;
  const dir = mkdtempSync(join(tmpdir(), 'voidcast-bench-'));
  const figures: Figure[] = [];
  const targets: Target[] = [];
  try {
    const csv = join(dir, 'counters.csv');
    let t = performance.now();
    writeCounterFile(csv, rows);
    const mb = statSync(csv).size / 1e6;
    log(
      `generated ${rows.toLocaleString('en-US')} rows, ${mb.toFixed(1)} MB in ${((performance.now() - t) / 1000).toFixed(1)} s`,
    );

    // `repeat` runs of each, alternating so that both see the same conditions; wall-clock and CPU
    // time (user + system; the shell's own from /usr/bin/time) both; the ratio of each repeat.
    let ours: Awaited<ReturnType<typeof importOurs>> | null = null;
    const oursMs: number[] = [];
    const oursCpu: number[] = [];
    const baseMs: number[] = [];
    const baseCpu: number[] = [];
    // one warm-up of each (page cache, JIT), not counted
    (await importOurs(dir, csv, 'warm')).db.close();
    sqliteImport(dir, csv);
    for (let i = 0; i < repeat; i++) {
      ours?.db.close();
      ours = await importOurs(dir, csv, 'voidcast');
      oursMs.push(ours.ms);
      oursCpu.push(ours.cpuMs);
      const b = sqliteImport(dir, csv);
      baseMs.push(b.ms);
      baseCpu.push(b.cpuMs);
    }
    const wallRatios = baseMs.map((b, i) => b / oursMs[i]!);
    const cpuRatios = baseCpu.map((b, i) => b / oursCpu[i]!);
    const rate = (ms: number) => rows / (ms / 1000);
    figures.push(
      {
        what: `counter-samples import through importFile (${rows.toLocaleString('en-US')} rows, full validation), wall`,
        value: rate(median(oursMs)),
        unit: 'rows/s',
        baseline: {
          what: 'sqlite3 shell .import of the same file (no validation), wall',
          value: rate(median(baseMs)),
          unit: 'rows/s',
        },
        ratio: median(wallRatios),
        ratioNote: `rate ratio ours / sqlite3, median of ${repeat}; range ${fmt(Math.min(...wallRatios))}–${fmt(Math.max(...wallRatios))}`,
      },
      {
        what: 'the same, CPU (user + system)',
        value: rate(median(oursCpu)),
        unit: 'rows/CPU-s',
        baseline: {
          what: 'sqlite3 shell, CPU of the child (/usr/bin/time)',
          value: rate(median(baseCpu)),
          unit: 'rows/CPU-s',
        },
        ratio: median(cpuRatios),
        ratioNote: `range ${fmt(Math.min(...cpuRatios))}–${fmt(Math.max(...cpuRatios))}`,
      },
    );
    for (const [name, rs] of [
      ['counter import, wall', wallRatios],
      ['counter import, CPU', cpuRatios],
    ] as const)
      targets.push({
        name,
        target: '≥ 1.0 × sqlite3 .import, in every repeat',
        measured: `median ${fmt(median(rs))} ×, lowest ${fmt(Math.min(...rs))} × (${repeat} repeats)`,
        met: Math.min(...rs) >= 1,
        why:
          Math.min(...rs) >= 1
            ? undefined
            : 'SQLite’s own work on the samples (the batched INSERTs and the commit) is about half of the import’s CPU time and alone near the shell’s whole import; the rest is validating every cell and row, the per-series quality checks and the hourly aggregates, which the shell does not do; parsing overlapped with writing in a second thread was tried and not kept (faster by wall with a core free, but over 250 MB at 5 M rows). See docs/performance.md.',
      });
    log(
      `importFile ${fmt(rate(median(oursMs)))} rows/s vs sqlite3 ${fmt(rate(median(baseMs)))} rows/s: wall ratio ${fmt(median(wallRatios))}, CPU ratio ${fmt(median(cpuRatios))}`,
    );

    // The engine's read: two weeks of one-minute data at every location.
    const from = START_MS;
    const to = START_MS + 14 * 86_400_000;
    const readMs: number[] = [];
    let n = 0;
    for (let rep = 0; rep < 4; rep++) {
      const r = timed(() => {
        let k = 0;
        for (let l = 0; l < LOCATIONS; l++) k += readCounterSamples(ours!.db, `LOC-${l + 1}`, from, to).n;
        return k;
      });
      n = r.value;
      if (rep > 0) readMs.push(r.ms);
    }
    figures.push({
      what: `readCounterSamples, ${n.toLocaleString('en-US')} samples (≤ 14 days × ${LOCATIONS} locations)`,
      value: median(readMs),
      unit: 'ms',
    });
    ours!.db.close();

    if (rssRows > 0) {
      const big = join(dir, 'counters-big.csv');
      t = performance.now();
      writeCounterFile(big, rssRows);
      rmSync(csv, { force: true });
      log(
        `generated ${rssRows.toLocaleString('en-US')} rows, ${(statSync(big).size / 1e6).toFixed(0)} MB in ${((performance.now() - t) / 1000).toFixed(1)} s`,
      );
      const self = fileURLToPath(import.meta.url);
      const r = spawnSync(process.execPath, ['--import', 'tsx', self, '--child', big, dir], {
        encoding: 'utf8',
        cwd: join(dirname(self), '..'),
      });
      if (r.status !== 0) throw new Error(`child failed: ${r.stderr}`);
      const res = JSON.parse(r.stdout.trim().split('\n').at(-1)!) as {
        ms: number;
        rows: number;
        maxRssKb: number;
      };
      const peakMb = res.maxRssKb / 1024;
      figures.push({
        what: `peak RSS of a process importing ${res.rows.toLocaleString('en-US')} counter rows (${fmt(res.rows / (res.ms / 1000))} rows/s)`,
        value: peakMb,
        unit: 'MB',
      });
      targets.push({
        name: `peak memory, counter import of ${(rssRows / 1e6).toLocaleString('en-US')} M rows`,
        target: '< 250 MB' + (rssRows < 5_000_000 ? ' (quick: fewer rows than the 5 M of the target)' : ''),
        measured: `${fmt(peakMb)} MB`,
        met: peakMb < 250,
        why: peakMb < 250 ? undefined : 'the import holds more than it streams',
      });
      log(`peak RSS ${fmt(peakMb)} MB at ${res.rows} rows`);
    }
  } finally {
    if (!args.includes('--keep')) rmSync(dir, { recursive: true, force: true });
    else log(`kept ${dir}`);
  }
  return {
    name: 'import',
    data: `counter-samples files of ${rows.toLocaleString('en-US')} and ${rssRows.toLocaleString('en-US')} rows (12 locations, 1-min samples, 6 channels, xorshift32 seed 20260201)`,
    figures,
    targets,
  };
}

function dirname(p: string): string {
  return p.slice(0, p.lastIndexOf('/'));
}

export const name = 'import';

if (process.argv[1] && fileURLToPath(import.meta.url) === process.argv[1]) {
  const s = await run({ ...defaultConfig(), quick: process.argv.includes('quick') });
  if (s.figures.length) console.log(JSON.stringify(s, null, 2));
}
