/**
 * `voidcast audit --area ID --from T --to T [--occupancy S] [--json | --csv DIR | --table NAME]`:
 * an area's contamination audit — ISO 14644-1 classification, levels in force, excursions with
 * their added voids and die loss, control charts.
 */
import { mkdirSync, writeFileSync } from 'node:fs';
import { join, resolve } from 'node:path';
import { auditAreaFromDb } from '../../engine/audit/audit.ts';
import type { AreaAudit } from '../../engine/audit/types.ts';
import { AUDIT_TABLES, type AuditTableName, auditTables } from '../../engine/export/audit-tables.ts';
import { toCsv } from '../../engine/export/csv.ts';
import { parseOptions } from '../args.ts';
import { type Command, EXIT, UsageError } from '../io.ts';
import { openExisting } from './assess.ts';
import {
  fmt,
  iso,
  numberOption,
  occupancyOption,
  sizeOption,
  timeOption,
  um,
  withAuditErrors,
} from './audit-args.ts';

export const audit: Command = {
  name: 'audit',
  summary:
    "an area's contamination audit: ISO 14644-1 classification, levels, excursions and their cost, control charts",
  usage: `voidcast audit --area <id> --from <TIME> --to <TIME> [options] [--data DIR]

  --area ID          the area (a room, or a zone such as a mini-environment) by its location id
  --from T, --to T   the period: ISO 8601 with its zone, or UTC ms (whole hours are read)
  --occupancy S      as-built | at-rest | operational (default; samples without a stated state count
                     as operational) | any
  --edition E        2015 (default) | 1999 (adds the 95 % UCL for 2 to 9 locations)
  --class N          the ISO class to test (default the area's target class)
  --sizes LIST       considered sizes in µm, comma-separated (default every Table 1 size the counters
                     report at which the class has a value and needs no sequential sampling)
  --no-costs         skip the excursions' added voids (two assessments per exposed pair)
  --as-of T          assessment time of the costs (default the installation clock, else now)
  --limits-from T, --limits-to T
                     the control charts' baseline window (Phase I) where a location and channel has no
                     derived levels with a window of their own (else the period itself, said per chart)
  --json             print the whole audit as one JSON document
  --csv DIR          write every table as DIR/<table>.csv (RFC 4180; --spreadsheet: with a byte-order
                     mark and the formula guard)
  --table NAME       print one table as CSV: ${AUDIT_TABLES.join(', ')}
  --spreadsheet      the spreadsheet variant of the CSV
  --data DIR         data directory holding voidcast.db (default $VOIDCAST_DATA, else ./data)

  exit codes: 0 audit written (its verdict is in the output), 2 usage, 3 refused (bad input, or no data
  in the period: nothing to judge), 4 no database or no such area`,
  async run(argv, io) {
    const { values } = parseOptions(argv, {
      area: { type: 'string' },
      from: { type: 'string' },
      to: { type: 'string' },
      occupancy: { type: 'string' },
      edition: { type: 'string' },
      class: { type: 'string' },
      sizes: { type: 'string' },
      'no-costs': { type: 'boolean' },
      'as-of': { type: 'string' },
      'limits-from': { type: 'string' },
      'limits-to': { type: 'string' },
      json: { type: 'boolean' },
      csv: { type: 'string' },
      table: { type: 'string' },
      spreadsheet: { type: 'boolean' },
      data: { type: 'string' },
    });
    if (!values.area) throw new UsageError('--area is required');
    const fromMs = timeOption('from', values.from)!;
    const toMs = timeOption('to', values.to)!;
    const occupancy = occupancyOption(values.occupancy);
    if (values.edition !== undefined && values.edition !== '2015' && values.edition !== '1999')
      throw new UsageError(`--edition must be 2015 or 1999, got "${values.edition}"`);
    const classN = numberOption('class', values.class);
    const sizesNm = values.sizes?.split(',').map((s) => Math.round(sizeOption('sizes', s) * 1e9));
    const asOfMs = timeOption('as-of', values['as-of'], false) ?? undefined;
    const limitsFrom = timeOption('limits-from', values['limits-from'], false);
    const limitsTo = timeOption('limits-to', values['limits-to'], false);
    if ((limitsFrom === null) !== (limitsTo === null))
      throw new UsageError('--limits-from and --limits-to go together (the charts’ baseline window)');
    if (limitsFrom !== null && limitsTo !== null && limitsFrom >= limitsTo)
      throw new UsageError('--limits-to must be after --limits-from');
    const outputs = [values.json, values.csv !== undefined, values.table !== undefined].filter(
      Boolean,
    ).length;
    if (outputs > 1) throw new UsageError('choose one of --json, --csv and --table');
    if (values.table !== undefined && !(AUDIT_TABLES as readonly string[]).includes(values.table))
      throw new UsageError(`--table must be one of ${AUDIT_TABLES.join(', ')}, got "${values.table}"`);
    const { db, file } = openExisting(values.data, io);
    if (!db) {
      io.err(`voidcast audit: no database at ${file}\n`);
      return EXIT.notFound;
    }
    try {
      return withAuditErrors('audit', io, () => {
        const a = auditAreaFromDb(db, values.area!, {
          period: { fromMs, toMs },
          occupancy,
          edition: values.edition === '1999' ? 1999 : 2015,
          classN: classN ?? null,
          sizesNm: sizesNm ?? null,
          costs: !values['no-costs'],
          asOfMs,
          chartBaseline:
            limitsFrom !== null && limitsTo !== null ? { fromMs: limitsFrom, toMs: limitsTo } : null,
        });
        const variant = values.spreadsheet ? 'spreadsheet' : 'plain';
        if (values.json) io.out(`${JSON.stringify(a)}\n`);
        else if (values.table !== undefined)
          io.out(toCsv(auditTables(a)[values.table as AuditTableName], variant));
        else if (values.csv !== undefined) {
          const dir = resolve(io.cwd, values.csv);
          mkdirSync(dir, { recursive: true });
          const tables = auditTables(a);
          for (const name of AUDIT_TABLES) {
            writeFileSync(join(dir, `${name}.csv`), toCsv(tables[name], variant));
            io.out(`${join(values.csv, `${name}.csv`)}: ${tables[name].rows.length} rows\n`);
          }
        } else io.out(render(a));
        if (a.classification.status === 'no data') {
          io.err(
            `voidcast audit: ${a.classification.notes[0] ?? 'no data: nothing to judge in the period'}\n`,
          );
          return EXIT.rejected;
        }
        return EXIT.ok;
      });
    } finally {
      db.close();
    }
  },
};

const VERDICT: Record<string, string> = {
  pass: 'PASS',
  fail: 'FAIL',
  'no data': 'NO DATA',
  'not judged': 'NOT JUDGED',
};

function render(a: AreaAudit): string {
  const c = a.classification;
  const out: string[] = [];
  out.push(
    `audit of ${c.areaId} (${c.areaName}), ${iso(a.period.fromMs)} – ${iso(a.period.toMs)}, occupancy ${a.occupancy}`,
  );
  out.push('');
  out.push(
    `classification: ${VERDICT[c.status]} — ISO class ${c.classN ?? '—'} tested (ISO 14644-1:${c.edition}), cleanest class met ${c.classAchieved ?? '—'}`,
  );
  out.push(`  sampling locations: ${c.locationCount.words}`);
  out.push(
    `  sizes: ${c.sizes.map((s) => `≥ ${um(s.diameterM)} limit ${fmt(s.limitPerM3)} per m³ ${VERDICT[s.status]}`).join('; ')}`,
  );
  for (const l of c.locations)
    out.push(
      `  ${l.locationId.padEnd(14)} ${VERDICT[l.status]!.padEnd(10)} ${l.meansPerM3.map((v, j) => `${um(c.sizesM[j]!)} ${fmt(v)}`).join(', ')}  (${l.usableSamples} samples; volume ${VERDICT[l.volume.status]})`,
    );
  for (const n of c.notes) out.push(`  note: ${n}`);
  out.push('');
  out.push(`levels in force: ${a.levels.length}`);
  for (const l of a.levels)
    out.push(
      `  ${l.locationId.padEnd(14)} ≥ ${um(l.diameterM)}: alert ${fmt(l.alertPerM3)}, action ${fmt(l.actionPerM3)} per m³ — ${l.method === 'typed' ? 'typed' : `${l.method} "${l.name}" v${l.version} by ${l.setBy}`}`,
    );
  out.push('');
  out.push(
    `excursions: ${a.excursions.length} in ${a.events.length} event${a.events.length === 1 ? '' : 's'}`,
  );
  for (const ev of a.events) {
    const cost = a.costs.find((k) => k.eventId === ev.id);
    out.push(
      `  ${ev.id}: ${ev.nature.toUpperCase()}, ${iso(ev.startMs)} – ${iso(ev.endMs)} at ${ev.locationIds.join(', ')}; found by ${ev.rules.join(', ')}`,
    );
    if (cost)
      out.push(
        `    exposed: ${new Set(cost.wafers.map((w) => w.waferId)).size} wafers in ${cost.lots.length} lot${cost.lots.length === 1 ? '' : 's'}; added voids ${fmt(cost.totalAddedVoids)}, added die loss ${fmt(cost.totalAddedDieLoss)} dies, once for the event${cost.notes.length ? ` (${cost.notes.join('; ')})` : ''}`,
      );
    for (const e of a.excursions.filter((x) => ev.excursionIds.includes(x.id))) {
      out.push(`    ${e.id}`);
      out.push(
        `      ${e.nature.toUpperCase()}: ${iso(e.startMs)} – ${iso(e.endMs)} at ${e.locationIds.join(', ')}; ${e.words}`,
      );
      out.push(`      peak ${fmt(e.peakPerM3)} per m³ at ${iso(e.peakMs)}; ${e.natureWords}`);
      if (e.acknowledgement)
        out.push(
          `      acknowledged by ${e.acknowledgement.account} at ${iso(e.acknowledgement.atMs)}: ${e.acknowledgement.comment}`,
        );
    }
  }
  if (a.costs.length > 0)
    out.push(
      `  added by all events: ${fmt(a.costs.reduce((s, k) => s + k.totalAddedVoids, 0))} voids, ${fmt(a.costs.reduce((s, k) => s + k.totalAddedDieLoss, 0))} dies of loss (each event costed once)`,
    );
  out.push('');
  const flagged = a.charts
    .map((ch) => ({ ch, n: ch.points.filter((p) => p.rules.length > 0).length }))
    .filter((x) => x.n > 0);
  out.push(`control charts: ${a.charts.length} (location × channel); with flagged hours: ${flagged.length}`);
  for (const { ch, n } of flagged)
    out.push(
      `  ${ch.locationId.padEnd(14)} ≥ ${um(ch.diameterM)} ${ch.kind}: ${n} flagged hours — ${ch.decidedBy}; limits from ${ch.baseline.source === 'period' ? 'the period itself' : `${ch.baseline.words} ${iso(ch.baseline.window!.fromMs)} – ${iso(ch.baseline.window!.toMs)}`}`,
    );
  return `${out.join('\n')}\n`;
}
