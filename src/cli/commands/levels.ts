/**
 * `voidcast levels derive …` and `voidcast levels show …`: alert and action levels of a location and
 * channel, derived from a baseline window by a stated method (stored as a new version) or shown with
 * how each was set.
 */
import { type DerivedMethod, LEVEL_METHODS } from '../../engine/audit/levels.ts';
import {
  deriveAndStoreLevels,
  loadAreaMembers,
  loadCurrentLevels,
  loadLevelHistory,
} from '../../engine/audit/loader.ts';
import type { LevelRecord } from '../../engine/audit/types.ts';
import { getLocation, type LocationRecord } from '../../store/locations.ts';
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
  um,
  withAuditErrors,
} from './audit-args.ts';

export const levels: Command = {
  name: 'levels',
  summary: 'alert and action levels: derive them from a baseline window by a stated method, or show them',
  usage: `voidcast levels derive --location <id> --channel <size> --method <M> [--from T --to T] --as <name> [options]
voidcast levels show (--location <id> | --area <id>) [--history] [--json] [--data DIR]

  derive: computes the levels of one location and channel from the hourly means of a baseline window
  and stores them as a new version (append-only; the latest is in force, over any typed level).
  --location ID      the location
  --channel SIZE     the channel, particles ≥ SIZE: µm (0.5) or nm (500nm)
  --method M         ${LEVEL_METHODS.join(' | ')}
  --from T, --to T   the baseline window (ISO 8601 with zone, or UTC ms); not for class-fraction
  --alert X          alert parameter (default: percentile and quantiles 0.95, k 2, fraction 0.5)
  --action Y         action parameter (default: 0.99, k 3, fraction 1)
  --occupancy S      samples read: as-built | at-rest | operational (default) | any
  --as NAME          a name for these levels (e.g. "baseline Oct")
  --by NAME          who sets them (default: the operating-system user)
  --json             print the stored record as JSON
  show: the levels in force (or --history: every version) of a location or of an area's locations.

  exit codes: 0 done, 2 usage, 3 refused (the baseline is too short for the method, the location has
  no such channel, bad parameters — the message says which), 4 no database or no such location`,
  async run(argv, io) {
    const [sub, ...rest] = argv;
    if (sub !== 'derive' && sub !== 'show')
      throw new UsageError('say what to do: levels derive … or levels show …');
    const { values } = parseOptions(rest, {
      location: { type: 'string' },
      area: { type: 'string' },
      channel: { type: 'string' },
      method: { type: 'string' },
      from: { type: 'string' },
      to: { type: 'string' },
      alert: { type: 'string' },
      action: { type: 'string' },
      occupancy: { type: 'string' },
      as: { type: 'string' },
      by: { type: 'string' },
      history: { type: 'boolean' },
      json: { type: 'boolean' },
      data: { type: 'string' },
    });
    if (sub === 'derive') {
      if (!values.location) throw new UsageError('--location is required');
      const diameterM = sizeOption('channel', values.channel);
      if (!values.method || !(LEVEL_METHODS as readonly string[]).includes(values.method))
        throw new UsageError(`--method must be one of ${LEVEL_METHODS.join(', ')}`);
      const method = values.method as DerivedMethod;
      if (!values.as?.trim()) throw new UsageError('--as is required: a name for these levels');
      const windowNeeded = method !== 'class-fraction';
      const fromMs = timeOption('from', values.from, windowNeeded);
      const toMs = timeOption('to', values.to, windowNeeded);
      const parameters: Record<string, number> = {};
      const alert = numberOption('alert', values.alert);
      const action = numberOption('action', values.action);
      if (alert !== undefined) parameters.alert = alert;
      if (action !== undefined) parameters.action = action;
      const occupancy = occupancyOption(values.occupancy);
      const { db, file } = openExisting(values.data, io);
      if (!db) {
        io.err(`voidcast levels: no database at ${file}\n`);
        return EXIT.notFound;
      }
      try {
        return withAuditErrors('levels', io, () => {
          const by = values.by?.trim() || `command line (${io.env.USER ?? io.env.USERNAME ?? 'unknown'})`;
          const rec = deriveAndStoreLevels(db, {
            locationId: values.location!,
            diameterM,
            method,
            window: fromMs !== null && toMs !== null ? { fromMs, toMs } : null,
            occupancy,
            parameters,
            name: values.as!.trim(),
            setBy: by,
            nowMs: Date.now(),
          });
          cliAudit(
            db,
            'levels.derive',
            `location ${rec.locationId}`,
            {
              sizeUm: rec.diameterM * 1e6,
              method,
              version: rec.version,
              alert: rec.alertPerM3,
              action: rec.actionPerM3,
            },
            values.by,
          );
          io.out(values.json ? `${JSON.stringify(rec)}\n` : `stored: ${line(rec)}\n  ${rec.basis}\n`);
          return EXIT.ok;
        });
      } finally {
        db.close();
      }
    }
    // show
    if (!values.location === !values.area) throw new UsageError('give one of --location and --area');
    const { db, file } = openExisting(values.data, io);
    if (!db) {
      io.err(`voidcast levels: no database at ${file}\n`);
      return EXIT.notFound;
    }
    try {
      return withAuditErrors('levels', io, () => {
        let locs: LocationRecord[];
        if (values.area) locs = loadAreaMembers(db, values.area).sampling;
        else {
          const l = getLocation(db, values.location!);
          if (!l) {
            io.err(`voidcast levels: no location "${values.location}"\n`);
            return EXIT.notFound;
          }
          locs = [l];
        }
        const list = values.history ? loadLevelHistory(db, locs) : loadCurrentLevels(db, locs);
        if (values.json) io.out(`${JSON.stringify(list)}\n`);
        else {
          if (list.length === 0) io.out('no levels set\n');
          for (const r of list) io.out(`${line(r)}\n`);
        }
        return EXIT.ok;
      });
    } finally {
      db.close();
    }
  },
};

function line(r: LevelRecord): string {
  const how =
    r.method === 'typed'
      ? 'typed'
      : `${r.method} "${r.name}" v${r.version}${r.window ? `, baseline ${iso(r.window.fromMs)} – ${iso(r.window.toMs)}` : ''}, set by ${r.setBy}${r.setAtMs !== null ? ` at ${iso(r.setAtMs)}` : ''}`;
  return `${r.locationId} ≥ ${um(r.diameterM)}: alert ${fmt(r.alertPerM3, 4)}, action ${fmt(r.actionPerM3, 4)} per m³ (${how})`;
}
