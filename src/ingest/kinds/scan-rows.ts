/**
 * The rows of a scans file (src/ingest/kinds/scans.ts checks the header and builds the plan): scan
 * rows open a scan, defect rows are checked, mapped into the internal frame (m) and appended to
 * their scan (src/ingest/kinds/scan-build.ts).
 *
 * Two ways of reading a defect row give the same result:
 * - the plain one (`row`): the pipeline's cell plan has parsed every cell through its zod schema
 *   (fast path first); the row's issues are worded here;
 * - the fast one (`rawText`): the common defect row — every number written as plain decimals of at
 *   most 15 digits, the class as listed, nothing else filled — read where it stands in the text of a
 *   quote-free file (src/ingest/csv-rows.ts, RawLines hands the cell bounds), without a cell string,
 *   a parsed-row object, a string key or a text round trip per number, and appended without a call
 *   per defect. Anything else (whitespace, exponents, a problem to report) it leaves untouched for
 *   the plain one. In a text with quotes, `rawRow` lays the cells papaparse cut end to end and reads
 *   them the same way.
 *   test/unit/properties/import-scans-fast.test.ts checks on generated files that all three store the
 *   same bytes and report the same issues.
 */
import { DEFECT_CLASS_CODE, DEFECT_CLASSES, type DefectClass } from '../../store/scans.ts';
import type { FileContext, KindIssue, KindSession, ParsedRow } from '../types.ts';
import { shiftDecimal } from './header-fields.ts';
import { growBuild, newBuild, pushDefect, type ScanBuild } from './scan-build.ts';
import { SCAN_LEVEL_FIELDS } from './scan-columns.ts';
import { finishScans } from './scan-store.ts';
import type { FrameTransform } from './wafer-frame.ts';

/** Relative slack of the radius and threshold comparisons (unit-conversion rounding). */
export const REL_EPS = 1e-12;

/** What the header and metadata block of a scans file decided (src/ingest/kinds/scans.ts). */
export interface ScanPlan {
  ctx: FileContext;
  recordLayout: boolean;
  /** Spec name → column as written. */
  present: Map<string, string>;
  xCol: { name: string; unit: string };
  yCol: { name: string; unit: string };
  sizeCol: { name: string; unit: string };
  diameterMm: number;
  edgeMm: number;
  radiusM: number;
  edgeM: number;
  tf: FrameTransform;
  /** A lower-left origin's shift in the file's own units (0 for a centred origin). */
  shiftX: number;
  shiftY: number;
  /** Decimal digits from the column's unit to metres. */
  xDig: number;
  yDig: number;
  sizeDig: number;
  convText: string;
  defaults: {
    threshold: number | undefined;
    fields: Record<(typeof SCAN_LEVEL_FIELDS)[number], string | undefined>;
    time: { ms: number; text: string } | undefined;
  };
  /** The one-scan layout's scan, opened from the metadata block. */
  single: ScanBuild | null;
}

function fmt(v: number): string {
  return String(Math.round(v * 1000) / 1000);
}

/** 10^k for k = 0…22, each exact (10^22 is the largest power of ten a double holds exactly). */
const POW10: number[] = [1];
for (let k = 1; k <= 22; k++) POW10.push(POW10[k - 1]! * 10);

/** The integer of a scanned decimal's digits, its count of fraction digits, and its sign. */
let scanM = 0;
let scanP = 0;
let scanNeg = false;

/**
 * Scans a plain decimal (`[+-]digits[.digits]`, at least one digit, at most 15 in all, no exponent,
 * no space) into scanM, scanP and scanNeg; false for anything else. Such a text's value is
 * scanM / 10^scanP exactly rounded (both exact doubles: one correctly rounded division, as
 * Number() rounds), and its shortest text form has the same decimal value (15 digits round-trip
 * through a double, IEEE 754 §5.12.2), so shifting its exponent equals dividing by a larger power
 * of ten — what shiftDecimal computes through text.
 */
function scanDecimal(s: string): boolean {
  return scanDecimalAt(s, 0, s.length);
}

/** scanDecimal of `s.slice(from, to)`, read where it stands. */
function scanDecimalAt(s: string, from: number, to: number): boolean {
  const n = to;
  let i = from;
  let neg = false;
  if (n === from) return false;
  const c0 = s.charCodeAt(from);
  if (c0 === 45 || c0 === 43) {
    neg = c0 === 45;
    i = from + 1;
  }
  let m = 0;
  let digits = 0;
  let frac = -1;
  for (; i < n; i++) {
    const c = s.charCodeAt(i);
    if (c >= 48 && c <= 57) {
      m = m * 10 + (c - 48);
      digits++;
    } else if (c === 46 && frac === -1) frac = digits;
    else return false;
  }
  if (digits === 0 || digits > 15) return false;
  scanM = m;
  scanP = frac === -1 ? 0 : digits - frac;
  scanNeg = neg;
  return true;
}

/**
 * shiftDecimal(v, digits) for the value just scanned (v = its value), without the text round trip:
 * the same double (see scanDecimal), or shiftDecimal itself where its shortest form would carry an
 * exponent (|v| < 10^-6) or the power of ten would not be exact.
 */
function shiftScanned(v: number, digits: number): number {
  if (scanM === 0) return 0; // shiftDecimal(±0) is +0 ("0e-3")
  const q = scanP + digits;
  if (q > 22 || Math.abs(v) < 1e-6) return shiftDecimal(v, digits);
  return (scanNeg ? -scanM : scanM) / POW10[q]!;
}

/**
 * The fast path's reading of one number cell: its value and that value shifted by `digits` decimal
 * places, or null when the text is not a plain decimal it takes (the plain path reads it then).
 * Exported for the agreement test with Number() and shiftDecimal.
 */
export function readPlainDecimal(s: string, digits: number): { value: number; shifted: number } | null {
  if (!scanDecimal(s)) return null;
  const value = (scanNeg ? -scanM : scanM) / POW10[scanP]!;
  return { value, shifted: shiftScanned(value, digits) };
}

/** True when `text` holds `word` at `at` (compared character by character, no string made). */
function holdsAt(text: string, at: number, word: string): boolean {
  for (let i = 0; i < word.length; i++) if (text.charCodeAt(at + i) !== word.charCodeAt(i)) return false;
  return true;
}

/** True when the raw cell holds no whitespace at its ends that trim() would remove (ASCII edges). */
function plainEdges(s: string): boolean {
  const a = s.charCodeAt(0);
  const z = s.charCodeAt(s.length - 1);
  return a > 32 && a < 127 && z > 32 && z < 127;
}

export function scanSession(plan: ScanPlan): KindSession {
  const { ctx, recordLayout, present, xCol, yCol, sizeCol, radiusM, tf, shiftX, shiftY } = plan;
  const { xDig, yDig, sizeDig, defaults } = plan;
  const usableM = radiusM - plan.edgeM;
  const sizeShown = sizeCol.unit === 'um' ? 'µm' : 'nm';
  const lenShown = (u: string) => (u === 'um' ? 'µm' : 'mm');
  const out = [0, 0];
  const indexOf = new Map(ctx.header.filter((h) => h.spec).map((h) => [h.spec!.name, h.index]));
  const cellOf = (cells: readonly string[], name: string) => (cells[indexOf.get(name) ?? -1] ?? '').trim();
  const builds = new Map<string, ScanBuild>();
  const order: ScanBuild[] = [];
  const single = plan.single;
  if (single) {
    builds.set(single.scanId, single);
    order.push(single);
  }

  const addDefect = (
    b: ScanBuild,
    row: ParsedRow,
    line: number,
    cells: readonly string[],
  ): KindIssue[] | undefined => {
    const xv = row[xCol.name] as number | undefined;
    const yv = row[yCol.name] as number | undefined;
    const sv = row[sizeCol.name] as number | undefined;
    const miss: KindIssue[] = [];
    for (const [v, col] of [
      [xv, xCol.name],
      [yv, yCol.name],
      [sv, sizeCol.name],
    ] as const)
      if (v === undefined)
        miss.push({
          line,
          column: present.get(col)!,
          value: '',
          rule: 'must not be empty in a defect row',
        });
    if (miss.length) return miss;
    tf.apply(shiftDecimal(xv! - shiftX, xDig), shiftDecimal(yv! - shiftY, yDig), out);
    const r = Math.hypot(out[0]!, out[1]!);
    if (r > radiusM * (1 + REL_EPS)) {
      return [
        {
          line,
          column: present.get(xCol.name)!,
          value: cellOf(cells, xCol.name),
          rule: `the defect at (${fmt(xv!)}, ${fmt(yv!)}) ${lenShown(xCol.unit)} lies outside the wafer: ${fmt(r * 1e3)} mm from the centre, the radius is ${fmt(radiusM * 1e3)} mm (check the coordinate convention and units)`,
        },
      ];
    }
    const dM = shiftDecimal(sv!, sizeDig);
    if (dM < b.thresholdM * (1 - REL_EPS)) {
      return [
        {
          line,
          column: present.get(sizeCol.name)!,
          value: cellOf(cells, sizeCol.name),
          rule: `${fmt(sv!)} ${sizeShown} is below the scan's detection threshold of ${fmt(b.thresholdNm)} nm (a scanner reports nothing below its threshold: check the threshold or the size unit)`,
        },
      ];
    }
    const cls = row.class as DefectClass | undefined;
    pushDefect(
      b,
      xv!,
      yv!,
      sv!,
      out[0]!,
      out[1]!,
      dM,
      r > usableM,
      DEFECT_CLASS_CODE[cls ?? 'unknown'],
      cls === undefined,
    );
    return undefined;
  };

  const scanTimeIndex = ctx.header.find((h) => h.spec?.name === 'scan_time')?.index;

  const scanRow = (row: ParsedRow, line: number, cells: readonly string[]): KindIssue[] | undefined => {
    const rowIssues: KindIssue[] = [];
    for (const col of [xCol.name, yCol.name, sizeCol.name, 'class'])
      if (row[col] !== undefined)
        rowIssues.push({
          line,
          column: present.get(col)!,
          value: cellOf(cells, col),
          rule: 'a scan row carries no defect fields (put each defect in a defect row after it)',
        });
    const f: Record<string, string | undefined> = {};
    for (const k of SCAN_LEVEL_FIELDS) f[k] = (row[k] as string | undefined) ?? defaults.fields[k];
    const needs = (k: string, have: unknown) => {
      if (have === undefined)
        rowIssues.push({
          line,
          column: present.get(k) ?? null,
          value: '',
          rule: `a scan row needs ${k} (in its ${k} cell, or as "# ${k}:" in the metadata block)`,
        });
    };
    needs('scan_id', row.scan_id);
    needs('lot', f.lot);
    needs('wafer', f.wafer);
    const timeMs = row.scan_time as number | undefined;
    const time =
      timeMs !== undefined ? { ms: timeMs, text: (cells[scanTimeIndex!] ?? '').trim() } : defaults.time;
    needs('scan_time', time);
    const threshold = (row.threshold_nm as number | undefined) ?? defaults.threshold;
    needs('threshold_nm', threshold);
    if (rowIssues.length) return rowIssues;
    const id = row.scan_id as string;
    const prior = builds.get(id);
    if (prior)
      return [
        {
          line,
          column: present.get('scan_id')!,
          value: id,
          rule: `scan "${id}" is given twice (first on line ${prior.line})`,
        },
      ];
    const b = newBuild(id, line, f, time!, threshold!, present.get('wafer') ?? null, line);
    builds.set(id, b);
    order.push(b);
    return undefined;
  };

  // ——— the fast path on raw cells ———
  const recIdx = indexOf.get('record') ?? -1;
  const idIdx = indexOf.get('scan_id') ?? -1;
  const xIdx = indexOf.get(xCol.name)!;
  const yIdx = indexOf.get(yCol.name)!;
  const sIdx = indexOf.get(sizeCol.name)!;
  const clsIdx = indexOf.get('class') ?? -1;
  const taken = new Set([recIdx, idIdx, xIdx, yIdx, sIdx, clsIdx]);
  /** Columns a defect row leaves empty (the scan-level ones). */
  const emptyIdx = ctx.header.filter((h) => !taken.has(h.index)).map((h) => h.index);
  const { a, b: tb, c, d, e, f } = tf;
  // Inside this squared distance a defect is surely inside the usable area (Math.hypot is needed
  // only near the edge-exclusion line and beyond).
  const innerSq = (usableM * (1 - 1e-9)) ** 2;
  const outerLimit = radiusM * (1 + REL_EPS);

  /** The class names and codes, for matching a class cell where it stands. */
  const classNames: readonly string[] = DEFECT_CLASSES;
  const classCodes = DEFECT_CLASSES.map((c) => DEFECT_CLASS_CODE[c]);
  /** The scan of the last defect row taken (rows of one scan mostly follow each other). */
  let last: ScanBuild | null = null;

  const rawText = (text: string, starts: Int32Array, ends: Int32Array): boolean => {
    let build: ScanBuild;
    if (recordLayout) {
      const rs = starts[recIdx]!;
      if (ends[recIdx]! - rs !== 6 || !holdsAt(text, rs, 'defect')) return false;
      const is = starts[idIdx]!;
      const ie = ends[idIdx]!;
      const len = ie - is;
      if (len === 0 || len > 200) return false;
      if (last !== null && last.scanId.length === len && holdsAt(text, is, last.scanId)) build = last;
      else {
        const id = text.slice(is, ie);
        if (!plainEdges(id)) return false;
        const found = builds.get(id);
        if (found === undefined) return false;
        build = last = found;
      }
    } else build = single!;
    for (let k = 0; k < emptyIdx.length; k++) {
      const i = emptyIdx[k]!;
      if (ends[i] !== starts[i]) return false;
    }
    let code = DEFECT_CLASS_CODE.unknown;
    let noClass = true;
    if (clsIdx !== -1) {
      const cs = starts[clsIdx]!;
      const len = ends[clsIdx]! - cs;
      if (len !== 0) {
        let k = 0;
        while (k < classNames.length) {
          const name = classNames[k]!;
          if (name.length === len && holdsAt(text, cs, name)) break;
          k++;
        }
        if (k === classNames.length) return false;
        code = classCodes[k]!;
        noClass = false;
      }
    }
    if (!scanDecimalAt(text, starts[xIdx]!, ends[xIdx]!)) return false;
    const xv = (scanNeg ? -scanM : scanM) / POW10[scanP]!;
    const xM = shiftX === 0 ? shiftScanned(xv, xDig) : shiftDecimal(xv - shiftX, xDig);
    if (!scanDecimalAt(text, starts[yIdx]!, ends[yIdx]!)) return false;
    const yv = (scanNeg ? -scanM : scanM) / POW10[scanP]!;
    const yM = shiftY === 0 ? shiftScanned(yv, yDig) : shiftDecimal(yv - shiftY, yDig);
    if (!scanDecimalAt(text, starts[sIdx]!, ends[sIdx]!) || scanNeg || scanM === 0) return false; // sizes are > 0
    const sv = scanM / POW10[scanP]!;
    const dM = shiftScanned(sv, sizeDig);
    const ox = a * xM + tb * yM + c;
    const oy = d * xM + e * yM + f;
    let edge = false;
    if (ox * ox + oy * oy >= innerSq) {
      const r = Math.hypot(ox, oy);
      if (r > outerLimit) return false;
      edge = r > usableM;
    }
    if (dM < build.thresholdM * (1 - REL_EPS)) return false;
    // pushDefect written out: a call with these numbers as arguments would box each of them.
    const i = build.count;
    if (i === build.x.length) growBuild(build);
    build.x[i] = ox;
    build.y[i] = oy;
    build.d[i] = dM;
    build.c[i] = code;
    build.wx[i] = xv;
    build.wy[i] = yv;
    build.ws[i] = sv;
    build.count = i + 1;
    if (noClass) build.noClass++;
    if (edge) build.edgeCount++;
    return true;
  };

  // The fast path on cells already cut (a text with quotes: papaparse's records): the cells laid end
  // to end in one text, read by rawText.
  let cellStarts = new Int32Array(0);
  let cellEnds = new Int32Array(0);
  const rawRow = (cells: readonly string[]): boolean => {
    if (cellStarts.length < cells.length) {
      cellStarts = new Int32Array(cells.length);
      cellEnds = new Int32Array(cells.length);
    }
    let p = 0;
    for (let i = 0; i < cells.length; i++) {
      cellStarts[i] = p;
      p += cells[i]!.length;
      cellEnds[i] = p;
    }
    return rawText(cells.join(''), cellStarts, cellEnds);
  };

  return {
    row(row, line, cells) {
      if (!recordLayout) return addDefect(single!, row, line, cells) ?? 'stored';
      const rec = row.record as 'scan' | 'defect' | undefined;
      if (rec === undefined)
        return [{ line, column: present.get('record')!, value: '', rule: 'must be scan or defect' }];
      if (rec === 'scan') return scanRow(row, line, cells) ?? 'stored';
      const id = row.scan_id as string | undefined;
      if (id === undefined)
        return [
          {
            line,
            column: present.get('scan_id')!,
            value: '',
            rule: 'a defect row needs the scan_id of its scan',
          },
        ];
      const b = builds.get(id);
      if (!b)
        return [
          {
            line,
            column: present.get('scan_id')!,
            value: id,
            rule: `scan "${id}" has no scan row above this line (each scan row comes before its defects)`,
          },
        ];
      const extra = [...SCAN_LEVEL_FIELDS.filter((k) => k !== 'scan_id'), 'scan_time', 'threshold_nm'].find(
        (k) => row[k] !== undefined,
      );
      if (extra)
        return [
          {
            line,
            column: present.get(extra)!,
            value: cellOf(cells, extra),
            rule: `a defect row carries no scan fields (${extra} belongs in the scan row of "${id}")`,
          },
        ];
      return addDefect(b, row, line, cells) ?? 'stored';
    },
    rawRow,
    rawText,
    finish: () => finishScans(plan, order),
  };
}
