import { resolve } from 'node:path';
import { isLoopbackBind, parseAllowedHosts } from '../../web/hardening.ts';
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
  usage: `voidcast serve [--port N] [--host ADDR] [--data DIR] [--empty] [--open] [--drop DIR] [--allowed-host NAME]...

  --port N     port to listen on (default $PORT, else ${DEFAULT_PORT}; 0 picks a free one)
  --host ADDR  address to bind (default ${DEFAULT_HOST}: this machine only)
  --data DIR   data directory holding voidcast.db (default $VOIDCAST_DATA, else ./data)
  --empty      start without loading the demo line (also VOIDCAST_EMPTY=1)
  --open       open mode: nobody signs in, a banner on every page says so; this machine only
               (also VOIDCAST_OPEN=1). Without it everyone signs in; the first start makes the
               administrator "admin" with VOIDCAST_ADMIN_PASSWORD, else a one-time password printed once
  --drop DIR   watch DIR for counter-samples files (*.csv) and import each once it stops growing
               (also VOIDCAST_DROP); done files move to DIR/imported or DIR/rejected with a report
  --allowed-host NAME
               a host name clients may use besides the loopback names (repeatable; also
               VOIDCAST_ALLOWED_HOSTS, comma-separated); any other Host header is refused

  exit codes: 0 stopped with Ctrl+C or SIGTERM, 2 a bad option or port, 1 cannot start (e.g. port taken)`,
  async run(argv, io) {
    const { values } = parseOptions(argv, {
      port: { type: 'string' },
      host: { type: 'string' },
      data: { type: 'string' },
      empty: { type: 'boolean' },
      'allowed-host': { type: 'string', multiple: true },
      open: { type: 'boolean' },
      drop: { type: 'string' },
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
    const allowedHosts = [
      ...parseAllowedHosts(io.env.VOIDCAST_ALLOWED_HOSTS),
      ...(values['allowed-host'] ?? []).flatMap((h) => parseAllowedHosts(h)),
    ];
    const open = values.open === true || io.env.VOIDCAST_OPEN === '1';
    if (open && !isLoopbackBind(host))
      throw new UsageError(
        `--open serves this machine only; binding to ${host} requires accounts (drop --open)`,
      );
    const loadDemo = !(values.empty || io.env.VOIDCAST_EMPTY === '1');
    const log = (l: string) => io.out(`${l}\n`);
    const server = await startServer({
      host,
      port,
      dataDir,
      log,
      allowedHosts,
      auth: open ? 'open' : 'accounts',
      dropDir:
        values.drop !== undefined || (io.env.VOIDCAST_DROP ?? '') !== ''
          ? resolve(io.cwd, values.drop ?? io.env.VOIDCAST_DROP!)
          : undefined,
      adminPassword: io.env.VOIDCAST_ADMIN_PASSWORD,
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
    if (server.firstAdmin)
      io.out(
        server.firstAdmin.oneTimePassword
          ? `First start: sign in at ${server.url}login as "${server.firstAdmin.username}" with the one-time password\n\n    ${server.firstAdmin.oneTimePassword}\n\nIt is shown only now; you choose your own password at the first sign-in.\n`
          : `First start: sign in as "${server.firstAdmin.username}" with the password in VOIDCAST_ADMIN_PASSWORD.\n`,
      );
    if (open) io.out('Open mode: nobody signs in (this machine only).\n');
    io.out(`voidcast is running at ${server.url}  (data: ${dataDir}; Ctrl+C stops it)\n`);
    await stopped;
    return EXIT.ok;
  },
};
