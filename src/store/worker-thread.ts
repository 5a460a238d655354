/**
 * Worker threads that open their own connection to the data file: the web server's imports
 * (src/web/import-worker.ts) and a lot's second assessment thread (src/engine/parallel.ts). It
 * lives with the store because what such a thread shares with its parent is the database file.
 *
 * The sources run as TypeScript through tsx (as bin/voidcast.js does for the main thread), so a
 * thread starts from a small CommonJS bootstrap that registers tsx's loader and then imports the
 * module that asked for it; that module sees `workerData` and runs its thread side.
 */
import { readFileSync } from 'node:fs';
import { createRequire } from 'node:module';
import { dirname, join } from 'node:path';
import { pathToFileURL } from 'node:url';
import { parentPort, Worker } from 'node:worker_threads';
import { type Db, openDatabase } from './db.ts';

const require = createRequire(import.meta.url);

const BOOTSTRAP = `
const { workerData } = require('node:worker_threads');
import(workerData.tsxApi).then((tsx) => { tsx.register(); return import(workerData.entry); });
`;

/** File URL of tsx's ESM register API (package export "./esm/api", import condition). */
function tsxApiUrl(): string {
  const pkgPath = require.resolve('tsx/package.json');
  const pkg = JSON.parse(readFileSync(pkgPath, 'utf8')) as {
    exports: Record<string, string | { import?: { default?: string } }>;
  };
  const entry = pkg.exports['./esm/api'];
  const rel = typeof entry === 'string' ? entry : entry?.import?.default;
  if (!rel) throw new Error('tsx does not export ./esm/api');
  return pathToFileURL(join(dirname(pkgPath), rel)).href;
}

/**
 * Starts a thread that imports the module at `entryUrl` (its import.meta.url) with `data` as its
 * workerData (plus the two bootstrap fields `tsxApi` and `entry`).
 */
export function startModuleWorker(entryUrl: string, data: Record<string, unknown>): Worker {
  return new Worker(BOOTSTRAP, {
    eval: true,
    workerData: { ...data, tsxApi: tsxApiUrl(), entry: entryUrl },
  });
}

/** The database's file, or null when it lives in memory (then there is nothing to share). */
export function databaseFile(db: Db): string | null {
  return db.memory || db.name === '' || db.name === ':memory:' ? null : db.name;
}

/** An error as it crosses between threads: its class name, message and the engine's `kind`, if any. */
export interface ThreadError {
  name: string;
  message: string;
  kind?: string;
}

type Reply<R> = { id: number; ok: true; value: R } | { id: number; ok: false; error: ThreadError };

/**
 * One worker thread that answers jobs in the order they come: started on the first job and kept;
 * ref'd only while a job is out (a process waits for its answer, never for an idle thread). If the
 * thread fails or exits, the jobs out are rejected and the next job starts a new one.
 */
export class JobThread<Q, R> {
  private worker: Worker | null = null;
  private next = 1;
  private readonly pending = new Map<number, { resolve: (r: R) => void; reject: (e: unknown) => void }>();

  constructor(
    private readonly entryUrl: string,
    private readonly data: Record<string, unknown>,
    /** Turns an error from the thread back into the caller's error (its class where one is known). */
    private readonly revive: (e: ThreadError) => Error = (e) => new Error(e.message),
  ) {}

  /** Starts the thread now (its modules load there), so that the first job does not wait for it. */
  warm(): void {
    if (!this.worker) this.start();
  }

  private start(): Worker {
    const w = startModuleWorker(this.entryUrl, this.data);
    w.on('message', (m: Reply<R>) => {
      const p = this.pending.get(m.id);
      if (!p) return;
      this.pending.delete(m.id);
      if (this.pending.size === 0) w.unref(); // idle: it must not hold the process open
      if (m.ok) p.resolve(m.value);
      else p.reject(this.revive(m.error));
    });
    const fail = (e: Error) => {
      for (const p of this.pending.values()) p.reject(e);
      this.pending.clear();
      if (this.worker === w) this.worker = null;
    };
    w.on('error', fail);
    w.on('exit', (code) => fail(new Error(`a worker thread exited with code ${code}`)));
    // Unref'd while idle, after the listeners (adding a 'message' listener refs it again); run()
    // refs it while a job is out, or a process awaiting the answer (the CLI) could end without it.
    w.unref();
    this.worker = w;
    return w;
  }

  run(job: Q): Promise<R> {
    const w = this.worker ?? this.start();
    const id = this.next++;
    return new Promise((resolve, reject) => {
      this.pending.set(id, { resolve, reject });
      w.ref();
      w.postMessage({ id, job });
    });
  }

  /** Ends the thread (tests; a server shutting down). */
  async stop(): Promise<void> {
    const w = this.worker;
    this.worker = null;
    if (w) await w.terminate();
  }
}

/**
 * The thread side of a JobThread: answers each job with `handle`'s value, or with the error it
 * threw (name, message and `kind`).
 */
export function serveJobs<Q, R>(handle: (job: Q) => R): void {
  const port = parentPort!;
  port.on('message', ({ id, job }: { id: number; job: Q }) => {
    let reply: Reply<R>;
    try {
      reply = { id, ok: true, value: handle(job) };
    } catch (e) {
      const err = e instanceof Error ? e : new Error(String(e));
      const kind = (err as { kind?: unknown }).kind;
      reply = {
        id,
        ok: false,
        error: { name: err.name, message: err.message, ...(typeof kind === 'string' ? { kind } : {}) },
      };
    }
    try {
      port.postMessage(reply);
    } catch (e) {
      // a value that cannot be cloned (a function, a class with private state): a bug, said so
      port.postMessage({ id, ok: false, error: { name: 'Error', message: String(e) } } satisfies Reply<R>);
    }
  });
}

const connections = new Map<string, Db>();

/** This thread's own connection to a data file: opened on first use, then kept for the thread's life. */
export function threadConnection(file: string): Db {
  let db = connections.get(file);
  if (!db) {
    db = openDatabase(file);
    connections.set(file, db);
  }
  return db;
}
