import { existsSync } from 'node:fs';
import { join, resolve } from 'node:path';
import { backupDatabase } from '../../store/backup.ts';
import { DATABASE_FILE_NAME, openDatabase } from '../../store/db.ts';
import { parseOptions } from '../args.ts';
import { type Command, EXIT, UsageError } from '../io.ts';
import { resolveDataDir } from './serve.ts';

export const backup: Command = {
  name: 'backup',
  summary: 'copy the database to a file, safely while the server runs',
  usage: `voidcast backup FILE [--data DIR]

  FILE        the copy to write (must not exist yet)
  --data DIR  data directory holding voidcast.db (default $VOIDCAST_DATA, else ./data)

The copy is one consistent snapshot (SQLite's online backup), checked with PRAGMA integrity_check
before it is given its name. Restore: stop the server, put the copy in place of DIR/voidcast.db
(removing voidcast.db-wal and voidcast.db-shm beside it), start again (docs/cli.md).

  exit codes: 0 backed up, 2 usage, 1 the file exists already or cannot be written, 4 no database`,
  async run(argv, io) {
    const { values, positionals } = parseOptions(argv, { data: { type: 'string' } }, true);
    if (positionals.length !== 1) throw new UsageError('name one file to write the backup to');
    const target = resolve(io.cwd, positionals[0]!);
    const source = join(resolveDataDir(values.data, io), DATABASE_FILE_NAME);
    if (!existsSync(source)) {
      io.err(`voidcast backup: there is no database at ${source}\n`);
      return EXIT.notFound;
    }
    if (existsSync(target)) {
      io.err(`voidcast backup: ${target} exists already; name a new file (a backup never overwrites)\n`);
      return EXIT.failure;
    }
    const db = openDatabase(source);
    try {
      const r = await backupDatabase(db, target);
      io.out(
        `backed up ${source} to ${r.file}: ${r.pages} pages, ${r.bytes} bytes, schema version ${r.schemaVersion}, integrity ok\n`,
      );
      return EXIT.ok;
    } finally {
      db.close();
    }
  },
};
