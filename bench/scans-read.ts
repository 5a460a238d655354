/**
 * Scan storage benchmark (not a test): a benchmark lot of 25 pairs = 50 wafers with 20,000 defects
 * each (1,000,000 defects), imported as one record-layout scans file, then read back.
 *
 *   node --import tsx bench/scans-read.ts
 *
 * Figures, each against a baseline measured in the same run:
 * 1. import rate through importFile (defects/s) against a bare parse of the same file with papaparse
 *    (no validation, no storage): the ratio says what validation, normalisation and packing cost;
 * 2. reading all 50 scans with readScanDefects (typed arrays of x, y, size, class) against the bare
 *    SQLite read of the same BLOB columns (the floor: better-sqlite3 has to copy the bytes out):
 *    target well under 100 ms for the whole lot, ratio close to 1.
 */
import { closeSync, mkdtempSync, openSync, readFileSync, rmSync, writeSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import Papa from 'papaparse';
import { importFile } from '../src/ingest/pipeline.ts';
import { migrate, openDatabase } from '../src/store/db.ts';
import { readScanDefects } from '../src/store/scans.ts';

const WAFERS = 50;
const DEFECTS = 20_000;

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

function writeScans(path: string): void {
  const rand = rng(20260303);
  const fd = openSync(path, 'w');
  let buf = [
    '# format: voidcast scans 1',
    '# tool: SSI-1',
    '# threshold_nm: 45',
    '# wafer_diameter_mm: 300',
    '# edge_exclusion_mm: 3',
    '# coordinates: origin=centre x=right y=up view=front',
    '# notch_deg: 270',
    'record,scan_id,lot,wafer,scan_time,x_mm,y_mm,size_nm,class',
    '',
  ].join('\n');
  for (let w = 0; w < WAFERS; w++) {
    const id = `B-${String(w + 1).padStart(2, '0')}`;
    buf += `scan,S-${id},LB,${id},2026-03-03T06:${String(w).padStart(2, '0')}:00Z,,,,\n`;
    for (let i = 0; i < DEFECTS; i++) {
      const r = 147 * Math.sqrt(rand());
      const t = 2 * Math.PI * rand();
      // Pareto sizes above 45 nm with slope 2 (a typical cumulative slope of surface particles).
      const d = 45 / Math.sqrt(1 - rand() * 0.999);
      buf += `defect,S-${id},,,,${(r * Math.cos(t)).toFixed(3)},${(r * Math.sin(t)).toFixed(3)},${d.toFixed(1)},particle\n`;
      if (buf.length > 1 << 20) {
        writeSync(fd, buf);
        buf = '';
      }
    }
  }
  writeSync(fd, buf);
  closeSync(fd);
}

const ms = (t0: bigint) => Number(process.hrtime.bigint() - t0) / 1e6;

export async function run(): Promise<void> {
  const dir = mkdtempSync(join(tmpdir(), 'voidcast-bench-scans-'));
  try {
    const file = join(dir, 'scans.csv');
    writeScans(file);
    const n = WAFERS * DEFECTS;

    let t0 = process.hrtime.bigint();
    let rows = 0;
    Papa.parse(readFileSync(file, 'utf8'), { comments: '#', step: () => void rows++ });
    const parseMs = ms(t0);

    const db = openDatabase(join(dir, 'bench.db'));
    migrate(db);
    t0 = process.hrtime.bigint();
    const r = await importFile(db, { kind: 'scans', path: file });
    const importMs = ms(t0);
    if (r.status !== 'imported')
      throw new Error(`bench import ${r.status}: ${JSON.stringify(r.issues.slice(0, 3))}`);
    console.log(
      `import: ${n} defects in ${importMs.toFixed(0)} ms (${((n / importMs) * 1000).toFixed(0)} defects/s); ` +
        `bare papaparse of the file ${parseMs.toFixed(0)} ms (${rows} records); ratio ${(importMs / parseMs).toFixed(1)}`,
    );

    const ids = db.prepare('SELECT scan_key FROM scans ORDER BY id').pluck().all() as string[];
    const bare = db.prepare('SELECT x_m, y_m, diameter_m, class_codes FROM scans WHERE scan_key = ?');
    const best = (f: () => number) => {
      let b = Number.POSITIVE_INFINITY;
      let check = 0;
      for (let k = 0; k < 7; k++) {
        const t = process.hrtime.bigint();
        check += f();
        b = Math.min(b, ms(t));
      }
      return { b, check };
    };
    const floor = best(() => {
      let s = 0;
      for (const id of ids) {
        const row = bare.get(id) as { x_m: Buffer };
        s += row.x_m.length;
      }
      return s;
    });
    const ours = best(() => {
      let s = 0;
      for (const id of ids) s += readScanDefects(db, id)!.count;
      return s;
    });
    console.log(
      `read: ${ids.length} scans, ${n} defects with readScanDefects in ${ours.b.toFixed(1)} ms (best of 7); ` +
        `bare BLOB read ${floor.b.toFixed(1)} ms; ratio ${(ours.b / floor.b).toFixed(2)} (target: well under 100 ms)`,
    );
    db.close();
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
}

if (import.meta.url === `file://${process.argv[1]}`) await run();
