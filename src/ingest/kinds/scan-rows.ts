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
import { NUM, scanNumber, scannedValue, shiftedOf } from './scan-numbers.ts';
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

/** What a cell of a defect row holds (the fast path's plan of a row); numbers last, x, y, size in order. */
const ROLE_ANY = 0;
const ROLE_EMPTY = 1;
const ROLE_RECORD = 2;
const ROLE_ID = 3;
const ROLE_CLASS = 4;
const ROLE_X = 5;
const ROLE_Y = 6;
const ROLE_SIZE = 7;

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
  const delimiter = ctx.dialect.delimiter;
  const delim = delimiter.charCodeAt(0);
  /** What each cell of a row holds, by index, for a header of `width` cells (rolesFor). */
  let roles: Int8Array = new Int8Array(0);
  const rolesFor = (width: number): Int8Array => {
    const r = new Int8Array(width).fill(ROLE_ANY);
    for (const i of emptyIdx) r[i] = ROLE_EMPTY;
    if (recIdx !== -1) r[recIdx] = ROLE_RECORD;
    if (idIdx !== -1) r[idIdx] = ROLE_ID;
    r[xIdx] = ROLE_X;
    r[yIdx] = ROLE_Y;
    r[sIdx] = ROLE_SIZE;
    if (clsIdx !== -1) r[clsIdx] = ROLE_CLASS;
    return r;
  };

  /**
   * The fast path on the line [from, to) of a quote-free text of rows `width` cells wide: one pass over
   * its characters, each cell checked where it stands as the header says (see the module comment).
   */
  const rawText = (text: string, from: number, to: number, width: number): boolean => {
    if (roles.length !== width) {
      if (Math.max(recIdx, idIdx, xIdx, yIdx, sIdx, clsIdx, ...emptyIdx) >= width) return false;
      roles = rolesFor(width);
    }
    let build = single;
    let code = DEFECT_CLASS_CODE.unknown;
    let noClass = true;
    let p = from;
    for (let col = 0; col < width; col++) {
      const role = roles[col]!;
      if (role === ROLE_EMPTY) {
        // nothing: the delimiter (or the end) must follow at once
      } else if (role >= ROLE_X) {
        p = scanNumber(text, p, to, delim, role - ROLE_X);
        if (p === -1) return false;
      } else if (role === ROLE_RECORD) {
        // `defect`, compared where it stands (the delimiter check below ends the cell).
        if (
          p + 6 > to ||
          text.charCodeAt(p) !== 100 ||
          text.charCodeAt(p + 1) !== 101 ||
          text.charCodeAt(p + 2) !== 102 ||
          text.charCodeAt(p + 3) !== 101 ||
          text.charCodeAt(p + 4) !== 99 ||
          text.charCodeAt(p + 5) !== 116
        )
          return false;
        p += 6;
      } else if (role === ROLE_ID) {
        // Mostly the scan of the row before: its id compared where it stands.
        let k = -1;
        if (last !== null) {
          const sid = last.scanId;
          const len = sid.length;
          if (p + len <= to) {
            k = 0;
            while (k < len && text.charCodeAt(p + k) === sid.charCodeAt(k)) k++;
            if (k === len && (p + len === to || text.charCodeAt(p + len) === delim)) {
              build = last;
              p += len;
            } else k = -1;
          }
        }
        if (k === -1) {
          let end = text.indexOf(delimiter, p);
          if (end === -1 || end > to) end = to;
          const len = end - p;
          if (len === 0 || len > 200) return false;
          const id = text.slice(p, end);
          if (!plainEdges(id)) return false;
          const found = builds.get(id);
          if (found === undefined) return false;
          build = last = found;
          p = end;
        }
      } else if (role === ROLE_CLASS) {
        let end = p;
        while (end < to && text.charCodeAt(end) !== delim) end++;
        const len = end - p;
        if (len !== 0) {
          let k = 0;
          for (; k < classNames.length; k++) {
            const name = classNames[k]!;
            if (name.length !== len) continue;
            let j = 0;
            while (j < len && text.charCodeAt(p + j) === name.charCodeAt(j)) j++;
            if (j === len) break;
          }
          if (k === classNames.length) return false;
          code = classCodes[k]!;
          noClass = false;
        }
        p = end;
      } else {
        // A column the import ignores: anything up to the delimiter.
        const end = text.indexOf(delimiter, p);
        p = end === -1 || end > to ? to : end;
      }
      // The cell ends at a delimiter, the last one at the end of the line.
      if (col < width - 1) {
        if (p >= to || text.charCodeAt(p) !== delim) return false;
        p++;
      } else if (p !== to) return false;
    }
    if (build === null) return false;
    const xv = scannedValue(0);
    const xM = shiftX === 0 ? shiftedOf(0, xv, xDig) : shiftDecimal(xv - shiftX, xDig);
    const yv = scannedValue(1);
    const yM = shiftY === 0 ? shiftedOf(1, yv, yDig) : shiftDecimal(yv - shiftY, yDig);
    if (NUM[8] === 1 || NUM[6] === 0) return false; // sizes are > 0
    const sv = scannedValue(2);
    const dM = shiftedOf(2, sv, sizeDig);
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

  // The fast path on cells already cut (a text with quotes: papaparse's records): cells holding no
  // delimiter nor line break are joined by the delimiter into one line and read by rawText (its
  // cells are then these very cells); any other row is left to the plain path.
  const rawRow = (cells: readonly string[]): boolean => {
    for (let i = 0; i < cells.length; i++) {
      const t = cells[i]!;
      if (t.indexOf(delimiter) !== -1 || t.indexOf('\n') !== -1 || t.indexOf('\r') !== -1) return false;
    }
    const line = cells.join(delimiter);
    return rawText(line, 0, line.length, cells.length);
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
