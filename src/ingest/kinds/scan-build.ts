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
 * count of the repeated-defect flag, taken once the scan is read, over a set sized for all its defects.
 */
export function repeatsOf(b: ScanBuild): number {
  const set = new DefectKeySet(b.count);
  let repeated = 0;
  const { wx, wy, ws } = b;
  for (let i = 0; i < b.count; i++) if (set.add(wx[i]!, wy[i]!, ws[i]!)) repeated++;
  return repeated;
}

const bits = new Float64Array(1);
const words = new Uint32Array(bits.buffer);

/** Mixes the two 32-bit words of a double into h (MurmurHash3's 32-bit mixing constants, Appleby 2011). */
function mix(h: number, v: number): number {
  bits[0] = v;
  let k = Math.imul(words[0]!, 0xcc9e2d51);
  k = Math.imul((k << 15) | (k >>> 17), 0x1b873593);
  h = Math.imul(((h ^ k) << 13) | ((h ^ k) >>> 19), 5) + 0xe6546b64;
  k = Math.imul(words[1]!, 0xcc9e2d51);
  k = Math.imul((k << 15) | (k >>> 17), 0x1b873593);
  return Math.imul(((h ^ k) << 13) | ((h ^ k) >>> 19), 5) + 0xe6546b64;
}

/**
 * A set of (x, y, size) triples of numbers, by value: two defects are the same when their three
 * numbers are equal (−0 equals 0). That is exactly when their shortest decimal texts are equal
 * (String of a finite double is unique to its value, and String(−0) is "0"), the key the
 * repeated-defect flag has always used, without building a string per defect. Open addressing with
 * linear probing over the stored triples.
 */
export class DefectKeySet {
  private keys: Float64Array;
  private size = 0;
  private slots: Int32Array;

  /** `expected`: the triples it will likely hold (room for them without growing). */
  constructor(expected = FIRST_CAPACITY) {
    const n = Math.max(16, expected);
    this.keys = new Float64Array(3 * n);
    // A power of two at least twice the expected size (load factor ≤ 1/2).
    let slots = 32;
    while (slots < 2 * n) slots *= 2;
    this.slots = new Int32Array(slots).fill(-1);
  }

  /** Adds the triple; true when it was there already. */
  add(x: number, y: number, s: number): boolean {
    // +0 for −0 (the comparisons below treat them alike; the hash must too).
    const a = x + 0;
    const b = y + 0;
    const c = s + 0;
    const keys = this.keys;
    const slots = this.slots;
    const mask = slots.length - 1;
    let at = hashOf(a, b, c) & mask;
    for (;;) {
      const k = slots[at]!;
      if (k === -1) break;
      if (keys[3 * k] === a && keys[3 * k + 1] === b && keys[3 * k + 2] === c) return true;
      at = (at + 1) & mask;
    }
    const n = this.size;
    if (3 * n === keys.length) this.keys = grownF64(keys, 6 * n);
    this.keys[3 * n] = a;
    this.keys[3 * n + 1] = b;
    this.keys[3 * n + 2] = c;
    slots[at] = n;
    this.size = n + 1;
    if (2 * this.size > slots.length) this.rehash();
    return false;
  }

  /** Doubles the slot table and puts every stored triple back. */
  private rehash(): void {
    const keys = this.keys;
    const slots = new Int32Array(this.slots.length * 2).fill(-1);
    const mask = slots.length - 1;
    for (let i = 0; i < this.size; i++) {
      let at = hashOf(keys[3 * i]!, keys[3 * i + 1]!, keys[3 * i + 2]!) & mask;
      while (slots[at] !== -1) at = (at + 1) & mask;
      slots[at] = i;
    }
    this.slots = slots;
  }
}

function hashOf(a: number, b: number, c: number): number {
  let h = mix(mix(mix(0x9747b28c, a), b), c);
  h ^= h >>> 16;
  h = Math.imul(h, 0x85ebca6b);
  h ^= h >>> 13;
  return h;
}
