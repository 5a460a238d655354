/**
 * Scan storage benchmark (not a test): a benchmark lot of 25 pairs = 50 wafers with 20,000 defects
 * each (1,000,000 defects), imported as one record-layout scans file, then read back.
 *
 *   node --import tsx bench/scans-read.ts
 *
 * Figures, each against a baseline measured in the same run:
 * 1. import rate through importFile (defects/s) against a bare parse of the same file into cells (no
 *    validation, no storage), the fastest in each repeat of three parsers: papaparse over the whole
 *    text, the import's own chunked papaparse reader, and the import's own reader of quote-free
 *    lines (which the import uses on this file, src/ingest/kinds/scan-rows.ts rawText) cutting each
 *    line at the delimiter. The ratio says what validation, normalisation and packing cost;
 * 2. reading all 50 scans with readScanDefects (typed arrays of x, y, size, class) against the bare
 *    SQLite read of the same BLOB columns (the floor: better-sqlite3 has to copy the bytes out):
 *    target well under 100 ms for the whole lot, ratio close to 1.
 */
import { closeSync, mkdtempSync, openSync, readFileSync, rmSync, writeSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import Papa from 'papaparse';
import { CsvReader, fileSource } from '../src/ingest/csv.ts';
import { readRows, startCsv } from '../src/ingest/csv-rows.ts';
import { getKind } from '../src/ingest/kinds/index.ts';
import { importFile } from '../src/ingest/pipeline.ts';
import { migrate, openDatabase } from '../src/store/db.ts';
import { readScanDefects } from '../src/store/scans.ts';
import {
  type BenchConfig,
  defaultConfig,
  fmt,
  median,
  runsFrom,
  type Section,
  timed,
  timedAsync,
} from './common.ts';

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

function writeScans(path: string, WAFERS: number): void {
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

export async function run(cfg: BenchConfig = defaultConfig()): Promise<Section> {
  const WAFERS = cfg.quick ? 5 : 50;
  const repeat = runsFrom(cfg, 3, 3);
  const dir = mkdtempSync(join(tmpdir(), 'voidcast-bench-scans-'));
  try {
    const file = join(dir, 'scans.csv');
    writeScans(file, WAFERS);
    const n = WAFERS * DEFECTS;
    // Alternating: a bare parse (read the file, papaparse, count the records), then the import into
    // a fresh database; one warm-up of each; wall and CPU time; the ratio of each pair.
    // Two bare parses, and the target takes the faster of the two in each repeat: papaparse over
    // the whole text, and the import's own chunked reader (src/ingest/csv.ts, 64 KiB chunks, the
    // same papaparse settings) returning raw cells — the import minus its checks and storage.
    const wholeText = () => {
      let rows = 0;
      Papa.parse(readFileSync(file, 'utf8'), { comments: '#', step: () => void rows++ });
      return rows;
    };
    const chunked = () => {
      const reader = new CsvReader(fileSource(file));
      let rows = 0;
      try {
        reader.readPreamble();
        for (let b = reader.nextBatch(); b; b = reader.nextBatch()) rows += b.rows.length;
      } finally {
        reader.close();
      }
      return rows;
    };
    // The third: the import's own reader of quote-free text (the same chunks, decoding and line
    // finding, src/ingest/csv-rows.ts readRows with a `rawText` hook) cutting each line into its
    // cells at the delimiter — the bare parse of the reader the import uses on such a file.
    const lines = () => {
      const reader = new CsvReader(fileSource(file));
      const kind = getKind('scans');
      if (!kind) throw new Error('no scans kind');
      let rows = 0;
      const cells: string[] = [];
      try {
        const start = startCsv(kind, reader, () => {}, { notes: [], dialect: null });
        if (!start) throw new Error('bench scans file refused before its rows');
        const delim = reader.delimiter;
        const cut = (text: string, from: number, to: number) => {
          cells.length = 0;
          for (let i = from; i <= to; ) {
            let j = text.indexOf(delim, i);
            if (j === -1 || j > to) j = to;
            cells.push(text.slice(i, j));
            i = j + 1;
          }
          rows++;
          return true;
        };
        readRows(
          reader,
          start,
          () => {},
          () => void rows++,
          undefined,
          true,
          cut,
        );
      } finally {
        reader.close();
      }
      return rows;
    };
    const parse = () => {
      const a = timed(wholeText);
      const b = timed(chunked);
      const c = timed(lines);
      wholeMs.push(a.ms);
      chunkMs.push(b.ms);
      lineMs.push(c.ms);
      return [a, b, c].reduce((x, y) => (y.ms < x.ms ? y : x));
    };
    const wholeMs: number[] = [];
    const chunkMs: number[] = [];
    const lineMs: number[] = [];
    const importOnce = async (k: number) => {
      const db = openDatabase(join(dir, `bench-${k}.db`));
      migrate(db);
      const t = await timedAsync(() => importFile(db, { kind: 'scans', path: file }));
      if (t.value.status !== 'imported')
        throw new Error(`bench import ${t.value.status}: ${JSON.stringify(t.value.issues.slice(0, 3))}`);
      return { db, ms: t.ms, cpuMs: t.cpuMs };
    };
    parse();
    (await importOnce(-1)).db.close();
    const parseMs: number[] = [];
    const parseCpu: number[] = [];
    const impMs: number[] = [];
    const impCpu: number[] = [];
    let db: Awaited<ReturnType<typeof importOnce>>['db'] | null = null;
    wholeMs.length = 0;
    chunkMs.length = 0;
    lineMs.length = 0;
    for (let k = 0; k < repeat; k++) {
      const p = parse();
      parseMs.push(p.ms);
      parseCpu.push(p.cpuMs);
      db?.close();
      const r = await importOnce(k);
      db = r.db;
      impMs.push(r.ms);
      impCpu.push(r.cpuMs);
    }
    const ratios = impMs.map((m, i) => m / parseMs[i]!);
    const cpuRatios = impCpu.map((m, i) => m / parseCpu[i]!);
    cfg.log(
      `scan import ${fmt(median(impMs))} ms vs bare parse ${fmt(median(parseMs))} ms: ${fmt(median(ratios))} × (CPU ${fmt(median(cpuRatios))} ×)`,
    );

    const ids = db!.prepare('SELECT scan_key FROM scans ORDER BY id').pluck().all() as string[];
    const bare = db!.prepare('SELECT x_m, y_m, diameter_m, class_codes FROM scans WHERE scan_key = ?');
    const best = (f: () => number) => {
      const ts: number[] = [];
      for (let k = 0; k < 7; k++) ts.push(timed(f).ms);
      return median(ts);
    };
    const floor = best(() => {
      let s = 0;
      for (const id of ids) s += (bare.get(id) as { x_m: Buffer }).x_m.length;
      return s;
    });
    const ours = best(() => {
      let s = 0;
      for (const id of ids) s += readScanDefects(db!, id)!.count;
      return s;
    });
    db!.close();
    const worst = Math.max(...ratios);
    const worstCpu = Math.max(...cpuRatios);
    const met = worst <= 2 && worstCpu <= 2;
    return {
      name: 'scans',
      data: `one record-layout scans file of ${WAFERS} wafers × ${DEFECTS.toLocaleString('en-US')} defects (${(n / 1e6).toFixed(1)} M), xorshift32 seed 20260303; ${repeat} alternating repeats after a warm-up`,
      figures: [
        {
          what: `scan import through importFile (${n.toLocaleString('en-US')} defects), wall p50`,
          value: median(impMs),
          unit: 'ms',
          baseline: {
            what: 'bare parse of the same file (read + parse into cells, no validation, no storage; the fastest of papaparse over the whole text, the import’s own chunked papaparse reader and the import’s own reader of quote-free lines, in each repeat), p50',
            value: median(parseMs),
            unit: 'ms',
          },
          ratio: median(ratios),
          note: `CPU ${fmt(median(cpuRatios))} × (range ${fmt(Math.min(...cpuRatios))}–${fmt(worstCpu)} ×); range ${fmt(Math.min(...ratios))}–${fmt(worst)} ×; bare parses p50: papaparse over the whole text ${fmt(median(wholeMs))} ms, the import’s chunked reader ${fmt(median(chunkMs))} ms, the import’s quote-free line reader ${fmt(median(lineMs))} ms`,
        },
        {
          what: `readScanDefects of all ${ids.length} scans, p50`,
          value: ours,
          unit: 'ms',
          baseline: { what: 'bare SQLite read of the same BLOB columns, p50', value: floor, unit: 'ms' },
          ratio: ours / floor,
        },
      ],
      targets: [
        {
          name: 'scan import',
          target: '≤ 2 × a bare parse of the same file, in every repeat, by wall and by CPU time',
          measured: `median ${fmt(median(ratios))} ×, highest ${fmt(worst)} × (wall); CPU median ${fmt(median(cpuRatios))} ×, highest ${fmt(worstCpu)} ×`,
          met,
          why: met
            ? undefined
            : 'besides reading the file, the import hashes it, checks, maps and packs every defect into its scan, counts repeats and writes the BLOBs; see the remarks in docs/performance.md',
        },
      ],
    };
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
}

if (import.meta.url === `file://${process.argv[1]}`) console.log(JSON.stringify(await run(), null, 2));
