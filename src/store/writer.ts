/**
 * Writes that wait their turn. SQLite lets one writer at a time hold a database (WAL mode: readers
 * never wait). A second process — a CLI import while the server imports, or two CLIs — used to fail
 * with "database is locked" once SQLite's busy timeout ran out.
 *
 * Every write transaction goes through `writeTransaction`: it starts with BEGIN IMMEDIATE (the write
 * lock is taken at the start, so a transaction that has read never has to upgrade — which SQLite may
 * refuse at once with SQLITE_BUSY whatever the timeout), lets SQLite wait its busy timeout, and when
 * that runs out tells the user once (through the reporter the process registered with
 * `onWriterWait`) and tries again, until `maxWaitMs` has passed. Only the BEGIN is retried: once the
 * transaction's body has run, an error is the body's and is passed on.
 */
import type { Statement } from 'better-sqlite3';
import type { Db } from './db.ts';

/** How long a write waits for another writer before it gives up with a clear message (30 min). */
export const DEFAULT_MAX_WAIT_MS = 30 * 60_000;
const PAUSE_MS = 250;

const reporters = new WeakMap<Db, (message: string) => void>();
/** Write transactions committed through this connection (see `dataGeneration`). */
const committed = new WeakMap<Db, number>();

/**
 * The data's generation as this connection sees it: changes whenever a write transaction commits —
 * one of this connection's (counted by `writeTransaction`) or another connection's, in this process
 * (the import worker) or another (a CLI import), which SQLite's `PRAGMA data_version` reports.
 * Results kept for a generation (src/engine/cache.ts, src/web/page-cache.ts) are reused until it changes.
 */
export function dataGeneration(db: Db): string {
  let stmt = versionStatements.get(db);
  if (!stmt) {
    stmt = db.prepare('PRAGMA data_version').pluck();
    versionStatements.set(db, stmt);
  }
  return `${committed.get(db) ?? 0}.${stmt.get() as number}`;
}
const versionStatements = new WeakMap<Db, Statement>();

/** Where a connection says that it waits for another writer (stderr in the CLI, the log in the server). */
export function onWriterWait(db: Db, report: (message: string) => void): void {
  reporters.set(db, report);
}

/** A write waiting for another writer: since when (ms since the epoch), and the message told. */
export interface WriterWait {
  sinceMs: number;
  message: string;
}

const watchers = new WeakMap<Db, (wait: WriterWait | null) => void>();

/**
 * Follows a connection's waits as a state (for a page that shows it, e.g. a web import's job): the
 * wait when it is told, then null once the write has gone ahead or given up.
 */
export function watchWriterWait(db: Db, watch: (wait: WriterWait | null) => void): void {
  watchers.set(db, watch);
}

/** Thrown when another process held the database for longer than a write may wait. */
export class WriterWaitError extends Error {
  constructor(waitedMs: number) {
    super(
      `another process has been writing to the database for ${Math.round(waitedMs / 1000)} s; ` +
        'nothing was stored. Try again when it has finished.',
    );
    this.name = 'WriterWaitError';
  }
}

/** True for SQLite's "another connection holds the lock" errors. */
export function isBusyError(e: unknown): boolean {
  const code = (e as { code?: unknown })?.code;
  return typeof code === 'string' && (code.startsWith('SQLITE_BUSY') || code.startsWith('SQLITE_LOCKED'));
}

function pause(ms: number): void {
  Atomics.wait(new Int32Array(new SharedArrayBuffer(4)), 0, 0, ms);
}

/**
 * Runs `body` in one write transaction (BEGIN IMMEDIATE … COMMIT, ROLLBACK on any throw), waiting
 * for another writer as long as it takes up to `maxWaitMs`, and saying so once.
 */
export function writeTransaction<T>(
  db: Db,
  body: () => T,
  opts: {
    maxWaitMs?: number;
    /**
     * Bookkeeping that no assessment, page or answer depends on (an API token's last-used time):
     * it does not start a new data generation, so kept answers stay.
     */
    bookkeeping?: boolean;
  } = {},
): T {
  if (db.inTransaction) return body();
  const maxWaitMs = opts.maxWaitMs ?? DEFAULT_MAX_WAIT_MS;
  let started = false;
  let told = false;
  const watch = watchers.get(db);
  const tx = db.transaction(() => {
    started = true;
    if (told) watch?.(null);
    return body();
  });
  const t0 = Date.now();
  for (;;) {
    try {
      const result = tx.immediate();
      if (!opts.bookkeeping) committed.set(db, (committed.get(db) ?? 0) + 1);
      return result;
    } catch (e) {
      if (started || !isBusyError(e)) throw e;
      const waited = Date.now() - t0;
      if (waited >= maxWaitMs) {
        if (told) watch?.(null);
        throw new WriterWaitError(waited);
      }
      if (!told) {
        told = true;
        const message =
          `waiting: another process is writing to ${db.name === ':memory:' ? 'the database' : db.name}; ` +
          'this write goes ahead as soon as it has finished (nothing is lost by waiting)';
        (reporters.get(db) ?? (() => undefined))(message);
        watch?.({ sinceMs: t0, message });
      }
      pause(PAUSE_MS);
    }
  }
}
