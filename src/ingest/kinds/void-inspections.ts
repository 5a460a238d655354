/**
 * Import kind `void-inspections`: one post-bond void inspection per file — its header in the
 * metadata block (pair, method, stage, smallest reported void, position error, time, coordinate
 * convention) and a table of its voids (x, y, equivalent diameter, class).
 *
 * Voids are seen through the bonded stack; positions are given in the stated convention of the
 * bottom wafer (view=front: looking down through the top wafer onto the bottom wafer's device side;
 * notch_deg: the bottom wafer's notch in the file's axes) and stored in the bond frame (the bottom
 * wafer's internal frame: origin at the centre, x right, y up, notch down; metres). The wafer size is
 * the pair's product's.
 *
 * Rules: the pair and its product must be stored; a void outside the wafer, a diameter that is not
 * > 0, or a void smaller than the inspection's smallest reported diameter (relative slack 1e-12 for
 * unit rounding) rejects the row. An inspection id stored already with the same content is skipped
 * (a note), with other content refused.
 */
import { createHash } from 'node:crypto';
import { readPair } from '../../store/pairs.ts';
import { readProduct } from '../../store/products.ts';
import { packFloat64, packUint8 } from '../../store/scans.ts';
import {
  insertVoidInspection,
  VOID_CLASS_CODE,
  VOID_CLASSES,
  type VoidClass,
  voidInspectionContentOf,
} from '../../store/voids.ts';
import { enumCell, numberCell, textCell } from '../cells.ts';
import type { ColumnSpec, ImportFlag, ImportKind, KindIssue, KindSession, MetadataSpec } from '../types.ts';
import { headerFields, shiftDecimal } from './header-fields.ts';
import { conventionText, frameTransform } from './wafer-frame.ts';

const REL_EPS = 1e-12;
/** Decimal digits to shift a length in the column's unit to metres. */
const LENGTH_DIGITS: Record<string, number> = { mm: 3, um: 6 };

export const VOID_COLUMNS: readonly ColumnSpec[] = [
  {
    name: 'x_mm',
    required: false,
    unit: 'mm',
    group: 'x',
    description: 'void centre x (x_um: in µm)',
    cell: () => numberCell({ unit: 'mm' }),
  },
  {
    name: 'x_um',
    required: false,
    unit: 'µm',
    group: 'x',
    description: 'void centre x in µm',
    cell: () => numberCell({ unit: 'µm' }),
  },
  {
    name: 'y_mm',
    required: false,
    unit: 'mm',
    group: 'y',
    description: 'void centre y (y_um: in µm)',
    cell: () => numberCell({ unit: 'mm' }),
  },
  {
    name: 'y_um',
    required: false,
    unit: 'µm',
    group: 'y',
    description: 'void centre y in µm',
    cell: () => numberCell({ unit: 'µm' }),
  },
  {
    name: 'diameter_mm',
    required: false,
    unit: 'mm',
    group: 'diameter',
    description: 'equivalent diameter of the void (diameter_um: in µm)',
    cell: () => numberCell({ min: 0, minExclusive: true, unit: 'mm' }),
  },
  {
    name: 'diameter_um',
    required: false,
    unit: 'µm',
    group: 'diameter',
    description: 'equivalent diameter in µm',
    cell: () => numberCell({ min: 0, minExclusive: true, unit: 'µm' }),
  },
  {
    name: 'class',
    required: false,
    unit: null,
    description: `void class: ${VOID_CLASSES.join(', ')} (empty: unknown, flagged)`,
    cell: () => enumCell(VOID_CLASSES),
  },
];

export const VOID_METADATA: readonly MetadataSpec[] = [
  {
    key: 'inspection_id',
    description: 'inspection id (default: pair@inspection_time)',
    example: 'IR-P2403-04-A',
  },
  { key: 'pair', description: 'the bonded pair inspected (must be stored)', example: 'P2403-04' },
  { key: 'method', description: 'infrared or acoustic', example: 'infrared' },
  { key: 'stage', description: 'after-contact or after-anneal', example: 'after-anneal' },
  { key: 'tool', description: 'inspection tool id', example: 'IRI-1' },
  {
    key: 'smallest_void_mm',
    description: 'smallest void diameter the inspection reports, mm',
    example: '0.3',
  },
  {
    key: 'position_sigma_mm',
    description:
      'position error of the inspection, one standard deviation per axis, mm (optional; calibration assumes 0.2 mm when absent)',
    example: '0.15',
  },
  {
    key: 'inspection_time',
    description: 'time of the inspection, ISO 8601 with offset',
    example: '2026-03-04T14:05:00+01:00',
  },
  {
    key: 'coordinates',
    description:
      'coordinate convention of the bottom wafer: origin, x, y, view (front = seen from the top of the stack)',
    example: 'origin=centre x=right y=up view=front',
  },
  {
    key: 'notch_deg',
    description: 'the bottom wafer’s notch angle in the file’s axes, degrees',
    example: '270',
  },
];

const fmt = (v: number) => String(Math.round(v * 1000) / 1000);

export const voidInspections: ImportKind = {
  name: 'void-inspections',
  summary: 'a post-bond void inspection: pair, method, stage, smallest void, time, and its voids',
  columns: VOID_COLUMNS,
  metadata: VOID_METADATA,
  allowNoRows: true,
  begin(ctx): KindSession | KindIssue[] {
    const hf = headerFields(ctx, VOID_METADATA);
    const present = new Map(ctx.header.filter((h) => h.spec).map((h) => [h.spec!.name, h.written]));
    const issues: KindIssue[] = [];
    const pick = (group: string, names: [string, string]) => {
      const have = names.filter((n) => present.has(n));
      if (have.length === 2)
        issues.push({
          line: ctx.headerLine,
          column: present.get(names[1])!,
          value: present.get(names[1])!,
          rule: `give ${group} once: ${names[0]} or ${names[1]}, not both`,
        });
      else if (have.length === 0)
        issues.push({
          line: ctx.headerLine,
          column: null,
          value: null,
          rule: `missing column ${names[0]} (or ${names[1]}): the void ${group}`,
        });
      return have.length === 1
        ? { name: have[0]!, unit: have[0]!.slice(have[0]!.lastIndexOf('_') + 1) }
        : null;
    };
    const xCol = pick('x', ['x_mm', 'x_um']);
    const yCol = pick('y', ['y_mm', 'y_um']);
    const dCol = pick('diameter', ['diameter_mm', 'diameter_um']);
    const pairId = hf.get('pair', textCell(), true);
    const method = hf.get('method', enumCell(['infrared', 'acoustic'] as const), true);
    const stage = hf.get('stage', enumCell(['after-contact', 'after-anneal'] as const), true);
    const toolId = hf.get('tool', textCell(), false) ?? null;
    const smallestMm = hf.get(
      'smallest_void_mm',
      numberCell({ min: 0, minExclusive: true, unit: 'mm' }),
      true,
    );
    const positionSigmaMm =
      hf.get('position_sigma_mm', numberCell({ min: 0, minExclusive: true, max: 10, unit: 'mm' }), false) ??
      null;
    const time = hf.time('inspection_time', true);
    const conv = hf.convention(true);
    const inspectionId = hf.get('inspection_id', textCell(), false);
    let radiusM: number | null = null;
    if (pairId !== undefined) {
      const pair = readPair(ctx.db, pairId);
      if (!pair)
        hf.issues.push(hf.issue('pair', `pair "${pairId}" is not stored (import its pairs file first)`));
      else radiusM = (readProduct(ctx.db, pair.productId)?.waferDiameterM ?? 0) / 2 || null;
    }
    issues.push(...hf.issues);
    if (
      issues.length ||
      !xCol ||
      !yCol ||
      !dCol ||
      radiusM === null ||
      !conv ||
      !time ||
      smallestMm === undefined ||
      !method ||
      !stage ||
      pairId === undefined
    )
      return issues.sort((a, b) => a.line - b.line);

    // A lower-left origin is shifted in the file's own decimal units (160000 − 150000 µm is exact), then
    // the rest of the mapping runs on centred coordinates.
    const tf = frameTransform({ ...conv, origin: 'centre' }, radiusM);
    const radiusMm = radiusM * 1e3;
    const shiftX = conv.origin === 'lower-left' ? radiusMm * (xCol.unit === 'um' ? 1000 : 1) : 0;
    const shiftY = conv.origin === 'lower-left' ? radiusMm * (yCol.unit === 'um' ? 1000 : 1) : 0;
    const xDig = LENGTH_DIGITS[xCol.unit]!;
    const yDig = LENGTH_DIGITS[yCol.unit]!;
    const dDig = LENGTH_DIGITS[dCol.unit]!;
    const smallestM = shiftDecimal(smallestMm, 3);
    const positionSigmaM = positionSigmaMm === null ? null : shiftDecimal(positionSigmaMm, 3);
    const xs: number[] = [];
    const ys: number[] = [];
    const ds: number[] = [];
    const cs: number[] = [];
    let noClass = 0;
    const out = [0, 0];
    const indexOf = new Map(ctx.header.filter((h) => h.spec).map((h) => [h.spec!.name, h.index]));
    const cellOf = (cells: readonly string[], name: string) => (cells[indexOf.get(name) ?? -1] ?? '').trim();
    const shown = (u: string) => (u === 'um' ? 'µm' : 'mm');
    return {
      row(row, line, cells) {
        const xv = row[xCol.name] as number | undefined;
        const yv = row[yCol.name] as number | undefined;
        const dv = row[dCol.name] as number | undefined;
        const miss: KindIssue[] = [];
        for (const [v, c] of [
          [xv, xCol.name],
          [yv, yCol.name],
          [dv, dCol.name],
        ] as const)
          if (v === undefined)
            miss.push({ line, column: present.get(c)!, value: '', rule: 'must not be empty' });
        if (miss.length) return miss;
        tf.apply(shiftDecimal(xv! - shiftX, xDig), shiftDecimal(yv! - shiftY, yDig), out);
        const r = Math.hypot(out[0]!, out[1]!);
        if (r > radiusM * (1 + REL_EPS))
          return [
            {
              line,
              column: present.get(xCol.name)!,
              value: cellOf(cells, xCol.name),
              rule: `the void at (${fmt(xv!)}, ${fmt(yv!)}) ${shown(xCol.unit)} lies outside the wafer: ${fmt(r * 1e3)} mm from the centre, the radius is ${fmt(radiusM * 1e3)} mm (check the coordinate convention and units)`,
            },
          ];
        const dM = shiftDecimal(dv!, dDig);
        if (dM < smallestM * (1 - REL_EPS))
          return [
            {
              line,
              column: present.get(dCol.name)!,
              value: cellOf(cells, dCol.name),
              rule: `${fmt(dv!)} ${shown(dCol.unit)} is below the inspection's smallest reported void of ${fmt(smallestMm)} mm (check smallest_void_mm or the diameter unit)`,
            },
          ];
        const cls = row.class as VoidClass | undefined;
        if (cls === undefined) noClass++;
        xs.push(out[0]!);
        ys.push(out[1]!);
        ds.push(dM);
        cs.push(VOID_CLASS_CODE[cls ?? 'unknown']);
        return 'stored';
      },
      finish() {
        const id = inspectionId ?? `${pairId}@${time.text}`;
        const voids = {
          count: xs.length,
          xM: Float64Array.from(xs),
          yM: Float64Array.from(ys),
          diameterM: Float64Array.from(ds),
          classCode: Uint8Array.from(cs),
        };
        const convText = conventionText(conv);
        const h = createHash('sha256');
        // The position error enters only when stated, so an inspection stored before the field
        // existed keeps its content hash.
        h.update(
          JSON.stringify([
            id,
            pairId,
            method,
            stage,
            toolId,
            smallestM,
            time.ms,
            convText,
            ...(positionSigmaM === null ? [] : [positionSigmaM]),
          ]),
        );
        h.update(packFloat64(voids.xM));
        h.update(packFloat64(voids.yM));
        h.update(packFloat64(voids.diameterM));
        h.update(packUint8(voids.classCode));
        const sha = h.digest('hex');
        const old = voidInspectionContentOf(ctx.db, id);
        if (old) {
          if (old.contentSha256 === sha)
            return {
              notes: [
                `inspection "${id}" is stored already with the same content (import #${old.importId}); skipped`,
              ],
            };
          return {
            issues: [
              {
                line: hf.line(inspectionId !== undefined ? 'inspection_id' : 'pair'),
                column: null,
                value: id,
                rule: `inspection "${id}" is stored already (import #${old.importId}) with other content; give the new inspection its own inspection_id`,
              },
            ],
          };
        }
        insertVoidInspection(ctx.db, {
          inspectionId: id,
          pairId,
          method,
          stage,
          toolId,
          smallestVoidM: smallestM,
          positionSigmaM,
          timeMs: time.ms,
          timeText: time.text,
          convention: convText,
          voids,
          contentSha256: sha,
          importId: ctx.importId,
          line: hf.line('pair'),
        });
        const flags: ImportFlag[] = [];
        if (noClass > 0)
          flags.push({
            code: 'class-missing',
            count: noClass,
            detail: `${noClass} voids have no class (stored as unknown)`,
          });
        return { flags, notes: [`inspection "${id}" stored with ${voids.count} voids`] };
      },
    };
  },
};
