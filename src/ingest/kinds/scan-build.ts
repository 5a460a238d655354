/**
 * One scan of a scans file while it is read: its header fields and its defects, column by column in
 * growable typed arrays (x, y, diameter in metres in the internal frame; class codes), ready to be
 * packed into the stored BLOBs without a per-defect object. Both ways of reading a defect row (the
 * plain one through the cell plan and the fast one on the raw cells, src/ingest/kinds/scan-rows.ts)
 * append here, so a file can mix them row by row.
 */
import { shiftDecimal } from './header-fields.ts';

export interface ScanBuild {
  scanId: string;
  line: number;
  /** Column of the scan's wafer for issues (null: the metadata block). */
  waferColumn: string | null;
  waferLine: number;
  lotId: string;
  waferId: string;
  step: string | null;
  toolId: string | null;
  chamber: string | null;
  recipe: string | null;
  film: string | null;
  timeMs: number;
  timeText: string;
  thresholdM: number;
  thresholdNm: number;
  /** Defects stored so far; the arrays below hold at least this many. */
  count: number;
  x: Float64Array;
  y: Float64Array;
  d: Float64Array;
  c: Uint8Array;
  /** The defects as written (x, y, size in the file's units), for the repeated-defect flag (repeatsOf). */
  wx: Float64Array;
  wy: Float64Array;
  ws: Float64Array;
  edgeCount: number;
  noClass: number;
}

/** Defects a scan has room for before its arrays first double (a typical pre-bond scan has hundreds to tens of thousands). */
const FIRST_CAPACITY = 1024;

export function newBuild(
  scanId: string,
  line: number,
  f: Record<string, string | undefined>,
  time: { ms: number; text: string },
  thresholdNm: number,
  waferColumn: string | null,
  waferLine: number,
): ScanBuild {
  return {
    scanId,
    line,
    waferColumn,
    waferLine,
    lotId: f.lot!,
    waferId: f.wafer!,
    step: f.step ?? null,
    toolId: f.tool ?? null,
    chamber: f.chamber ?? null,
    recipe: f.recipe ?? null,
    film: f.film ?? null,
    timeMs: time.ms,
    timeText: time.text,
    thresholdNm,
    thresholdM: shiftDecimal(thresholdNm, 9),
    count: 0,
    x: new Float64Array(FIRST_CAPACITY),
    y: new Float64Array(FIRST_CAPACITY),
    d: new Float64Array(FIRST_CAPACITY),
    c: new Uint8Array(FIRST_CAPACITY),
    wx: new Float64Array(FIRST_CAPACITY),
    wy: new Float64Array(FIRST_CAPACITY),
    ws: new Float64Array(FIRST_CAPACITY),
    edgeCount: 0,
    noClass: 0,
  };
}

function grownF64(a: Float64Array, n: number): Float64Array<ArrayBuffer> {
  const out = new Float64Array(n);
  out.set(a);
  return out;
}

function grownU8(a: Uint8Array, n: number): Uint8Array<ArrayBuffer> {
  const out = new Uint8Array(n);
  out.set(a);
  return out;
}

/** Doubles the room of a full build's arrays (the callers append after it). */
export function growBuild(b: ScanBuild): void {
  const n = b.x.length * 2;
  b.x = grownF64(b.x, n);
  b.y = grownF64(b.y, n);
  b.d = grownF64(b.d, n);
  b.c = grownU8(b.c, n);
  b.wx = grownF64(b.wx, n);
  b.wy = grownF64(b.wy, n);
  b.ws = grownF64(b.ws, n);
}

/**
 * Appends one accepted defect. `xv`, `yv`, `sv` are the values as written (file units; they key the
 * repeated-defect flag), `xM`, `yM`, `dM` the stored values (internal frame, m), `edge` whether it
 * lies in the edge-exclusion annulus, `code` its class code (`noClass`: the class cell was empty).
 */
export function pushDefect(
  b: ScanBuild,
  xv: number,
  yv: number,
  sv: number,
  xM: number,
  yM: number,
  dM: number,
  edge: boolean,
  code: number,
  noClass: boolean,
): void {
  const i = b.count;
  if (i === b.x.length) growBuild(b);
  b.x[i] = xM;
  b.y[i] = yM;
  b.d[i] = dM;
  b.c[i] = code;
  b.wx[i] = xv;
  b.wy[i] = yv;
  b.ws[i] = sv;
  b.count = i + 1;
  if (noClass) b.noClass++;
  if (edge) b.edgeCount++;
}

/**
 * Defect rows of the scan that repeat an earlier defect of it (same x, y and size as written): the
 * count of the repeated-defect flag, taken once the scan is read (countRepeats).
 */
export function repeatsOf(b: ScanBuild): number {
  return countRepeats(b.wx, b.wy, b.ws, b.count);
}

/** Mixes a 32-bit word into h (MurmurHash3's 32-bit mixing constants, Appleby 2011). */
function mix(h: number, word: number): number {
  let k = Math.imul(word, 0xcc9e2d51);
  k = Math.imul((k << 15) | (k >>> 17), 0x1b873593);
  h ^= k;
  return Math.imul((h << 13) | (h >>> 19), 5) + 0xe6546b64;
}

/**
 * How many of the first n triples (xs[i], ys[i], ss[i]) equal an earlier one, by value: two defects
 * are the same when their three numbers are equal (−0 equals 0). That is exactly when their shortest
 * decimal texts are equal (String of a finite double is unique to its value, and String(−0) is "0"),
 * the key the repeated-defect flag has always used, without building a string per defect. Open
 * addressing with linear probing over the triples' indices, in a table at least twice their count;
 * each number is hashed from the two 32-bit words of its bits (read through an Int32Array view), −0
 * as +0.
 */
export function countRepeats(xs: Float64Array, ys: Float64Array, ss: Float64Array, n: number): number {
  let size = 32;
  while (size < 2 * n) size *= 2;
  const slots = new Int32Array(size).fill(-1);
  const mask = size - 1;
  const xw = new Int32Array(xs.buffer, xs.byteOffset, 2 * n);
  const yw = new Int32Array(ys.buffer, ys.byteOffset, 2 * n);
  const sw = new Int32Array(ss.buffer, ss.byteOffset, 2 * n);
  let repeated = 0;
  for (let i = 0; i < n; i++) {
    const x = xs[i]!;
    const y = ys[i]!;
    const s = ss[i]!;
    // The words of −0 are those of +0 here (x === 0 holds for both).
    let h = 0x9747b28c;
    h = x === 0 ? mix(mix(h, 0), 0) : mix(mix(h, xw[2 * i]!), xw[2 * i + 1]!);
    h = y === 0 ? mix(mix(h, 0), 0) : mix(mix(h, yw[2 * i]!), yw[2 * i + 1]!);
    h = s === 0 ? mix(mix(h, 0), 0) : mix(mix(h, sw[2 * i]!), sw[2 * i + 1]!);
    h ^= h >>> 16;
    h = Math.imul(h, 0x85ebca6b);
    h ^= h >>> 13;
    let at = h & mask;
    for (;;) {
      const k = slots[at]!;
      if (k === -1) {
        slots[at] = i;
        break;
      }
      if (xs[k] === x && ys[k] === y && ss[k] === s) {
        repeated++;
        break;
      }
      at = (at + 1) & mask;
    }
  }
  return repeated;
}
