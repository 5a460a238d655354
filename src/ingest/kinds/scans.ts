/**
 * Import kind `scans`: surface-inspection (laser-scattering) scans with their defect lists.
 *
 * Two layouts of one format (docs/formats.md "Surface scans"):
 *
 * - one scan per file: the scan's header in the metadata block (`# lot:`, `# wafer:`, `# scan_time:` …)
 *   and a table of its defects (`x_mm, y_mm, size_nm, class`);
 * - many scans per file (the record layout): a `record` column; a `scan` row carries one scan's
 *   header fields (scan_id, lot, wafer, step, tool, recipe, scan_time …) and the `defect` rows after
 *   it carry that scan's defects, keyed by scan_id. Fields a scan row leaves empty come from the
 *   metadata block, so the fields common to a batch (tool, recipe, threshold) are written once.
 *
 * The wafer's geometry and the coordinate convention are file-level metadata: wafer_diameter_mm,
 * edge_exclusion_mm, coordinates (origin, x and y directions, view side) and notch_deg. Positions are
 * mapped into the internal frame (origin at the centre, x right, y up, notch down, seen from the
 * front; metres — src/ingest/kinds/wafer-frame.ts), sizes into metres.
 *
 * Rules (each rejects the row, naming line, column and value):
 * - a defect outside the wafer (distance from the centre > radius) — a coordinate-convention or unit error;
 * - a defect smaller than the scan's detection threshold — a scanner reports nothing below its
 *   threshold, so such a row means a wrong threshold or size unit (thresholds are typically 26–65 nm
 *   LSE for pre-bond scans; common practice);
 * - an unknown or incomplete coordinate convention (nothing is guessed).
 * The comparisons allow a relative 1e-12 for the rounding of unit conversion (a size written as
 * 0.045 µm equals a 45 nm threshold).
 *
 * Flags (stored, not rejected): defects inside the edge-exclusion annulus (the scanner should not
 * report there), defects with no class (stored as `unknown`), identical defect rows within a scan.
 *
 * Lots and wafers named by a scan are created when missing (src/store/lots.ts); a wafer already
 * stored under another lot is an error. A scan id already stored with the same content is skipped
 * (a note); with other content it is an error.
 */
import { createHash } from 'node:crypto';
import { lotWriter } from '../../store/lots.ts';
import {
  DEFECT_CLASS_CODE,
  DEFECT_CLASSES,
  type DefectClass,
  packFloat64,
  packUint8,
  scanContentOf,
  scanInserter,
} from '../../store/scans.ts';
import { enumCell, numberCell, textCell, timeCell } from '../cells.ts';
import type {
  ColumnSpec,
  FileContext,
  ImportFlag,
  ImportKind,
  KindIssue,
  KindSession,
  MetadataSpec,
  ParsedRow,
} from '../types.ts';
import { headerFields, shiftDecimal } from './header-fields.ts';
import { conventionText, frameTransform } from './wafer-frame.ts';

/** Relative slack of the radius and threshold comparisons (unit-conversion rounding). */
const REL_EPS = 1e-12;

/** Decimal digits to shift a length in the column's unit to metres. */
const LENGTH_DIGITS: Record<string, number> = { mm: 3, um: 6 };
/** Decimal digits to shift a size to metres. */
const SIZE_DIGITS: Record<string, number> = { nm: 9, um: 6 };

const text = () => textCell();
const signedMm = (unit: string) => () => numberCell({ unit });
const positive = (unit: string) => () => numberCell({ min: 0, minExclusive: true, unit });

export const SCAN_LEVEL_FIELDS = [
  'scan_id',
  'lot',
  'wafer',
  'step',
  'tool',
  'chamber',
  'recipe',
  'film',
] as const;

export const SCAN_COLUMNS: readonly ColumnSpec[] = [
  {
    name: 'record',
    required: false,
    unit: null,
    description:
      'record layout only: `scan` (a scan header row) or `defect` (one defect of the scan named by scan_id)',
    cell: () => enumCell(['scan', 'defect'] as const),
  },
  {
    name: 'scan_id',
    required: false,
    unit: null,
    description: 'record layout: the scan a row belongs to',
    cell: text,
  },
  { name: 'lot', required: false, unit: null, description: 'scan rows: lot id', cell: text },
  { name: 'wafer', required: false, unit: null, description: 'scan rows: wafer id', cell: text },
  {
    name: 'step',
    required: false,
    unit: null,
    description: 'scan rows: route step the scan follows',
    cell: text,
  },
  { name: 'tool', required: false, unit: null, description: 'scan rows: inspection tool id', cell: text },
  {
    name: 'chamber',
    required: false,
    unit: null,
    description: 'scan rows: inspection tool chamber or stage',
    cell: text,
  },
  { name: 'recipe', required: false, unit: null, description: 'scan rows: inspection recipe', cell: text },
  { name: 'film', required: false, unit: null, description: 'scan rows: top film of the wafer', cell: text },
  {
    name: 'scan_time',
    required: false,
    unit: null,
    description: 'scan rows: time of the scan, ISO 8601 with offset',
    cell: (c) => timeCell(c.zone),
  },
  {
    name: 'threshold_nm',
    required: false,
    unit: 'nm',
    description: 'scan rows: detection threshold, LSE diameter',
    cell: positive('nm'),
  },
  {
    name: 'x_mm',
    required: false,
    unit: 'mm',
    group: 'x',
    description: 'defect x in the file’s convention (x_um: in µm)',
    cell: signedMm('mm'),
  },
  {
    name: 'x_um',
    required: false,
    unit: 'µm',
    group: 'x',
    description: 'defect x in µm',
    cell: signedMm('µm'),
  },
  {
    name: 'y_mm',
    required: false,
    unit: 'mm',
    group: 'y',
    description: 'defect y in the file’s convention (y_um: in µm)',
    cell: signedMm('mm'),
  },
  {
    name: 'y_um',
    required: false,
    unit: 'µm',
    group: 'y',
    description: 'defect y in µm',
    cell: signedMm('µm'),
  },
  {
    name: 'size_nm',
    required: false,
    unit: 'nm',
    group: 'size',
    description: 'defect size, LSE diameter (size_um: in µm)',
    cell: positive('nm'),
  },
  {
    name: 'size_um',
    required: false,
    unit: 'µm',
    group: 'size',
    description: 'defect size in µm',
    cell: positive('µm'),
  },
  {
    name: 'class',
    required: false,
    unit: null,
    description: `defect class: ${DEFECT_CLASSES.join(', ')} (empty: unknown, flagged)`,
    cell: () => enumCell(DEFECT_CLASSES),
  },
];

export const SCAN_METADATA: readonly MetadataSpec[] = [
  {
    key: 'scan_id',
    description: 'one-scan layout: the scan id (default: wafer@scan_time)',
    example: 'SC-2403-0117',
  },
  {
    key: 'lot',
    description: 'one-scan layout: lot id (record layout: a default for scan rows)',
    example: 'L2403',
  },
  { key: 'wafer', description: 'one-scan layout: wafer id', example: 'L2403-07' },
  { key: 'step', description: 'route step the scan follows', example: 'post-CMP inspection' },
  { key: 'tool', description: 'inspection tool id', example: 'SSI-1' },
  { key: 'chamber', description: 'inspection tool chamber or stage', example: 'stage-A' },
  { key: 'recipe', description: 'inspection recipe', example: 'OX45-HS' },
  { key: 'film', description: 'top film of the wafer', example: 'SiCN' },
  {
    key: 'scan_time',
    description: 'one-scan layout: time of the scan, ISO 8601 with offset',
    example: '2026-03-02T08:15:00+01:00',
  },
  { key: 'threshold_nm', description: 'detection threshold, LSE diameter in nm', example: '45' },
  { key: 'wafer_diameter_mm', description: 'wafer diameter in mm', example: '300' },
  { key: 'edge_exclusion_mm', description: 'edge exclusion of the scan in mm', example: '3' },
  {
    key: 'coordinates',
    description: 'coordinate convention: origin=centre|lower-left x=right|left y=up|down view=front|back',
    example: 'origin=centre x=right y=up view=front',
  },
  {
    key: 'notch_deg',
    description: 'notch angle in the file’s axes, degrees counter-clockwise from +x',
    example: '270',
  },
];

interface ScanBuild {
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
  x: number[];
  y: number[];
  d: number[];
  c: number[];
  edgeCount: number;
  noClass: number;
  seen: Set<string>;
  repeated: number;
}

function fmt(v: number): string {
  return String(Math.round(v * 1000) / 1000);
}

export const scans: ImportKind = {
  name: 'scans',
  summary: 'surface scans: header (lot, wafer, step, tool, recipe, time, threshold, convention) and defects',
  columns: SCAN_COLUMNS,
  metadata: SCAN_METADATA,
  allowNoRows: true,
  begin(ctx: FileContext): KindSession | KindIssue[] {
    const hf = headerFields(ctx, SCAN_METADATA);
    const present = new Map(ctx.header.filter((h) => h.spec).map((h) => [h.spec!.name, h.written]));
    const issues: KindIssue[] = [];
    const headerIssue = (column: string | null, rule: string): KindIssue => ({
      line: ctx.headerLine,
      column,
      value: column,
      rule,
    });
    // Unit groups: exactly one column of each.
    const pick = (
      group: string,
      names: [string, string],
      required: boolean,
    ): { name: string; unit: string } | null => {
      const have = names.filter((n) => present.has(n));
      if (have.length === 2)
        issues.push(
          headerIssue(present.get(names[1])!, `give ${group} once: ${names[0]} or ${names[1]}, not both`),
        );
      else if (have.length === 0 && required)
        issues.push({
          line: ctx.headerLine,
          column: null,
          value: null,
          rule: `missing column ${names[0]} (or ${names[1]}): the defect ${group}`,
        });
      return have.length === 1
        ? { name: have[0]!, unit: have[0]!.slice(have[0]!.lastIndexOf('_') + 1) }
        : null;
    };
    const recordLayout = present.has('record');
    const xCol = pick('x', ['x_mm', 'x_um'], true);
    const yCol = pick('y', ['y_mm', 'y_um'], true);
    const sizeCol = pick('size', ['size_nm', 'size_um'], true);
    const scanColumns = [...SCAN_LEVEL_FIELDS, 'scan_time', 'threshold_nm'];
    if (!recordLayout) {
      for (const c of scanColumns)
        if (present.has(c))
          issues.push(
            headerIssue(
              present.get(c)!,
              `column "${c}" belongs to the record layout: add a record column (scan / defect), or give ${c} in the metadata block (# ${c}: …)`,
            ),
          );
    } else if (!present.has('scan_id')) {
      issues.push({
        line: ctx.headerLine,
        column: null,
        value: null,
        rule: 'the record layout needs a scan_id column',
      });
    }
    // File-level geometry and convention.
    const diameterMm = hf.get('wafer_diameter_mm', numberCell({ min: 25, max: 450, unit: 'mm' }), true);
    const edgeMm = hf.get('edge_exclusion_mm', numberCell({ min: 0, unit: 'mm' }), true);
    const conv = hf.convention(true);
    if (diameterMm !== undefined && edgeMm !== undefined && edgeMm >= diameterMm / 2)
      hf.issues.push(
        hf.issue(
          'edge_exclusion_mm',
          `edge_exclusion_mm must be less than the wafer radius (${diameterMm / 2} mm)`,
        ),
      );
    const defaults = {
      threshold: hf.get(
        'threshold_nm',
        numberCell({ min: 0, minExclusive: true, unit: 'nm' }),
        !recordLayout,
      ),
      fields: Object.fromEntries(SCAN_LEVEL_FIELDS.map((f) => [f, hf.get(f, textCell(), false)])) as Record<
        (typeof SCAN_LEVEL_FIELDS)[number],
        string | undefined
      >,
      time: hf.time('scan_time', !recordLayout),
    };
    if (!recordLayout) {
      if (defaults.fields.lot === undefined && hf.raw('lot') === undefined) hf.get('lot', textCell(), true);
      if (defaults.fields.wafer === undefined && hf.raw('wafer') === undefined)
        hf.get('wafer', textCell(), true);
    }
    issues.push(...hf.issues);
    if (
      issues.length > 0 ||
      diameterMm === undefined ||
      edgeMm === undefined ||
      !conv ||
      !xCol ||
      !yCol ||
      !sizeCol
    )
      return issues.sort((a, b) => a.line - b.line);

    const radiusM = shiftDecimal(diameterMm, 3) / 2;
    const edgeM = shiftDecimal(edgeMm, 3);
    const usableM = radiusM - edgeM;
    // A lower-left origin is shifted in the file's own decimal units (160000 − 150000 µm is exact), then
    // the rest of the mapping runs on centred coordinates.
    const tf = frameTransform({ ...conv, origin: 'centre' }, radiusM);
    const radiusMm = diameterMm / 2;
    const shiftX = conv.origin === 'lower-left' ? radiusMm * (xCol.unit === 'um' ? 1000 : 1) : 0;
    const shiftY = conv.origin === 'lower-left' ? radiusMm * (yCol.unit === 'um' ? 1000 : 1) : 0;
    const xDig = LENGTH_DIGITS[xCol.unit]!;
    const yDig = LENGTH_DIGITS[yCol.unit]!;
    const sizeDig = SIZE_DIGITS[sizeCol.unit]!;
    const sizeShown = sizeCol.unit === 'um' ? 'µm' : 'nm';
    const lenShown = (u: string) => (u === 'um' ? 'µm' : 'mm');
    const convText = conventionText(conv);
    const out = [0, 0];
    const indexOf = new Map(ctx.header.filter((h) => h.spec).map((h) => [h.spec!.name, h.index]));
    const cellOf = (cells: readonly string[], name: string) => (cells[indexOf.get(name) ?? -1] ?? '').trim();
    const builds = new Map<string, ScanBuild>();
    const order: ScanBuild[] = [];

    const newBuild = (
      scanId: string,
      line: number,
      f: Record<string, string | undefined>,
      time: { ms: number; text: string },
      thresholdNm: number,
      waferColumn: string | null,
      waferLine: number,
    ): ScanBuild => ({
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
      x: [],
      y: [],
      d: [],
      c: [],
      edgeCount: 0,
      noClass: 0,
      seen: new Set(),
      repeated: 0,
    });

    let single: ScanBuild | null = null;
    if (!recordLayout) {
      const f = defaults.fields;
      const time = defaults.time!;
      single = newBuild(
        f.scan_id ?? `${f.wafer}@${time.text}`,
        hf.line('wafer'),
        f,
        time,
        defaults.threshold!,
        null,
        hf.line('wafer'),
      );
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
      if (cls === undefined) b.noClass++;
      const key = `${xv},${yv},${sv}`;
      if (b.seen.has(key)) b.repeated++;
      else b.seen.add(key);
      if (r > usableM) b.edgeCount++;
      b.x.push(out[0]!);
      b.y.push(out[1]!);
      b.d.push(dM);
      b.c.push(DEFECT_CLASS_CODE[cls ?? 'unknown']);
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
      finish() {
        const fin: KindIssue[] = [];
        const notes: string[] = [];
        const lots = lotWriter(ctx.db, ctx.importId);
        const insert = scanInserter(ctx.db);
        let edge = 0;
        let noClass = 0;
        let repeated = 0;
        let stored = 0;
        for (const b of order) {
          const n = b.x.length;
          const defects = {
            count: n,
            xM: Float64Array.from(b.x),
            yM: Float64Array.from(b.y),
            diameterM: Float64Array.from(b.d),
            classCode: Uint8Array.from(b.c),
          };
          const h = createHash('sha256');
          h.update(
            JSON.stringify([
              b.scanId,
              b.waferId,
              b.lotId,
              b.step,
              b.toolId,
              b.chamber,
              b.recipe,
              b.film,
              b.timeMs,
              diameterMm,
              edgeMm,
              b.thresholdM,
              convText,
            ]),
          );
          h.update(packFloat64(defects.xM));
          h.update(packFloat64(defects.yM));
          h.update(packFloat64(defects.diameterM));
          h.update(packUint8(defects.classCode));
          const sha = h.digest('hex');
          const old = scanContentOf(ctx.db, b.scanId);
          if (old) {
            if (old.contentSha256 === sha) {
              notes.push(
                `scan "${b.scanId}" is stored already with the same content (import #${old.importId}); skipped`,
              );
              continue;
            }
            fin.push({
              line: b.line,
              column: recordLayout ? (present.get('scan_id') ?? null) : null,
              value: b.scanId,
              rule: `scan "${b.scanId}" is stored already (import #${old.importId}) with other content; give the new scan its own scan_id`,
            });
            continue;
          }
          const clash = lots.ensureWafer(b.waferId, b.lotId);
          if (clash) {
            fin.push({
              line: b.waferLine,
              column: b.waferColumn,
              value: recordLayout ? b.waferId : `# wafer: ${b.waferId}`,
              rule: `wafer "${b.waferId}" belongs to lot "${clash.otherLot}", not "${b.lotId}"`,
            });
            continue;
          }
          insert({
            scanId: b.scanId,
            waferId: b.waferId,
            step: b.step,
            toolId: b.toolId,
            chamber: b.chamber,
            recipe: b.recipe,
            film: b.film,
            timeMs: b.timeMs,
            timeText: b.timeText,
            waferDiameterM: shiftDecimal(diameterMm, 3),
            edgeExclusionM: edgeM,
            thresholdM: b.thresholdM,
            convention: convText,
            defects,
            contentSha256: sha,
            importId: ctx.importId,
            line: b.line,
          });
          stored++;
          edge += b.edgeCount;
          noClass += b.noClass;
          repeated += b.repeated;
        }
        const flags: ImportFlag[] = [];
        if (edge > 0)
          flags.push({
            code: 'in-edge-exclusion',
            count: edge,
            detail: `${edge} defects lie inside the ${edgeMm} mm edge exclusion (stored; a scanner should not report there)`,
          });
        if (noClass > 0)
          flags.push({
            code: 'class-missing',
            count: noClass,
            detail: `${noClass} defects have no class (stored as unknown)`,
          });
        if (repeated > 0)
          flags.push({
            code: 'repeated-defect',
            count: repeated,
            detail: `${repeated} defect rows repeat another defect of the same scan (same x, y and size; all stored)`,
          });
        if (lots.created.lots + lots.created.wafers > 0)
          notes.push(`created ${lots.created.lots} lots and ${lots.created.wafers} wafers`);
        notes.push(`${stored} scans stored`);
        return { issues: fin, flags, notes };
      },
    };
  },
};
