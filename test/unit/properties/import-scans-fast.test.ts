/**
 * The scans import's fast paths (src/ingest/kinds/scan-rows.ts) against their plain twin: the same kind
 * with the fast paths taken away, so every row goes through the cell plan (zod schemas, fast cells
 * first) and the plain defect checks. Two fast paths are checked: `rawText`, which reads a line of a
 * quote-free text where it stands (src/ingest/csv-rows.ts, RawLines), and `rawRow`, which reads the
 * cells papaparse cut (texts with quotes) joined into a line. Expected values come from the plain path itself (the
 * implementation before the fast paths existed; bench/scans-read.ts's file was also checked byte for
 * byte against it by hand when each fast path was written): on generated files — with quoted cells,
 * blank and white-space lines, CRLF breaks, and read a few bytes at a time so that lines straddle
 * reads — all must store byte-for-byte the same rows and BLOBs and give the same report (status,
 * issues with file, line, column and rule, flags, notes). fast-check with fixed seeds, so a failure
 * reproduces.
 */
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import type { ByteSource } from '../../../src/ingest/csv.ts';
import { shiftDecimal } from '../../../src/ingest/kinds/header-fields.ts';
import { countRepeats } from '../../../src/ingest/kinds/scan-build.ts';
import { readPlainDecimal } from '../../../src/ingest/kinds/scan-numbers.ts';
import { scans } from '../../../src/ingest/kinds/scans.ts';
import { importSource, sha256Text } from '../../../src/ingest/pipeline.ts';
import type { ImportKind, ImportReport, KindSession } from '../../../src/ingest/types.ts';
import { type Db, openDatabase } from '../../../src/store/db.ts';
import { dumpDatabase } from '../../helpers/db-dump.ts';
import { bufferBytes, kindFiles, referenceDb } from '../../helpers/import-fuzz.ts';

/** The scans kind with the session changed by `change`. */
function scansWith(change: (s: KindSession) => KindSession): ImportKind {
  return {
    ...scans,
    begin: (ctx) => {
      const s = scans.begin(ctx);
      return Array.isArray(s) ? s : change(s);
    },
  };
}

/** The scans kind with its fast paths taken away (the plain twin). */
const plainScans = scansWith(({ rawRow: _cells, rawText: _text, ...plain }) => plain);

/** The rows the fast paths took and left. */
interface Counts {
  text: number;
  cells: number;
  left: number;
}

/** The scans kind, counting the rows its fast paths take and leave; `text` false: no rawText. */
function countingScans(counts: Counts, text: boolean): ImportKind {
  return scansWith((s) => {
    const { rawRow: cellsPath, rawText: textPath, ...rest } = s;
    return {
      ...rest,
      rawRow: (cells, line) => {
        const took = cellsPath!(cells, line);
        if (took) counts.cells++;
        else counts.left++;
        return took;
      },
      rawText: text
        ? (t, from, to, width) => {
            const took = textPath!(t, from, to, width);
            if (took) counts.text++;
            return took;
          }
        : undefined,
    };
  });
}

/** The bytes delivered at most `step` at a time (a reader's chunks then end mid-line). */
function tricklingBytes(bytes: Buffer, step: number): ByteSource {
  const inner = bufferBytes(bytes);
  return { size: inner.size, read: (buf) => inner.read(buf.subarray(0, step)), close: inner.close };
}

const NOW = () => new Date(Date.UTC(2026, 2, 3, 12));

function importInto(
  db: Db,
  kind: ImportKind,
  bytes: Buffer,
  n: number,
  acceptValidRows: boolean,
  step = 0,
): ImportReport {
  return importSource(db, kind, {
    displayName: `generated-${n}.csv`,
    sha256: sha256Text(bytes),
    bytes: bytes.length,
    acceptValidRows,
    now: NOW,
    open: () => (step > 0 ? tricklingBytes(bytes, step) : bufferBytes(bytes)),
  });
}

// ——— generated scans files with many defect rows written every way a file may write them ———

/** Number texts that break a rule or leave the fast path: exponents, spaces, commas, long digits, junk. */
const ODD_NUMBERS = [
  '-0',
  '+0.0',
  '0',
  '12.',
  '.5',
  '+7.25',
  '1e1',
  '5E-1',
  '0.0000001',
  '-0.00000012',
  '0.000000000000001',
  ' 3.5',
  '3.5 ',
  '1,5',
  '',
  'x',
  '149.9999999999',
  '150.0000000001',
  '-150',
  '1234567890.12345',
  '12345678901234567',
  '45',
  '44.99',
  '0.045',
  '0.0449',
];

/** A decimal written with 0–6 fraction digits, or (one in ten) its shortest form with 17 digits. */
function written(v: number, decimals: number, shortest: boolean): string {
  return shortest ? String(v / 7) : v.toFixed(decimals);
}

interface Shape {
  record: boolean;
  xUm: boolean;
  yUm: boolean;
  sizeUm: boolean;
  origin: 'centre' | 'lower-left';
  x: 'right' | 'left';
  y: 'up' | 'down';
  view: 'front' | 'back';
  notch: number;
  diameter: number;
  delimiter: ',' | ';';
  ignoredColumn: boolean;
  /** Line breaks of the file. */
  crlf: boolean;
  /** Rows now and then with a quoted cell, a blank or a white-space line before them. */
  unusualLines: boolean;
  /** Share of rows with something odd (per mille): 0 makes files that import. */
  oddPerMille: number;
  /** Part of the file's lot, wafer and scan ids (files of one run rarely share them). */
  tag: number;
}

const shapes: fc.Arbitrary<Shape> = fc.record({
  record: fc.boolean(),
  xUm: fc.boolean(),
  yUm: fc.boolean(),
  sizeUm: fc.boolean(),
  origin: fc.constantFrom('centre', 'lower-left'),
  x: fc.constantFrom('right', 'left'),
  y: fc.constantFrom('up', 'down'),
  view: fc.constantFrom('front', 'back'),
  notch: fc.constantFrom(0, 90, 180, 270, 45),
  diameter: fc.constantFrom(300, 200),
  delimiter: fc.constantFrom<',' | ';'>(',', ',', ';'),
  ignoredColumn: fc.boolean(),
  crlf: fc.boolean(),
  unusualLines: fc.boolean(),
  oddPerMille: fc.constantFrom(0, 0, 10, 50, 300),
  tag: fc.integer({ min: 100_000, max: 999_999 }),
});

/** One row's picks (all drawn for every row, so that the file shrinks well). */
interface RowPick {
  /** Radius (fraction of 1.01 × the wafer radius, squared: uniform over the disc) and angle. */
  r: number;
  angle: number;
  size: number;
  decimals: [number, number, number];
  shortest: number;
  cls: string;
  /** Below oddPerMille: the row gets the odd change `change` (what) at `at`, with `other`. */
  odd: number;
  change: number;
  at: number;
  other: string;
  oddNumber: string;
  /** With unusualLines: 0 quotes a cell of the row, 1 puts a blank line before it, 2 a white-space line. */
  unusual: number;
}

const rowPick: fc.Arbitrary<RowPick> = fc.record({
  r: fc.integer({ min: 0, max: 1_000_000 }),
  angle: fc.integer({ min: 0, max: 359_999 }),
  size: fc.integer({ min: 0, max: 1_000_000 }),
  decimals: fc.tuple(fc.nat(6), fc.nat(6), fc.nat(6)),
  shortest: fc.nat(9),
  cls: fc.constantFrom('particle', 'particle', 'pit', 'scratch', 'residue', 'cluster', 'unknown', ''),
  odd: fc.nat(999),
  change: fc.nat(9),
  at: fc.nat(),
  other: fc.constantFrom(
    '',
    'x',
    'defect',
    ' defect',
    'Defect',
    'scan',
    'S-9',
    'step 2',
    'Particle',
    ' pit',
    '  ',
    'bogus',
  ),
  oddNumber: fc.constantFrom(...ODD_NUMBERS),
  unusual: fc.nat(11),
});

function scansFile(s: Shape, picks: RowPick[]): Buffer {
  const d = s.delimiter;
  const xName = s.xUm ? 'x_um' : 'x_mm';
  const yName = s.yUm ? 'y_um' : 'y_mm';
  const sizeName = s.sizeUm ? 'size_um' : 'size_nm';
  const head = [
    '# format: voidcast scans 1',
    '# tool: SSI-1',
    '# threshold_nm: 45',
    `# wafer_diameter_mm: ${s.diameter}`,
    '# edge_exclusion_mm: 3',
    `# coordinates: origin=${s.origin} x=${s.x} y=${s.y} view=${s.view}`,
    `# notch_deg: ${s.notch}`,
  ];
  if (!s.record) head.push(`# lot: L${s.tag}`, `# wafer: L${s.tag}-01`, '# scan_time: 2026-03-03T06:00:00Z');
  const cols = s.record
    ? ['record', 'scan_id', 'lot', 'wafer', 'step', 'scan_time', xName, yName, sizeName, 'class']
    : [xName, yName, sizeName, 'class'];
  if (s.ignoredColumn) cols.push('x_note');
  const lines = [...head, cols.join(d)];
  const rows: string[][] = [];
  let opened = 0;
  const openScan = () => {
    opened++;
    const n = String(opened).padStart(2, '0');
    return [
      'scan',
      `S${s.tag}-${opened}`,
      `L${s.tag}`,
      `L${s.tag}-${n}`,
      'pre-bond',
      `2026-03-03T06:${n}:00Z`,
      '',
      '',
      '',
      '',
    ];
  };
  const radius = s.diameter / 2;
  const shift = s.origin === 'lower-left' ? radius : 0;
  let unusual = -1;
  let quoteAt = 0;
  const push = (cells: string[], extra: string) => {
    const row = s.ignoredColumn ? [...cells, extra] : [...cells];
    if (unusual === 0) {
      // A quoted cell (papaparse takes the quotes away; a delimiter or quote inside stays in the cell).
      const k = quoteAt % row.length;
      row[k] = `"${row[k]!.replace(/"/g, '""')}"`;
    } else if (unusual === 1) rows.push(['']);
    else if (unusual === 2) rows.push([' \t ']);
    rows.push(row);
  };
  if (s.record) push(openScan(), 'first');
  for (const p of picks) {
    // A position on the disc (an odd row may lie up to 2 % beyond its edge) in the file's units and origin.
    unusual = s.unusualLines ? p.unusual : -1;
    quoteAt = p.at;
    const odd = p.odd < s.oddPerMille;
    const rMm = (odd && p.change === 9 ? 1.02 : 1) * radius * Math.sqrt(p.r / 1_000_000);
    const t = (p.angle / 1000) * (Math.PI / 180);
    const xMm = rMm * Math.cos(t) + shift;
    const yMm = rMm * Math.sin(t) + shift;
    const long = p.shortest === 0;
    const x = written(s.xUm ? xMm * 1000 : xMm, p.decimals[0], long);
    const y = written(s.yUm ? yMm * 1000 : yMm, p.decimals[1], long);
    // Sizes from just below the 45 nm threshold to 2 µm.
    const sizeNm = 44 + (1956 * p.size) / 1_000_000;
    const size = written(s.sizeUm ? sizeNm / 1000 : sizeNm, p.decimals[2], p.shortest === 1);
    const defect = s.record
      ? ['defect', `S${s.tag}-${Math.max(1, opened)}`, '', '', '', '', x, y, size, p.cls]
      : [x, y, size, p.cls];
    const numberAt = s.record ? 6 + (p.at % 3) : p.at % 3;
    if (!odd) {
      // A plain row; now and then a new scan (record layout) or a repeat of an earlier defect.
      if (s.record && p.change === 0 && p.at % 8 === 0) push(openScan(), p.other);
      else if (p.change === 1 && p.at % 4 === 0 && rows.length > 1) push(rows[p.at % rows.length]!, '');
      else push(defect, p.other);
      continue;
    }
    const cells = [...defect];
    if (p.change <= 2) cells[numberAt] = p.oddNumber;
    else if (p.change === 3) cells[p.at % cells.length] = p.other;
    else if (p.change === 4) cells.pop();
    else if (p.change === 5) cells.push(p.other);
    else if (p.change === 6 && s.record)
      cells[1] = p.other === '' ? `S${s.tag}-1` : ` S${s.tag}-${1 + (p.at % 3)} `;
    else if (p.change === 7) cells[cells.length - 1] = p.other;
    else if (p.change === 8) cells[numberAt] = ` ${cells[numberAt]}`;
    push(cells, p.other);
  }
  for (const r of rows) lines.push(r.join(d));
  const nl = s.crlf ? '\r\n' : '\n';
  return Buffer.from(`${lines.join(nl)}${nl}`, 'utf8');
}

const scanFiles = shapes.chain((s) =>
  fc.array(rowPick, { maxLength: 80, size: 'max' }).map((p) => scansFile(s, p)),
);

/**
 * Runs a stream of files into three copies of one reference database — the plain twin, the kind with
 * both fast paths, the kind with the fast path on cells only — and compares each step.
 */
async function compareOn(
  files: fc.Arbitrary<Buffer>,
  seed: number,
  runs: number,
): Promise<Counts & { statuses: Record<string, number> }> {
  const ref = await referenceDb();
  const image = ref.serialize();
  ref.close();
  const dir = mkdtempSync(join(tmpdir(), 'voidcast-scans-twin-'));
  const dbs: Db[] = [];
  for (const name of ['plain', 'fast', 'cells']) {
    writeFileSync(join(dir, `${name}.db`), image);
    dbs.push(openDatabase(join(dir, `${name}.db`)));
  }
  const [plainDb, fastDb, cellsDb] = dbs as [Db, Db, Db];
  const counts: Counts = { text: 0, cells: 0, left: 0 };
  const fast = countingScans(counts, true);
  const cellsOnly = countingScans(counts, false);
  const statuses: Record<string, number> = {};
  let n = 0;
  try {
    fc.assert(
      fc.property(files, fc.boolean(), fc.nat(40), (bytes, acceptValidRows, step) => {
        n++;
        // One file in three read a few bytes at a time by all three (where an undecodable byte is
        // reported depends on the reads).
        const trickle = step % 3 === 0 ? 1 + step : 0;
        const want = importInto(plainDb, plainScans, bytes, n, acceptValidRows, trickle);
        const a = importInto(fastDb, fast, bytes, n, acceptValidRows, trickle);
        const b = importInto(cellsDb, cellsOnly, bytes, n, acceptValidRows, trickle);
        statuses[a.status] = (statuses[a.status] ?? 0) + 1;
        for (const f of a.flags) statuses[f.code] = (statuses[f.code] ?? 0) + 1;
        expect(a).toEqual(want);
        expect(b).toEqual(want);
        const wantDump = dumpDatabase(plainDb);
        expect(dumpDatabase(fastDb)).toEqual(wantDump);
        expect(dumpDatabase(cellsDb)).toEqual(wantDump);
      }),
      { seed, numRuns: runs },
    );
  } finally {
    for (const db of dbs) db.close();
    rmSync(dir, { recursive: true, force: true });
  }
  return { ...counts, statuses };
}

describe('scans import: the fast paths on the text and on raw cells equal their plain twin', () => {
  it('200 generated scans files (every unit, convention, layout and number form): same rows, BLOBs and reports', async () => {
    const r = await compareOn(scanFiles, 17_201, 200);
    // The comparison means something only if every path ran: most defect rows fast (on the text, and on
    // the cells of quoted texts and of the cells-only kind), the odd ones plain.
    expect(r.text).toBeGreaterThan(1000);
    expect(r.cells).toBeGreaterThan(1000);
    expect(r.left).toBeGreaterThan(100);
    // Files of every outcome, and the flags the fast path counts itself.
    for (const k of [
      'imported',
      'partial',
      'rejected',
      'in-edge-exclusion',
      'class-missing',
      'repeated-defect',
    ])
      expect(r.statuses[k] ?? 0, k).toBeGreaterThan(0);
  }, 120_000);

  it('300 mutated example files (test/helpers/import-fuzz.ts): same rows, BLOBs and reports', async () => {
    const r = await compareOn(kindFiles('scans'), 17_211, 300);
    expect(r.text + r.cells).toBeGreaterThan(0);
  }, 120_000);
});

describe('the fast path’s number reading', () => {
  it('equals Number() and shiftDecimal on 20,000 generated number texts', () => {
    let read = 0;
    fc.assert(
      fc.property(
        fc.oneof(
          fc
            .tuple(fc.integer({ min: -1e9, max: 1e9 }), fc.nat(8), fc.boolean())
            .map(([k, dec, long]) => written(k / 1000, dec, long)),
          fc.constantFrom(...ODD_NUMBERS),
        ),
        fc.constantFrom(3, 6, 9),
        (text, digits) => {
          const r = readPlainDecimal(text, digits);
          if (r === null) return;
          read++;
          // Object.is: the same double, the sign of a zero included.
          expect(Object.is(r.value, Number(text))).toBe(true);
          expect(Object.is(r.shifted, shiftDecimal(Number(text), digits))).toBe(true);
        },
      ),
      { seed: 17_221, numRuns: 20_000 },
    );
    expect(read).toBeGreaterThan(10_000);
  });

  it('takes only plain decimals of at most 15 digits (hand-picked texts)', () => {
    for (const t of [
      '1e1',
      '5E-1',
      ' 3.5',
      '3.5 ',
      '1,5',
      '',
      '.',
      '-',
      '+',
      '1.2.3',
      '0x10',
      '1234567890123456',
      '١',
    ])
      expect(readPlainDecimal(t, 3)).toBeNull();
    for (const t of ['12.', '.5', '+7.25', '-0', '123456789012345', '0.00000000000001'])
      expect(readPlainDecimal(t, 3)).not.toBeNull();
  });
});

describe('the repeated-defect count', () => {
  it('counts the triples whose shortest texts of x, y and size came before (20 generated lists of up to 2,000 triples)', () => {
    // Expected: the flag's definition worked through with a set of strings (its plain twin).
    const values = fc.oneof(
      fc.constantFrom(0, -0, 1, -1, 0.1, 0.30000000000000004, 1e-7, 150, -150),
      fc.double({ noNaN: true, noDefaultInfinity: true, min: -1e3, max: 1e3 }),
    );
    fc.assert(
      fc.property(fc.array(fc.tuple(values, values, values), { maxLength: 2000 }), (triples) => {
        const texts = new Set<string>();
        let want = 0;
        for (const [x, y, s] of triples) {
          const key = `${x},${y},${s}`;
          if (texts.has(key)) want++;
          texts.add(key);
        }
        // Arrays longer than the count, as a scan's growing columns are.
        const n = triples.length;
        const cols = [0, 1, 2].map((k) => {
          const a = new Float64Array(n + 7);
          triples.forEach((t, i) => {
            a[i] = t[k]!;
          });
          return a;
        }) as [Float64Array, Float64Array, Float64Array];
        expect(countRepeats(cols[0], cols[1], cols[2], n)).toBe(want);
      }),
      { seed: 17_231, numRuns: 20 },
    );
  });
});
