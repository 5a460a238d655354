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
 * The file is read in three parts: this module checks the header and the metadata block and makes the
 * plan (src/ingest/kinds/scan-columns.ts lists the columns), src/ingest/kinds/scan-rows.ts reads the
 * rows into per-scan typed arrays (src/ingest/kinds/scan-build.ts), src/ingest/kinds/scan-store.ts
 * hashes and stores each scan.
 *
 * Lots and wafers named by a scan are created when missing (src/store/lots.ts); a wafer already
 * stored under another lot is an error. A scan id already stored with the same content is skipped
 * (a note); with other content it is an error.
 */

import { numberCell, textCell } from '../cells.ts';
import type { FileContext, ImportKind, KindIssue, KindSession } from '../types.ts';
import { headerFields, shiftDecimal } from './header-fields.ts';
import { newBuild, type ScanBuild } from './scan-build.ts';
import { SCAN_COLUMNS, SCAN_LEVEL_FIELDS, SCAN_METADATA } from './scan-columns.ts';
import { scanSession } from './scan-rows.ts';
import { conventionText, frameTransform } from './wafer-frame.ts';

export { SCAN_COLUMNS, SCAN_LEVEL_FIELDS, SCAN_METADATA };

/** Decimal digits to shift a length in the column's unit to metres. */
const LENGTH_DIGITS: Record<string, number> = { mm: 3, um: 6 };
/** Decimal digits to shift a size to metres. */
const SIZE_DIGITS: Record<string, number> = { nm: 9, um: 6 };

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
    // A lower-left origin is shifted in the file's own decimal units (160000 − 150000 µm is exact), then
    // the rest of the mapping runs on centred coordinates.
    const tf = frameTransform({ ...conv, origin: 'centre' }, radiusM);
    const radiusMm = diameterMm / 2;
    const shiftX = conv.origin === 'lower-left' ? radiusMm * (xCol.unit === 'um' ? 1000 : 1) : 0;
    const shiftY = conv.origin === 'lower-left' ? radiusMm * (yCol.unit === 'um' ? 1000 : 1) : 0;
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
    }
    return scanSession({
      ctx,
      recordLayout,
      present,
      xCol,
      yCol,
      sizeCol,
      diameterMm,
      edgeMm,
      radiusM,
      edgeM,
      tf,
      shiftX,
      shiftY,
      xDig: LENGTH_DIGITS[xCol.unit]!,
      yDig: LENGTH_DIGITS[yCol.unit]!,
      sizeDig: SIZE_DIGITS[sizeCol.unit]!,
      convText: conventionText(conv),
      defaults,
      single,
    });
  },
};
