/**
 * The pages' heavy engine work on a thread of its own, so that the web server's event loop goes on
 * answering other requests (kept pages, static files, /healthz) while a page is computed for the
 * first time after the data change: a lot's assessment for its page and the lots' queue, the
 * calibration with its backtest, the adders and removal curves learned from the scans, an area's
 * audit, the line view.
 *
 * Each job is an engine function of the database and plain arguments whose result is plain data
 * (structured-cloned back); the thread opens its own connection to the same file (WAL: it reads
 * what is committed) and keeps its own results per data generation (src/engine/cache.ts), and the
 * calling thread keeps the answer's promise per data generation too (`keptResultAsync`), so
 * concurrent requests share one computation. The engine's input errors come back as their own
 * classes (EngineInputError, AuditInputError with its kind). A database in memory has no file to
 * share: the job runs on the calling thread, with the same result (tested).
 */
import { isMainThread, workerData } from 'node:worker_threads';
import type { Db } from '../store/db.ts';
import {
  databaseFile,
  JobThread,
  serveJobs,
  type ThreadError,
  threadConnection,
} from '../store/worker-thread.ts';
import type { AuditOptions } from './audit/audit.ts';
import { keptAreaAudit } from './audit/audit.ts';
import { AuditInputError } from './audit/errors.ts';
import { chamberHistoryFromDb, lineParetoFromDb } from './audit/line-view.ts';
import type { AuditPeriod } from './audit/types.ts';
import { keptResult, keptResultAsync } from './cache.ts';
import { calibrationViewFromDb } from './learn/calibration-view.ts';
import { learnAddersFrom, learnDataFrom, learnRemovalFrom } from './learn/index.ts';
import { lotViewFromDb } from './lot-view.ts';
import { EngineInputError } from './pair.ts';

/** The jobs: each an engine function of the database and plain arguments. */
const JOBS = {
  lot: (db: Db, a: { lotId: string; asOfMs: number; detail: 'summary' | 'full' }) =>
    keptResult(db, `view|lot|${a.lotId}|${a.asOfMs}|${a.detail}`, () =>
      lotViewFromDb(db, a.lotId, a.asOfMs, a.detail),
    ),
  calibration: (db: Db, _a: Record<string, never>) =>
    keptResult(db, 'view|calibration', () => calibrationViewFromDb(db)),
  areaAudit: (db: Db, a: { areaId: string; opts: AuditOptions }) => keptAreaAudit(db, a.areaId, a.opts),
  learned: (db: Db, _a: Record<string, never>) =>
    keptResult(db, 'view|learned', () => {
      const data = learnDataFrom(db);
      return { adders: learnAddersFrom(data), removal: learnRemovalFrom(data), cleans: data.cleans };
    }),
  line: (db: Db, a: { period: AuditPeriod; asOfMs: number }) => ({
    pareto: lineParetoFromDb(db, a.period, a.asOfMs),
    histories: chamberHistoryFromDb(db, undefined, a.period),
  }),
};

type Jobs = typeof JOBS;
export type ViewJob = keyof Jobs;
type Args<K extends ViewJob> = Parameters<Jobs[K]>[1];
type Result<K extends ViewJob> = ReturnType<Jobs[K]>;

interface Message {
  dbFile: string;
  job: ViewJob;
  args: unknown;
}

function revive(e: ThreadError): Error {
  if (e.name === 'EngineInputError') return new EngineInputError(e.message);
  if (e.name === 'AuditInputError')
    return new AuditInputError(e.message, e.kind === 'not-found' ? 'not-found' : 'bad-input');
  return new Error(e.message);
}

let thread: JobThread<Message, unknown> | null = null;

/** Stops the pages' thread, if one was started (tests; a server shutting down). */
export async function stopViewThread(): Promise<void> {
  await thread?.stop();
  thread = null;
}

function threadFor(): JobThread<Message, unknown> {
  thread ??= new JobThread<Message, unknown>(import.meta.url, { voidcastViewThread: true }, revive);
  return thread;
}

/**
 * Starts the pages' thread ahead of its first job (a server at start: the thread loads the engine
 * meanwhile instead of on the first page asked for). Nothing for a database in memory.
 */
export function warmViewThread(db: Db): void {
  if (databaseFile(db) !== null) threadFor().warm();
}

/**
 * Runs a job on the pages' thread (on this one for a database in memory), kept per data
 * generation under `job` and its arguments.
 */
export function onViewThread<K extends ViewJob>(db: Db, job: K, args: Args<K>): Promise<Result<K>> {
  return keptResultAsync(db, `view-thread|${job}|${JSON.stringify(args)}`, () => {
    const file = databaseFile(db);
    if (file === null) return Promise.resolve().then(() => runHere(db, job, args));
    return threadFor().run({ dbFile: file, job, args }) as Promise<Result<K>>;
  });
}

/** The job on this thread (the plain twin of onViewThread, and the thread's own work). */
export function runHere<K extends ViewJob>(db: Db, job: K, args: Args<K>): Result<K> {
  return (JOBS[job] as (db: Db, a: Args<K>) => Result<K>)(db, args);
}

// ── the thread ─────────────────────────────────────────────────────────────────────────────────
if (!isMainThread && (workerData as { voidcastViewThread?: boolean } | null)?.voidcastViewThread === true) {
  serveJobs((m: Message) => {
    const db = threadConnection(m.dbFile);
    return runHere(db, m.job, m.args as never);
  });
}
