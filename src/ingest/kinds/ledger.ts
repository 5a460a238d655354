/**
 * Import kind `ledger`: the exposure ledger — for each wafer (or each lot, applying to all its
 * wafers) the steps of its route in time: step name and kind, tool and chamber, the location whose
 * air the wafer saw, how it was shielded (carrier state), when the step started and ended, and how
 * many re-cleans the wafer had had.
 *
 * Rules (each rejects the row with line, column and value):
 * - end before start (a step cannot end before it starts; equal is a zero-length step);
 * - step_kind, carrier or orientation outside their lists;
 * - a location that is not stored (import the locations file first) — the air of a step must be known;
 * - a clean id that is not stored (import the tools file first);
 * - a wafer already stored under another lot;
 * - the same step (lot, wafer, step name, start) twice in the file, or stored with other values.
 * Times need an offset or the file's `# zone:` (src/ingest/time.ts); all are stored as UTC ms.
 *
 * Lots and wafers named here are created when missing (src/store/lots.ts). A row with an empty
 * wafer is a lot-level step: it is stored once and applies to every wafer of the lot, including
 * wafers that become known later.
 *
 * Flags: steps of one wafer that overlap in time; wait and transfer steps without a location (their
 * air is unknown: the engine cannot add deposition for them).
 */

import {
  CARRIER_STATES,
  FACE_ORIENTATIONS,
  type LedgerStep,
  ledgerWriter,
  STEP_KIND_NAMES,
} from '../../store/ledger.ts';
import { lotWriter } from '../../store/lots.ts';
import type { StepKind } from '../../store/products.ts';
import { enumCell, numberCell, textCell, timeCell } from '../cells.ts';
import type { ColumnSpec, ImportFlag, ImportKind, KindIssue, KindSession } from '../types.ts';

const text = () => textCell();

export const LEDGER_COLUMNS: readonly ColumnSpec[] = [
  { name: 'lot', required: true, unit: null, description: 'lot id', cell: text },
  {
    name: 'wafer',
    required: false,
    unit: null,
    description: 'wafer id (empty: the step applies to every wafer of the lot)',
    cell: text,
  },
  { name: 'step', required: true, unit: null, description: 'step name as the route calls it', cell: text },
  {
    name: 'step_kind',
    required: true,
    unit: null,
    description: `kind of step: ${STEP_KIND_NAMES.join(', ')}`,
    cell: () => enumCell(STEP_KIND_NAMES),
  },
  {
    name: 'tool',
    required: false,
    unit: null,
    description: 'tool id (empty for a wait on a shelf or stocker)',
    cell: text,
  },
  { name: 'chamber', required: false, unit: null, description: 'chamber of the tool', cell: text },
  {
    name: 'recipe',
    required: false,
    unit: null,
    description: 'recipe run (finds the clean of a clean step)',
    cell: text,
  },
  {
    name: 'clean',
    required: false,
    unit: null,
    description: 'clean id of a clean step (empty: found from tool and recipe)',
    cell: text,
  },
  {
    name: 'location',
    required: false,
    unit: null,
    description: 'location id whose air the wafer saw (must be stored)',
    cell: text,
  },
  {
    name: 'carrier',
    required: true,
    unit: null,
    description: `shielding: ${CARRIER_STATES.join(', ')}`,
    cell: () => enumCell(CARRIER_STATES),
  },
  {
    name: 'orientation',
    required: false,
    unit: null,
    description: `bonding face: ${FACE_ORIENTATIONS.join(', ')} (empty: face-up)`,
    cell: () => enumCell(FACE_ORIENTATIONS),
  },
  {
    name: 'start',
    required: true,
    unit: null,
    description: 'step start, ISO 8601 with offset',
    cell: (c) => timeCell(c.zone),
  },
  {
    name: 'end',
    required: false,
    unit: null,
    description: 'step end, ISO 8601 with offset (empty: still running)',
    cell: (c) => timeCell(c.zone),
  },
  {
    name: 'reclean_count',
    required: false,
    unit: null,
    description: 're-cleans the wafer had had when the step ran (empty: 0)',
    cell: () => numberCell({ min: 0, max: 100, integer: true }),
  },
];

export const ledger: ImportKind = {
  name: 'ledger',
  summary: 'the exposure ledger: per wafer or lot, the route steps with tool, location, carrier and times',
  columns: LEDGER_COLUMNS,
  metadata: [],
  begin(ctx): KindSession | KindIssue[] {
    const { db } = ctx;
    const written = new Map(ctx.header.filter((h) => h.spec).map((h) => [h.spec!.name, h.written]));
    const indexOf = new Map(ctx.header.filter((h) => h.spec).map((h) => [h.spec!.name, h.index]));
    const col = (name: string) => written.get(name) ?? name;
    const cellText = (cells: readonly string[], name: string) =>
      (cells[indexOf.get(name) ?? -1] ?? '').trim();
    const lots = lotWriter(db, ctx.importId);
    const writer = ledgerWriter(db);
    const locationKnown = db.prepare('SELECT 1 FROM locations WHERE location_id = ?').pluck();
    const cleanKnown = db.prepare('SELECT 1 FROM cleans WHERE id = ?').pluck();
    const knownLoc = new Map<string, boolean>();
    const knownClean = new Map<string, boolean>();
    const keys = new Map<string, number>();
    const spans = new Map<string, { start: number; end: number | null }[]>();
    let noAir = 0;
    const toolsNamed = new Set<string>();

    return {
      row(row, line, cells) {
        const lotId = row.lot as string;
        const waferId = (row.wafer as string | undefined) ?? null;
        const step = row.step as string;
        const kind = row.step_kind as StepKind;
        const startMs = row.start as number;
        const endMs = (row.end as number | undefined) ?? null;
        const locationId = (row.location as string | undefined) ?? null;
        const cleanId = (row.clean as string | undefined) ?? null;
        const issues: KindIssue[] = [];
        if (endMs !== null && endMs < startMs)
          issues.push({
            line,
            column: col('end'),
            value: cellText(cells, 'end'),
            rule: `the step ends before it starts (start ${cellText(cells, 'start')}); end must be at or after start`,
          });
        if (locationId !== null) {
          let ok = knownLoc.get(locationId);
          if (ok === undefined) {
            ok = locationKnown.get(locationId) !== undefined;
            knownLoc.set(locationId, ok);
          }
          if (!ok)
            issues.push({
              line,
              column: col('location'),
              value: locationId,
              rule: `location "${locationId}" is not stored (import the locations file that defines it first)`,
            });
        }
        if (cleanId !== null) {
          let ok = knownClean.get(cleanId);
          if (ok === undefined) {
            ok = cleanKnown.get(cleanId) !== undefined;
            knownClean.set(cleanId, ok);
          }
          if (!ok)
            issues.push({
              line,
              column: col('clean'),
              value: cleanId,
              rule: `clean "${cleanId}" is not stored (import the tools file that defines it first)`,
            });
        }
        const key = JSON.stringify([lotId, waferId ?? '', step, startMs]);
        const first = keys.get(key);
        if (first !== undefined)
          issues.push({
            line,
            column: col('step'),
            value: step,
            rule: `step "${step}" of ${waferId === null ? `lot "${lotId}"` : `wafer "${waferId}"`} starting at ${cellText(cells, 'start')} is given twice (first on line ${first})`,
          });
        if (issues.length) return issues;
        if (waferId === null) lots.ensureLot(lotId);
        else {
          const clash = lots.ensureWafer(waferId, lotId);
          if (clash)
            return [
              {
                line,
                column: col('wafer'),
                value: waferId,
                rule: `wafer "${waferId}" belongs to lot "${clash.otherLot}", not "${lotId}"`,
              },
            ];
        }
        keys.set(key, line);
        const out = writer.add({
          lotId,
          waferId,
          step,
          kind,
          toolId: (row.tool as string | undefined) ?? null,
          chamber: (row.chamber as string | undefined) ?? null,
          recipe: (row.recipe as string | undefined) ?? null,
          cleanId,
          locationId,
          carrier: row.carrier as LedgerStep['carrier'],
          orientation: (row.orientation as LedgerStep['orientation'] | undefined) ?? 'face-up',
          startMs,
          endMs,
          recleanCount: (row.reclean_count as number | undefined) ?? 0,
          importId: ctx.importId,
          line,
        });
        if (typeof out === 'object')
          return [
            {
              line,
              column: col('step'),
              value: step,
              rule: `this step (same lot, wafer, step and start) is stored already from import #${out.otherImport} (line ${out.line}) with other values`,
            },
          ];
        if (out === 'stored') {
          if (locationId === null && (kind === 'wait' || kind === 'transfer')) noAir++;
          const toolId = row.tool as string | undefined;
          if (toolId !== undefined) toolsNamed.add(toolId);
          const k = waferId === null ? `lot:${lotId}` : `wafer:${waferId}`;
          const list = spans.get(k) ?? [];
          list.push({ start: startMs, end: endMs });
          spans.set(k, list);
        }
        return out;
      },
      finish() {
        let overlaps = 0;
        for (const list of spans.values()) {
          list.sort((a, b) => a.start - b.start);
          let lastEnd = Number.NEGATIVE_INFINITY;
          for (const s of list) {
            if (s.start < lastEnd) overlaps++;
            lastEnd = Math.max(lastEnd, s.end ?? Number.POSITIVE_INFINITY);
          }
        }
        const flags: ImportFlag[] = [];
        if (overlaps > 0)
          flags.push({
            code: 'overlapping-steps',
            count: overlaps,
            detail: `${overlaps} steps start before the previous step of the same wafer (or lot) ended`,
          });
        if (noAir > 0)
          flags.push({
            code: 'no-location',
            count: noAir,
            detail: `${noAir} wait or transfer steps name no location: the air they saw is unknown`,
          });
        const toolKnown = db.prepare('SELECT 1 FROM tools WHERE tool_id = ? LIMIT 1').pluck();
        const unknownTools = [...toolsNamed].filter((t) => toolKnown.get(t) === undefined).sort();
        if (unknownTools.length > 0)
          flags.push({
            code: 'tool-unknown',
            count: unknownTools.length,
            detail: `tools not stored (no adders known for their steps): ${unknownTools.join(', ')}`,
          });
        const notes =
          lots.created.lots + lots.created.wafers > 0
            ? [`created ${lots.created.lots} lots and ${lots.created.wafers} wafers`]
            : [];
        return { flags, notes };
      },
    };
  },
};
