/**
 * A lot's pairs assessed on two threads: this one and one worker thread with its own read-only
 * connection to the same database file. Each pair's figures depend only on the pair and the lot's
 * line data (every random stream is seeded per scenario, caches are keyed by content), so splitting
 * the pairs changes nothing: the result equals assessLotFromDb's exactly (tested).
 *
 * With loader.ts this is the engine's only database access (the worker opens its own connection).
 *
 * The worker is started once and kept; it is ref'd only while a job is out (so a process waits for
 * its answer, and never stays open for an idle worker). An in-memory database, a small lot or a
 * failing worker fall back to the single-thread path.
 */
import { isMainThread, workerData } from 'node:worker_threads';
import type { Db } from '../store/db.ts';
import { databaseFile, JobThread, serveJobs, threadConnection } from '../store/worker-thread.ts';
import { assessLotFromDb, assessLotPairsFromDb, lotPairIds, readProductInput } from './loader.ts';
import { summariseLot } from './lot.ts';
import type { ParameterSet } from './parameter-set-types.ts';
import { readAdoptedParameterSet } from './parameter-sets.ts';
import { parameterSetRef } from './parameters.ts';
import type { AssessOptions, LotAssessment, PairAssessment } from './types.ts';

/** Below this many pairs a second thread costs more than it saves. */
const MIN_PAIRS_FOR_WORKER = 4;

interface Job {
  dbFile: string;
  lotId: string;
  pairIds: string[];
  opts: AssessOptions;
  /** The parameter set this thread read (both threads apply the same one). */
  set: ParameterSet | null;
}

let shared: JobThread<Job, PairAssessment[]> | null = null;

/** Stops the shared worker thread, if one was started. */
export async function stopAssessWorker(): Promise<void> {
  await shared?.stop();
  shared = null;
}

/**
 * assessLotFromDb on two threads: the later half of the lot's pairs in the worker, the first half
 * here, at the same time; then the lot's summary from all of them in order.
 */
export async function assessLotFromDbParallel(
  db: Db,
  lotId: string,
  opts: AssessOptions,
): Promise<LotAssessment | null> {
  const file = databaseFile(db);
  const ids = lotPairIds(db, lotId);
  if (ids === null) return null;
  if (file === null || ids.length < MIN_PAIRS_FOR_WORKER || opts.config !== undefined)
    return assessLotFromDb(db, lotId, opts);
  // Read once, here, and handed to the worker: a set adopted while the lot is being assessed must
  // not split the lot between two sets.
  const set = readAdoptedParameterSet(db);
  const cut = Math.floor(ids.length / 2);
  const mine = ids.slice(0, cut);
  const theirs = ids.slice(cut);
  shared ??= new JobThread<Job, PairAssessment[]>(import.meta.url, { voidcastAssessWorker: true });
  const remote = shared.run({ dbFile: file, lotId, pairIds: theirs, opts, set });
  // If the worker fails, this thread assesses its half too; the answer is the same, only slower.
  remote.catch(() => {});
  const here = assessLotPairsFromDb(db, lotId, mine, opts, set);
  if (!here) return null;
  let there: PairAssessment[];
  try {
    there = await remote;
  } catch {
    there = assessLotPairsFromDb(db, lotId, theirs, opts, set)?.pairs ?? [];
  }
  const product = readProductInput(db, here.productId);
  if (!product) return assessLotFromDb(db, lotId, opts); // the serial path reports the missing product
  return summariseLot(
    { lotId, productId: here.productId },
    product,
    [...here.pairs, ...there],
    opts,
    parameterSetRef(set),
  );
}

// ── the worker thread ──────────────────────────────────────────────────────────────────────────
function workerMain(): void {
  serveJobs((job: Job) => {
    const db = threadConnection(job.dbFile);
    return assessLotPairsFromDb(db, job.lotId, job.pairIds, job.opts, job.set)?.pairs ?? [];
  });
}

if (!isMainThread && (workerData as { voidcastAssessWorker?: boolean } | null)?.voidcastAssessWorker === true)
  workerMain();
