/** Starts the HTTP server on the loopback interface (by default) for a data directory. */

import type { AddressInfo } from 'node:net';
import { type ServerType, serve } from '@hono/node-server';
import { stopViewThread, warmViewThread } from '../engine/view-thread.ts';
import { type Db, openDataDir } from '../store/db.ts';
import { createApp } from './app.ts';
import { ensureFirstAdmin } from './auth/bootstrap.ts';
import { sessionSecret } from './auth/secret.ts';
import type { AppContext } from './context.ts';
import { type DropFolder, watchDropFolder } from './drop-folder.ts';
import { isLoopbackBind } from './hardening.ts';
import { VERSION } from './version.ts';

export interface ServerOptions {
  host: string;
  port: number;
  dataDir: string;
  log?: (line: string) => void;
  /** Host names besides the loopback ones the server answers to (DNS-rebinding defence). */
  allowedHosts?: string[];
  /**
   * 'accounts' (sign-in required; the first start makes the first administrator) or 'open' (nobody
   * signs in: loopback addresses only).
   */
  auth?: 'accounts' | 'open';
  /** VOIDCAST_ADMIN_PASSWORD: the first administrator's password instead of a one-time one. */
  adminPassword?: string;
  /** A folder to watch for counter-samples files (src/web/drop-folder.ts). */
  dropDir?: string;
  /** Runs after the database is open and migrated, before the server listens (e.g. the demo loader). */
  beforeListen?: (db: Db) => Promise<void> | void;
}

export interface RunningServer {
  url: string;
  /** Set on the first start with accounts: who signs in first, and the one-time password (null when given). */
  firstAdmin: { username: string; oneTimePassword: string | null } | null;
  port: number;
  db: Db;
  close: () => Promise<void>;
}

/** A specific bind address is a name clients may use; a wildcard (0.0.0.0, ::) is not. */
function bindName(host: string): string[] {
  const h = host.trim();
  if (h === '0.0.0.0' || h === '::' || h === '[::]' || h === '') return [];
  return [h.includes(':') && !h.startsWith('[') ? `[${h}]` : h];
}

export async function startServer(opts: ServerOptions): Promise<RunningServer> {
  const log = opts.log ?? ((line: string) => process.stdout.write(`${line}\n`));
  const mode = opts.auth ?? 'open';
  if (mode === 'open' && !isLoopbackBind(opts.host))
    throw new Error(
      `open mode serves this machine only; binding to ${opts.host} requires accounts (start without --open)`,
    );
  const db = openDataDir(opts.dataDir, log);
  if (opts.beforeListen) await opts.beforeListen(db);
  let firstAdmin: RunningServer['firstAdmin'] = null;
  if (mode === 'accounts') {
    const made = await ensureFirstAdmin(db, opts.adminPassword);
    if (made.created) firstAdmin = { username: made.username, oneTimePassword: made.oneTimePassword };
  }
  const ctx: AppContext = {
    db,
    dataDir: opts.dataDir,
    version: VERSION,
    log,
    allowedHosts: [...(opts.allowedHosts ?? []), ...bindName(opts.host)],
    auth: mode === 'accounts' ? { mode, sessionSecret: sessionSecret(opts.dataDir) } : { mode },
  };
  const app = createApp(ctx);
  warmViewThread(db);
  const server: ServerType = await new Promise((resolve, reject) => {
    const s = serve({ fetch: app.fetch, hostname: opts.host, port: opts.port }, () => resolve(s));
    s.once('error', reject);
  });
  const port = (server.address() as AddressInfo).port;
  const drop: DropFolder | null = opts.dropDir ? watchDropFolder(db, opts.dropDir, log) : null;
  const shownHost = opts.host.includes(':') ? `[${opts.host}]` : opts.host;
  return {
    url: `http://${shownHost}:${port}/`,
    firstAdmin,
    port,
    db,
    close: () =>
      new Promise<void>((resolve) => {
        server.close(async () => {
          await drop?.stop();
          await stopViewThread();
          db.close();
          resolve();
        });
        // Keep-alive sockets would hold close() open; end them.
        (server as unknown as { closeAllConnections?: () => void }).closeAllConnections?.();
      }),
  };
}
