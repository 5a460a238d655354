/**
 * `voidcast excursions --area ID --from T --to T [rule options]`: the excursions of an area's air by
 * rule, told apart from instrument findings; `voidcast excursions ack --id ID --comment TEXT`:
 * acknowledge one.
 */
import { eventCostInDb } from '../../engine/audit/cost-loader.ts';
import { groupEvents } from '../../engine/audit/events.ts';
import { DEFAULT_RULES } from '../../engine/audit/excursions.ts';
import { acknowledgeExcursion, findExcursionsInDb } from '../../engine/audit/loader.ts';
import type { ExcursionRules } from '../../engine/audit/types.ts';
import { parseOptions } from '../args.ts';
import { cliAudit } from '../audit.ts';
import { type Command, EXIT, UsageError } from '../io.ts';
import { openExisting } from './assess.ts';
import {
  fmt,
  iso,
  numberOption,
  occupancyOption,
  sizeOption,
  timeOption,
  withAuditErrors,
} from './audit-args.ts';

export const excursions: Command = {
  name: 'excursions',
  summary: "excursions of an area's air by rule, with data-quality flags beside; acknowledge one",
  usage: `voidcast excursions --area <id> --from <TIME> --to <TIME> [rule options] [--costs] [--json] [--data DIR]
voidcast excursions ack --id <excursion id> --comment <text> [--by NAME] [--data DIR]

  --area ID             the area (its location id)
  --from T, --to T      the period (ISO 8601 with zone, or UTC ms); points are UTC hours
  --occupancy S         as-built | at-rest | operational (default) | any
  --alert-run M/N       M of N consecutive hours above alert (default 2/3; "off" to switch off)
  --area-alert K/H      K locations above alert within H hours (default 2/1; "off")
  --ratio SMALL/LARGE   the channels whose ratio is watched, µm (default 0.1/0.5; "off")
  --ratio-k K           how many σ away the ratio must be (default 4)
  --no-action           switch off the one-point-above-action rule
  --no-quality          switch off the data-quality rule (hours mostly flagged by the counter)
  --costs               add each event's exposed wafers and added voids and die loss (overlapping
                        excursions at a location are one event, costed once)
  --json                print the excursions and events (and costs) as JSON
  ack: stores an acknowledgement with a comment (append-only; the latest is shown).

  exit codes: 0 done, 2 usage, 3 refused (bad rule settings or acknowledgement), 4 no database or no
  such area`,
  async run(argv, io) {
    const ack = argv[0] === 'ack';
    const { values } = parseOptions(ack ? argv.slice(1) : argv, {
      area: { type: 'string' },
      from: { type: 'string' },
      to: { type: 'string' },
      occupancy: { type: 'string' },
      'alert-run': { type: 'string' },
      'area-alert': { type: 'string' },
      ratio: { type: 'string' },
      'ratio-k': { type: 'string' },
      'no-action': { type: 'boolean' },
      'no-quality': { type: 'boolean' },
      costs: { type: 'boolean' },
      json: { type: 'boolean' },
      id: { type: 'string' },
      comment: { type: 'string' },
      by: { type: 'string' },
      data: { type: 'string' },
    });
    if (ack) {
      if (!values.id)
        throw new UsageError('--id is required (the excursion id printed by voidcast excursions)');
      if (!values.comment?.trim()) throw new UsageError('--comment is required');
      const { db, file } = openExisting(values.data, io);
      if (!db) {
        io.err(`voidcast excursions: no database at ${file}\n`);
        return EXIT.notFound;
      }
      try {
        return withAuditErrors('excursions', io, () => {
          const account =
            values.by?.trim() || `command line (${io.env.USER ?? io.env.USERNAME ?? 'unknown'})`;
          const a = acknowledgeExcursion(db, values.id!, values.comment!, account, Date.now());
          cliAudit(db, 'excursion.ack', `excursion ${a.excursionId}`, { comment: a.comment }, values.by);
          io.out(`acknowledged: ${a.excursionId} by ${a.account}\n`);
          return EXIT.ok;
        });
      } finally {
        db.close();
      }
    }
    if (!values.area) throw new UsageError('--area is required');
    const fromMs = timeOption('from', values.from)!;
    const toMs = timeOption('to', values.to)!;
    const occupancy = occupancyOption(values.occupancy);
    const rules: ExcursionRules = {
      ...DEFAULT_RULES,
      actionPoint: !values['no-action'],
      dataQuality: values['no-quality'] ? null : DEFAULT_RULES.dataQuality,
    };
    const pair = (name: string, v: string | undefined) => {
      const m = v === undefined ? null : /^(\d+)\/(\d+)$/.exec(v);
      if (v !== undefined && v !== 'off' && !m)
        throw new UsageError(`--${name} must read M/N (e.g. 2/3) or off, got "${v}"`);
      return m ? [Number(m[1]), Number(m[2])] : null;
    };
    if (values['alert-run'] !== undefined) {
      const p = pair('alert-run', values['alert-run']);
      rules.alertRun = p ? { m: p[0]!, n: p[1]! } : null;
    }
    if (values['area-alert'] !== undefined) {
      const p = pair('area-alert', values['area-alert']);
      rules.areaAlert = p ? { locations: p[0]!, windowMs: p[1]! * 3_600_000 } : null;
    }
    if (values.ratio !== undefined || values['ratio-k'] !== undefined) {
      if (values.ratio === 'off') rules.ratioShift = null;
      else {
        const [s, l] = (values.ratio ?? '0.1/0.5').split('/');
        rules.ratioShift = {
          ...DEFAULT_RULES.ratioShift!,
          smallM: sizeOption('ratio', s),
          largeM: sizeOption('ratio', l),
          k: numberOption('ratio-k', values['ratio-k']) ?? DEFAULT_RULES.ratioShift!.k,
        };
      }
    }
    const { db, file } = openExisting(values.data, io);
    if (!db) {
      io.err(`voidcast excursions: no database at ${file}\n`);
      return EXIT.notFound;
    }
    try {
      return withAuditErrors('excursions', io, () => {
        const list = findExcursionsInDb(db, values.area!, { period: { fromMs, toMs }, occupancy, rules });
        const events = groupEvents(list);
        const costs = values.costs ? events.map((ev) => eventCostInDb(db, ev)) : [];
        if (values.json) {
          io.out(
            `${JSON.stringify(values.costs ? { excursions: list, events, costs } : { excursions: list, events })}\n`,
          );
          return EXIT.ok;
        }
        if (list.length === 0) io.out(`no excursions at ${values.area} in ${iso(fromMs)} – ${iso(toMs)}\n`);
        for (const ev of events) {
          for (const e of list.filter((x) => ev.excursionIds.includes(x.id))) {
            io.out(
              `${e.id}\n  ${e.nature.toUpperCase()}: ${iso(e.startMs)} – ${iso(e.endMs)} at ${e.locationIds.join(', ')}; ${e.words}\n`,
            );
            io.out(`  peak ${fmt(e.peakPerM3)} per m³ at ${iso(e.peakMs)}; ${e.natureWords}\n`);
            if (e.acknowledgement)
              io.out(
                `  acknowledged by ${e.acknowledgement.account} at ${iso(e.acknowledgement.atMs)}: ${e.acknowledgement.comment}\n`,
              );
          }
          const n = ev.excursionIds.length;
          io.out(
            `${ev.id}: ${n === 1 ? 'one excursion' : `one event of ${n} excursions`} (${ev.rules.join(', ')}), ${iso(ev.startMs)} – ${iso(ev.endMs)}\n`,
          );
          const c = costs.find((k) => k.eventId === ev.id);
          if (c) {
            io.out(
              `  added voids ${fmt(c.totalAddedVoids)}, added die loss ${fmt(c.totalAddedDieLoss)} dies over ${c.lots.length} lot${c.lots.length === 1 ? '' : 's'}${n > 1 ? ', counted once for the event' : ''}${c.notes.length ? ` (${c.notes.join('; ')})` : ''}\n`,
            );
            for (const l of c.lots)
              io.out(
                `    lot ${l.lotId}: ${l.wafers} wafers, +${fmt(l.addedVoids)} voids, +${fmt(l.addedDieLoss)} dies\n`,
              );
          }
        }
        return EXIT.ok;
      });
    } finally {
      db.close();
    }
  },
};
