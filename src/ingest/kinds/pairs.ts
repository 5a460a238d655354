/**
 * Import kind `pairs`: which wafers are bonded together and how.
 *
 * A row names the pair, its product, the top and bottom wafer, how the top wafer is turned onto the
 * bottom one (flip axis x or y, then a counter-clockwise rotation in degrees and an offset in mm, in
 * the bond frame = the bottom wafer's frame — src/engine/geometry.ts), the bonder and the planned
 * bond time.
 *
 * Rules: both wafers must be stored (from scans or the ledger) and differ; a wafer is in one pair
 * only; the product must be stored; the flip axis is x or y (no other axis turns a wafer face-down
 * in the bond frame); a pair stored already with the same values is a duplicate, with other values
 * an error. The pair's lot is the bottom wafer's lot unless the `lot` column names another stored
 * lot; the lot's product is set from its first pair, and a pair naming another product for a lot
 * that has one is refused.
 */
import { enumCell, numberCell, textCell, timeCell } from '../cells.ts';
import type { ColumnSpec, ImportKind, KindIssue, KindSession } from '../types.ts';
import { shiftDecimal } from './header-fields.ts';

const text = () => textCell();

export const PAIR_COLUMNS: readonly ColumnSpec[] = [
  { name: 'pair', required: true, unit: null, description: 'pair id', cell: text },
  { name: 'product', required: true, unit: null, description: 'product id (must be stored)', cell: text },
  {
    name: 'top_wafer',
    required: true,
    unit: null,
    description: 'the wafer turned face-down on top',
    cell: text,
  },
  {
    name: 'bottom_wafer',
    required: true,
    unit: null,
    description: 'the wafer underneath (its frame is the bond frame)',
    cell: text,
  },
  {
    name: 'flip_axis',
    required: true,
    unit: null,
    description: "axis of the top wafer's frame it is flipped about: x (y → −y) or y (x → −x)",
    cell: () => enumCell(['x', 'y'] as const),
  },
  {
    name: 'rotation_deg',
    required: false,
    unit: '°',
    description: 'rotation of the flipped top wafer, counter-clockwise, degrees (empty: 0)',
    cell: () => numberCell({ min: -360, max: 360, unit: '°' }),
  },
  {
    name: 'offset_x_mm',
    required: false,
    unit: 'mm',
    description: 'offset of the top wafer in the bond frame, x (empty: 0)',
    cell: () => numberCell({ min: -10, max: 10, unit: 'mm' }),
  },
  {
    name: 'offset_y_mm',
    required: false,
    unit: 'mm',
    description: 'offset of the top wafer in the bond frame, y (empty: 0)',
    cell: () => numberCell({ min: -10, max: 10, unit: 'mm' }),
  },
  { name: 'bonder', required: false, unit: null, description: 'bonder tool id', cell: text },
  {
    name: 'planned_bond_time',
    required: false,
    unit: null,
    description: 'planned bond time, ISO 8601 with offset (empty: not planned)',
    cell: (c) => timeCell(c.zone),
  },
  {
    name: 'lot',
    required: false,
    unit: null,
    description: "lot the pair is assessed with (empty: the bottom wafer's lot)",
    cell: text,
  },
];

export const pairs: ImportKind = {
  name: 'pairs',
  summary: 'bond pairs: top and bottom wafer, flip axis, rotation, offset, bonder, planned bond time',
  columns: PAIR_COLUMNS,
  metadata: [],
  begin(ctx): KindSession | KindIssue[] {
    const { db } = ctx;
    const written = new Map(ctx.header.filter((h) => h.spec).map((h) => [h.spec!.name, h.written]));
    const col = (name: string) => written.get(name) ?? name;
    const lotOfWafer = db.prepare('SELECT lot_id FROM wafers WHERE id = ?').pluck();
    const lotExists = db.prepare('SELECT product_id FROM lots WHERE id = ?');
    const productExists = db.prepare('SELECT 1 FROM products WHERE id = ?').pluck();
    const pairOfWafer = db
      .prepare('SELECT id FROM pairs WHERE top_wafer_id = ? OR bottom_wafer_id = ?')
      .pluck();
    const existing = db.prepare('SELECT * FROM pairs WHERE id = ?');
    const setLotProduct = db.prepare('UPDATE lots SET product_id = ? WHERE id = ? AND product_id IS NULL');
    const insert = db.prepare(
      `INSERT INTO pairs (id, product_id, lot_id, top_wafer_id, bottom_wafer_id, flip_axis, rotation_rad, offset_x_m,
         offset_y_m, bonder_tool_id, planned_bond_ms, import_id, line) VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?)`,
    );
    const toolKnown = db.prepare('SELECT 1 FROM tools WHERE tool_id = ? LIMIT 1').pluck();
    const unknownBonders = new Set<string>();
    const pairLines = new Map<string, number>();
    const waferLines = new Map<string, { line: number; pair: string }>();

    return {
      row(row, line) {
        const id = row.pair as string;
        const productId = row.product as string;
        const top = row.top_wafer as string;
        const bottom = row.bottom_wafer as string;
        const issues: KindIssue[] = [];
        const first = pairLines.get(id);
        if (first !== undefined)
          return [
            {
              line,
              column: col('pair'),
              value: id,
              rule: `pair "${id}" is given twice (first on line ${first})`,
            },
          ];
        if (productExists.get(productId) === undefined)
          issues.push({
            line,
            column: col('product'),
            value: productId,
            rule: `product "${productId}" is not stored (import its products file first)`,
          });
        if (top === bottom)
          issues.push({
            line,
            column: col('bottom_wafer'),
            value: bottom,
            rule: `top and bottom wafer are the same wafer ("${top}"); a pair bonds two different wafers`,
          });
        const lots: Record<'top' | 'bottom', string | undefined> = { top: undefined, bottom: undefined };
        for (const [side, w] of [
          ['top', top],
          ['bottom', bottom],
        ] as const) {
          if (side === 'bottom' && top === bottom) continue;
          const lot = lotOfWafer.get(w) as string | undefined;
          lots[side] = lot;
          if (lot === undefined) {
            issues.push({
              line,
              column: col(`${side}_wafer`),
              value: w,
              rule: `wafer "${w}" is not stored (wafers come from scans or ledger files; import those first)`,
            });
            continue;
          }
          const inFile = waferLines.get(w);
          if (inFile)
            issues.push({
              line,
              column: col(`${side}_wafer`),
              value: w,
              rule: `wafer "${w}" is already in pair "${inFile.pair}" (line ${inFile.line}); a wafer is bonded once`,
            });
          else {
            const other = pairOfWafer.get(w, w) as string | undefined;
            if (other !== undefined && other !== id)
              issues.push({
                line,
                column: col(`${side}_wafer`),
                value: w,
                rule: `wafer "${w}" is already in stored pair "${other}"; a wafer is bonded once`,
              });
          }
        }
        const lotId = (row.lot as string | undefined) ?? lots.bottom;
        let lotProduct: string | null = null;
        if (row.lot !== undefined) {
          const l = lotExists.get(lotId) as { product_id: string | null } | undefined;
          if (!l)
            issues.push({ line, column: col('lot'), value: lotId!, rule: `lot "${lotId}" is not stored` });
          else lotProduct = l.product_id;
        } else if (lotId !== undefined) {
          lotProduct =
            (lotExists.get(lotId) as { product_id: string | null } | undefined)?.product_id ?? null;
        }
        if (lotId !== undefined && lotProduct !== null && lotProduct !== productId)
          issues.push({
            line,
            column: col('product'),
            value: productId,
            rule: `lot "${lotId}" is of product "${lotProduct}"; its pairs cannot be of product "${productId}"`,
          });
        if (issues.length) return issues;
        const rec = {
          id,
          product_id: productId,
          lot_id: lotId!,
          top_wafer_id: top,
          bottom_wafer_id: bottom,
          flip_axis: row.flip_axis as 'x' | 'y',
          rotation_rad: (((row.rotation_deg as number | undefined) ?? 0) * Math.PI) / 180,
          offset_x_m: shiftDecimal((row.offset_x_mm as number | undefined) ?? 0, 3),
          offset_y_m: shiftDecimal((row.offset_y_mm as number | undefined) ?? 0, 3),
          bonder_tool_id: (row.bonder as string | undefined) ?? null,
          planned_bond_ms: (row.planned_bond_time as number | undefined) ?? null,
        };
        const old = existing.get(id) as (typeof rec & { import_id: number; line: number }) | undefined;
        pairLines.set(id, line);
        waferLines.set(top, { line, pair: id });
        waferLines.set(bottom, { line, pair: id });
        if (old) {
          const same = (Object.keys(rec) as (keyof typeof rec)[]).every((k) => old[k] === rec[k]);
          if (same) return 'duplicate';
          return [
            {
              line,
              column: col('pair'),
              value: id,
              rule: `pair "${id}" is stored already from import #${old.import_id} (line ${old.line}) with other values`,
            },
          ];
        }
        insert.run(
          rec.id,
          rec.product_id,
          rec.lot_id,
          rec.top_wafer_id,
          rec.bottom_wafer_id,
          rec.flip_axis,
          rec.rotation_rad,
          rec.offset_x_m,
          rec.offset_y_m,
          rec.bonder_tool_id,
          rec.planned_bond_ms,
          ctx.importId,
          line,
        );
        setLotProduct.run(productId, rec.lot_id);
        if (rec.bonder_tool_id !== null && toolKnown.get(rec.bonder_tool_id) === undefined)
          unknownBonders.add(rec.bonder_tool_id);
        return 'stored';
      },
      finish() {
        if (unknownBonders.size === 0) return {};
        const list = [...unknownBonders].sort();
        return {
          flags: [
            {
              code: 'tool-unknown',
              count: list.length,
              detail: `bonders not stored (no adders known for them): ${list.join(', ')}`,
            },
          ],
        };
      },
    };
  },
};
