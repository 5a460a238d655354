/**
 * Bench: calibrating the demo's bonded lots from their void inspections, end to end from the
 * database (issue target: under 5 s).
 *
 * Data: the demo line (sample-counts/), imported into a temporary data directory through the demo
 * loader — two bonded lots, 24 pairs, 48 inspections (each pair calibrated on its acoustic one).
 *
 * Measured in the same run (medians of BENCH_RUNS runs after one warm-up):
 * - calibrate: loadInspectedLots + calibrate (each pair assessed with every disc and matched, the
 *   energy and unexplained-rate fits, the pairs reassessed at the fitted energy) — the target;
 * - backtest: loadInspectedLots + backtest (the same, plus each lot left out and reassessed);
 * - page: loadInspectedLots + calibrateWithBacktest (what the Calibration page computes, once per
 *   data version).
 *
 * Run: npm run bench -- calibrate   (or: node --import tsx bench/calibrate.ts)
 */
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { loadDemo } from '../src/cli/demo.ts';
import { backtest, calibrateWithBacktest } from '../src/engine/learn/backtest.ts';
import { calibrate } from '../src/engine/learn/calibration.ts';
import { loadInspectedLots } from '../src/engine/learn/loader.ts';
import { openDataDir } from '../src/store/db.ts';

const RUNS = Number(process.env.BENCH_RUNS ?? 5);
const TARGET_MS = 5000;

function p50(xs: number[]): number {
  const s = [...xs].sort((a, b) => a - b);
  return s[Math.floor(s.length / 2)]!;
}

export async function run(): Promise<void> {
  const dir = mkdtempSync(join(tmpdir(), 'voidcast-bench-calibrate-'));
  const db = openDataDir(dir);
  try {
    let t = performance.now();
    await loadDemo(db);
    console.log(`demo loaded in ${((performance.now() - t) / 1000).toFixed(1)} s`);
    const cal: number[] = [];
    const bt: number[] = [];
    const pg: number[] = [];
    let summary = '';
    for (let r = 0; r < RUNS + 1; r++) {
      t = performance.now();
      const report = calibrate(loadInspectedLots(db).lots);
      const c = performance.now() - t;
      t = performance.now();
      backtest(loadInspectedLots(db).lots);
      const b = performance.now() - t;
      t = performance.now();
      calibrateWithBacktest(loadInspectedLots(db).lots);
      const p = performance.now() - t;
      if (r === 0) {
        const v = report.values.voidSize['GALE-7'];
        const u = report.values.unexplainedVoids['GALE-7'];
        summary =
          `${report.pairs.length} pairs; energy ${v?.energyJm2.toFixed(3)} J/m² [${v?.energyLowJm2.toFixed(3)}–${v?.energyHighJm2.toFixed(3)}] (n = ${v?.n}); ` +
          `unexplained ${u?.ratePerPair.toFixed(2)} per pair [${u?.rateLowPerPair.toFixed(2)}–${u?.rateHighPerPair.toFixed(2)}]`;
        continue; // the first run warms the JIT and SQLite's page cache
      }
      cal.push(c);
      bt.push(b);
      pg.push(p);
    }
    console.log(summary);
    const c = p50(cal);
    console.log(
      `calibrate (median of ${RUNS}): ${c.toFixed(0)} ms — target < ${TARGET_MS} ms: ${c < TARGET_MS ? 'met' : 'NOT met'}`,
    );
    console.log(`backtest, leave one lot out (median): ${p50(bt).toFixed(0)} ms`);
    console.log(`calibration page, both from one assessment (median): ${p50(pg).toFixed(0)} ms`);
  } finally {
    db.close();
    rmSync(dir, { recursive: true, force: true });
  }
}

if (process.argv[1] && fileURLToPath(import.meta.url) === process.argv[1]) await run();
