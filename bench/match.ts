/**
 * Scan matching benchmark (not a test): two scans of one 300 mm wafer with 100,000 defects each,
 * matched as learning matches them (src/model/matching: stage offset from confident matches, then
 * one-to-one greedy matching on the grid index), against the time to read the same two scans.
 *
 *   node --import tsx bench/match.ts      (or: npm run bench -- match; BENCH_RUNS=n for more runs)
 *
 * Data (invented, seeded): the before scan uniform over the inspected disc (r = 147 mm), sizes a
 * power law of slope 2 from 45 nm; the after scan = the same defects moved by a 30 µm stage error
 * per scan and axis plus a stage offset of (25, −18) µm, 5 % of them gone and 5 % new ones added.
 *
 * Figures, each against a baseline measured in the same run (median of the runs; wall and CPU time):
 * 1. reading the two scans: (a) from their file — a bare papaparse parse of the record-layout CSV
 *    that holds them (the floor of reading a scanner's result file); (b) from the database —
 *    readScanDefects of both scans after importing that file;
 * 2. matching: matchScans with σ = 42.4 µm (30 µm √2), q = 0.999, the offset search of learning;
 *    target ≤ 2 × the file read.
 * 3. scaling: the median matching CPU time (less disturbed than wall time by other work on the
 *    machine) for 10³ … 3·10⁵ defects per scan on the same wafer and at the constant density of 10⁵
 *    defects on a 300 mm wafer, and the exponent b of t ∝ n^b fitted by least squares in log–log over
 *    10³–10⁵ and 10³–3·10⁵ (1 = linear; a denser wafer costs a little more per defect, as each query
 *    meets more neighbours, and larger arrays fall out of the processor's caches).
 */
import { closeSync, mkdtempSync, openSync, readFileSync, rmSync, writeSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import Papa from 'papaparse';
import { importFile } from '../src/ingest/pipeline.ts';
import { type MatchableScan, matchScans } from '../src/model/matching/index.ts';
import { createRng } from '../src/model/rng.ts';
import { migrate, openDatabase } from '../src/store/db.ts';
import { readScanDefects } from '../src/store/scans.ts';

const N = 100_000;
const RUNS = Number(process.env.BENCH_RUNS ?? 7);
const R_M = 0.147;
const SIGMA_M = 30e-6 * Math.SQRT2;

function pair(n: number, seed: number, radiusM = R_M): { before: MatchableScan; after: MatchableScan } {
  const rng = createRng(seed);
  const R = radiusM;
  const bx = new Float64Array(n);
  const by = new Float64Array(n);
  const bd = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    const r = R * Math.sqrt(rng.uniform());
    const t = 2 * Math.PI * rng.uniform();
    bx[i] = r * Math.cos(t);
    by[i] = r * Math.sin(t);
    bd[i] = Math.min(45e-9 / Math.sqrt(1 - rng.uniform()), 20e-6);
  }
  const ax: number[] = [];
  const ay: number[] = [];
  const ad: number[] = [];
  for (let i = 0; i < n; i++) {
    if (rng.uniform() < 0.05) continue;
    const d = bd[i]! * Math.exp(0.05 * rng.normal());
    if (d < 40e-9) continue; // measured below the threshold: not reported
    ax.push(bx[i]! + 25e-6 + 30e-6 * rng.normal());
    ay.push(by[i]! - 18e-6 + 30e-6 * rng.normal());
    ad.push(d);
  }
  const added = Math.round(0.05 * n);
  for (let k = 0; k < added; k++) {
    const r = R * Math.sqrt(rng.uniform());
    const t = 2 * Math.PI * rng.uniform();
    ax.push(r * Math.cos(t));
    ay.push(r * Math.sin(t));
    ad.push(Math.min(45e-9 / Math.sqrt(1 - rng.uniform()), 20e-6));
  }
  return {
    before: { count: n, xM: bx, yM: by, diameterM: bd, thresholdM: 40e-9 },
    after: {
      count: ax.length,
      xM: Float64Array.from(ax),
      yM: Float64Array.from(ay),
      diameterM: Float64Array.from(ad),
      thresholdM: 40e-9,
    },
  };
}

function writeCsv(path: string, p: { before: MatchableScan; after: MatchableScan }): void {
  const fd = openSync(path, 'w');
  let buf = [
    '# format: voidcast scans 1',
    '# tool: SSI-1',
    '# threshold_nm: 40',
    '# wafer_diameter_mm: 300',
    '# edge_exclusion_mm: 3',
    '# coordinates: origin=centre x=right y=up view=front',
    '# notch_deg: 270',
    'record,scan_id,lot,wafer,scan_time,x_mm,y_mm,size_nm,class',
    '',
  ].join('\n');
  for (const [id, s, time] of [
    ['PRE', p.before, '2026-03-03T06:00:00Z'],
    ['POST', p.after, '2026-03-03T06:10:00Z'],
  ] as const) {
    buf += `scan,${id},LB,LB-01,${time},,,,\n`;
    for (let i = 0; i < s.count; i++) {
      buf += `defect,${id},,,,${(s.xM[i]! * 1000).toFixed(4)},${(s.yM[i]! * 1000).toFixed(4)},${(s.diameterM[i]! * 1e9).toFixed(2)},particle\n`;
      if (buf.length > 1 << 20) {
        writeSync(fd, buf);
        buf = '';
      }
    }
  }
  writeSync(fd, buf);
  closeSync(fd);
}

interface Timing {
  wallMs: number;
  cpuMs: number;
}

/** Median wall and CPU time of `runs` calls (one untimed warm-up first). */
function time(f: () => unknown, runs = RUNS): Timing {
  f();
  const wall: number[] = [];
  const cpu: number[] = [];
  for (let k = 0; k < runs; k++) {
    const c0 = process.cpuUsage();
    const t0 = process.hrtime.bigint();
    f();
    wall.push(Number(process.hrtime.bigint() - t0) / 1e6);
    const c = process.cpuUsage(c0);
    cpu.push((c.user + c.system) / 1000);
  }
  const med = (v: number[]) => [...v].sort((a, b) => a - b)[Math.floor(v.length / 2)]!;
  return { wallMs: med(wall), cpuMs: med(cpu) };
}

function opts(radiusM = R_M) {
  return {
    positionSigmaM: SIGMA_M,
    captureFraction: 0.999,
    nearThresholdFactor: 1.5,
    areaM2: Math.PI * radiusM * radiusM,
    maxOffsetM: 500e-6,
  };
}

function slope(xs: number[], ys: number[]): number {
  const lx = xs.map(Math.log);
  const ly = ys.map(Math.log);
  const mx = lx.reduce((s, v) => s + v, 0) / lx.length;
  const my = ly.reduce((s, v) => s + v, 0) / ly.length;
  let sxy = 0;
  let sxx = 0;
  lx.forEach((x, i) => {
    sxy += (x - mx) * (ly[i]! - my);
    sxx += (x - mx) ** 2;
  });
  return sxy / sxx;
}

export async function run(): Promise<void> {
  const dir = mkdtempSync(join(tmpdir(), 'voidcast-bench-match-'));
  try {
    const p = pair(N, 20261012);
    const file = join(dir, 'scans.csv');
    writeCsv(file, p);
    const fileRead = time(() => {
      let rows = 0;
      Papa.parse(readFileSync(file, 'utf8'), { comments: '#', step: () => void rows++ });
      return rows;
    });
    const db = openDatabase(join(dir, 'bench.db'));
    migrate(db);
    const r = await importFile(db, { kind: 'scans', path: file });
    if (r.status !== 'imported')
      throw new Error(`bench import ${r.status}: ${JSON.stringify(r.issues.slice(0, 3))}`);
    const dbRead = time(() => readScanDefects(db, 'PRE')!.count + readScanDefects(db, 'POST')!.count);
    db.close();
    let result = matchScans(p.before, p.after, opts());
    const match = time(() => {
      result = matchScans(p.before, p.after, opts());
    });
    console.log(
      `two scans of ${N} and ${p.after.count} defects: matched ${result.matched}, only before ${result.onlyBefore}, only after ${result.onlyAfter}, ` +
        `offset (${(result.offset.dxM * 1e6).toFixed(1)}, ${(result.offset.dyM * 1e6).toFixed(1)}) µm from ${result.offset.confidentMatches} confident matches, chance matches ${result.expectedChanceMatches.toFixed(2)}`,
    );
    console.log(
      `read from the file (bare papaparse): wall ${fileRead.wallMs.toFixed(1)} ms, CPU ${fileRead.cpuMs.toFixed(1)} ms; ` +
        `from the database (readScanDefects ×2): wall ${dbRead.wallMs.toFixed(2)} ms, CPU ${dbRead.cpuMs.toFixed(2)} ms`,
    );
    console.log(
      `match: wall ${match.wallMs.toFixed(1)} ms, CPU ${match.cpuMs.toFixed(1)} ms (median of ${RUNS}); ` +
        `ratio to the file read: wall ${(match.wallMs / fileRead.wallMs).toFixed(2)}, CPU ${(match.cpuMs / fileRead.cpuMs).toFixed(2)} (target ≤ 2); ` +
        `to the database read: wall ${(match.wallMs / dbRead.wallMs).toFixed(0)}`,
    );
    const sizes = [1_000, 3_000, 10_000, 30_000, 100_000, 300_000];
    const t: number[] = [];
    for (const n of sizes) {
      const q = pair(n, 7 + n);
      t.push(
        time(
          () => matchScans(q.before, q.after, opts()),
          Math.max(3, Math.min(RUNS * 3, Math.round(3e6 / n))),
        ).cpuMs,
      );
    }
    console.log(
      `scaling on one wafer (CPU ms): ${sizes.map((n, i) => `${n}: ${t[i]!.toFixed(2)}`).join(', ')}`,
    );
    console.log(
      `exponent b of t ∝ n^b on one wafer (density grows with n): 10³–10⁵ ${slope(sizes.slice(0, 5), t.slice(0, 5)).toFixed(2)}, 10³–3·10⁵ ${slope(sizes, t).toFixed(2)} (1 = linear)`,
    );
    // The same at the density of 10⁵ defects on a 300 mm wafer: the area grows with n.
    const tc: number[] = [];
    for (const n of sizes) {
      const rad = R_M * Math.sqrt(n / N);
      const q = pair(n, 11 + n, rad);
      tc.push(
        time(
          () => matchScans(q.before, q.after, opts(rad)),
          Math.max(3, Math.min(RUNS * 3, Math.round(3e6 / n))),
        ).cpuMs,
      );
    }
    console.log(
      `scaling at constant density (CPU ms): ${sizes.map((n, i) => `${n}: ${tc[i]!.toFixed(2)}`).join(', ')}`,
    );
    console.log(
      `exponent b at constant density: 10³–10⁵ ${slope(sizes.slice(0, 5), tc.slice(0, 5)).toFixed(2)}, 10³–3·10⁵ ${slope(sizes, tc).toFixed(2)}`,
    );
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
}

if (import.meta.url === `file://${process.argv[1]}`) await run();
