import { resolve } from 'node:path';
import { startServer } from '../../web/server.ts';
import { parseOptions, parsePort } from '../args.ts';
import { loadDemoOnce } from '../demo.ts';
import { type CliIo, type Command, EXIT, UsageError } from '../io.ts';

export const DEFAULT_HOST = '127.0.0.1';
export const DEFAULT_PORT = 4180;

/** The data directory: --data, else $VOIDCAST_DATA, else ./data under the working directory. */
export function resolveDataDir(flag: string | undefined, io: CliIo): string {
  return resolve(io.cwd, flag ?? io.env.VOIDCAST_DATA ?? 'data');
}

export const serve: Command = {
  name: 'serve',
  summary: 'run the web application',
  usage: `voidcast serve [--port N] [--host ADDR] [--data DIR] [--empty]

  --port N     port to listen on (default $PORT, else ${DEFAULT_PORT}; 0 picks a free one)
  --host ADDR  address to bind (default ${DEFAULT_HOST}: this machine only)
  --data DIR   data directory holding voidcast.db (default $VOIDCAST_DATA, else ./data)
  --empty      start without loading the demo line (also VOIDCAST_EMPTY=1)

  exit codes: 0 stopped with Ctrl+C or SIGTERM, 2 a bad option or port, 1 cannot start (e.g. port taken)`,
  async run(argv, io) {
    const { values } = parseOptions(argv, {
      port: { type: 'string' },
      host: { type: 'string' },
      data: { type: 'string' },
      empty: { type: 'boolean' },
    });
    const port =
      values.port !== undefined
        ? parsePort(values.port, '--port')
        : io.env.PORT !== undefined && io.env.PORT !== ''
          ? parsePort(io.env.PORT, 'PORT')
          : DEFAULT_PORT;
    const host = values.host ?? DEFAULT_HOST;
    if (host.trim() === '') throw new UsageError('--host must not be empty');
    const dataDir = resolveDataDir(values.data, io);
    const loadDemo = !(values.empty || io.env.VOIDCAST_EMPTY === '1');
    const log = (l: string) => io.out(`${l}\n`);
    const server = await startServer({
      host,
      port,
      dataDir,
      log,
      // First start on a fresh data directory: import the demo line once (src/cli/demo.ts).
      beforeListen: loadDemo
        ? async (db) => {
            await loadDemoOnce(db, { log });
          }
        : undefined,
    });
    // The signal handlers go in before the address is printed: whoever reads that line may stop the
    // server at once, and a signal with no handler would kill it without closing the database.
    const stopped = new Promise<void>((done) => {
      const stop = () => {
        process.off('SIGINT', stop);
        process.off('SIGTERM', stop);
        void server.close().then(done);
      };
      process.on('SIGINT', stop);
      process.on('SIGTERM', stop);
    });
    io.out(`voidcast is running at ${server.url}  (data: ${dataDir}; Ctrl+C stops it)\n`);
    await stopped;
    return EXIT.ok;
  },
};
