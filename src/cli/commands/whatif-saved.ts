/**
 * `voidcast scenarios [--pair ID | --lot ID] [--json]` lists saved what-if scenarios;
 * `voidcast scenarios --export ID|NAME` prints one as the export JSON (format voidcast-scenario/1).
 */
import { exportScenario, leverWords, listScenarios, loadScenario } from '../../engine/tuning/index.ts';
import { parseOptions } from '../args.ts';
import { type Command, EXIT, UsageError } from '../io.ts';
import { openExisting } from './assess.ts';

export const scenarios: Command = {
  name: 'scenarios',
  summary: 'list saved what-if scenarios, or export one as JSON',
  usage: `voidcast scenarios [--pair ID | --lot ID] [--json] [--data DIR]
voidcast scenarios --export ID|NAME [--data DIR]

  (no option)      every saved scenario, newest first: id, name, target, who and when, its levers
  --pair, --lot    those saved for that pair or lot
  --json           the list as JSON: [{id, name, target {kind, id} | null, scenario {name, levers},
                   createdBy, createdAtMs}]
  --export S       one saved scenario (by id, or the latest saved under a name) as the export JSON:
                   {format: "voidcast-scenario/1", id, name, target, createdBy, createdAt, scenario}

  exit codes: 0 done, 2 usage, 4 no database or no such saved scenario`,
  async run(argv, io) {
    const { values } = parseOptions(argv, {
      pair: { type: 'string' },
      lot: { type: 'string' },
      json: { type: 'boolean' },
      export: { type: 'string' },
      data: { type: 'string' },
    });
    if (values.pair !== undefined && values.lot !== undefined)
      throw new UsageError('give at most one of --pair or --lot');
    if (values.export !== undefined && (values.pair !== undefined || values.lot !== undefined || values.json))
      throw new UsageError('--export takes no other option but --data');
    const { db, file } = openExisting(values.data, io);
    if (!db) {
      io.err(`voidcast scenarios: no database at ${file} (import data or start the server first)\n`);
      return EXIT.notFound;
    }
    try {
      if (values.export !== undefined) {
        const key = /^\d+$/.test(values.export) ? Number(values.export) : values.export;
        const s = loadScenario(db, key);
        if (!s) {
          io.err(`voidcast scenarios: no saved scenario "${values.export}"\n`);
          return EXIT.notFound;
        }
        io.out(`${JSON.stringify(exportScenario(s), null, 2)}\n`);
        return EXIT.ok;
      }
      const target =
        values.pair !== undefined
          ? { kind: 'pair' as const, id: values.pair }
          : values.lot !== undefined
            ? { kind: 'lot' as const, id: values.lot }
            : undefined;
      const list = listScenarios(db, target);
      if (values.json) {
        io.out(`${JSON.stringify(list)}\n`);
        return EXIT.ok;
      }
      if (list.length === 0) {
        io.out('No saved scenarios.\n');
        return EXIT.ok;
      }
      const lines = list.flatMap((s) => [
        `${s.id}  "${s.name}"  ${s.target ? `${s.target.kind} ${s.target.id}` : 'any pair or lot'}  by ${s.createdBy}, ${new Date(s.createdAtMs).toISOString()}`,
        ...s.scenario.levers.map((l) => `      - ${leverWords(l)}`),
      ]);
      io.out(`${lines.join('\n')}\n`);
      return EXIT.ok;
    } finally {
      db.close();
    }
  },
};
