/**
 * `voidcast demo load [--data DIR] [--from DIR]`: imports the demo line (sample-counts/) into a data
 * directory's database now — the same loader `voidcast serve` runs on a fresh data directory.
 * Re-running it on a database that already holds the demo changes nothing (every file is
 * 'unchanged': imports are idempotent by content).
 */
import { resolve } from 'node:path';
import { openDataDir } from '../../store/db.ts';
import { parseOptions } from '../args.ts';
import { DEFAULT_DEMO_DIR, demoLoaded, loadDemo, recordDemo } from '../demo.ts';
import { type Command, EXIT, UsageError } from '../io.ts';
import { resolveDataDir } from './serve.ts';

export const demo: Command = {
  name: 'demo',
  summary: 'load the demo line (invented data) into the database',
  usage: `voidcast demo load [--data DIR] [--from DIR]

  --data DIR   data directory holding voidcast.db (default $VOIDCAST_DATA, else ./data)
  --from DIR   the demo files (default: sample-counts/ of this installation)

  exit codes: 0 loaded (or already there), 2 usage, 1 the demo files cannot be read`,
  async run(argv, io) {
    const { values, positionals } = parseOptions(
      argv,
      { data: { type: 'string' }, from: { type: 'string' } },
      true,
    );
    if (positionals.length !== 1 || positionals[0] !== 'load')
      throw new UsageError(
        positionals.length ? `unknown action "${positionals.join(' ')}"` : 'say what to do: load',
      );
    const dataDir = resolveDataDir(values.data, io);
    const dir = values.from ? resolve(io.cwd, values.from) : DEFAULT_DEMO_DIR;
    const db = openDataDir(dataDir, (m) => io.err(`voidcast demo: ${m}\n`));
    try {
      const before = demoLoaded(db);
      const r = await loadDemo(db, { dir, log: (l) => io.out(`${l}\n`) });
      recordDemo(db, r);
      const changed = r.reports.filter((x) => x.status === 'imported').length;
      io.out(
        before && changed === 0
          ? `the demo was loaded already: ${r.files} files unchanged (${dataDir})\n`
          : `demo loaded into ${dataDir}: ${r.files} files, ${r.rows} rows; assess it as of ${r.asOf}\n`,
      );
      return EXIT.ok;
    } finally {
      db.close();
    }
  },
};
