/**
 * A small in-memory registry of background jobs inside the server process: id → progress and
 * result. Jobs run one at a time in the order they were started (imports write to one SQLite
 * database, one transaction per file, so running them side by side would only make them wait on
 * each other). A finished job is kept for `ttlMs` after it finished, then forgotten; at most
 * `maxJobs` finished jobs are kept (the oldest go first). Running and queued jobs never expire.
 *
 * Nothing here knows about imports or HTTP: the work is a function that reports progress.
 */
import { randomUUID } from 'node:crypto';

export type JobState = 'queued' | 'running' | 'done' | 'failed';

export interface Job<P, R> {
  /** Random (RFC 4122 version 4 UUID): not guessable from another job's id. */
  readonly id: string;
  state: JobState;
  progress: P;
  result: R | null;
  /** A message for people when the work threw (the stack goes to the log, not here). */
  error: string | null;
  readonly createdAt: number;
  startedAt: number | null;
  finishedAt: number | null;
}

export interface JobRegistryOptions {
  /** How long a finished job stays readable (default 60 min). */
  ttlMs?: number;
  /** Most finished jobs kept (default 200). */
  maxJobs?: number;
  /** The clock (milliseconds since the epoch); tests pass their own. */
  now?: () => number;
  /** Where to write the error of a job that threw (e.g. the server log). */
  log?: (line: string) => void;
}

export interface JobRegistry<P, R> {
  /**
   * Queues `work`; it runs when the jobs before it have finished. `work` gets `update` to merge
   * progress into the job, and returns the result. The job is returned at once, still queued.
   */
  start(progress: P, work: (update: (patch: Partial<P>) => void, job: Job<P, R>) => Promise<R>): Job<P, R>;
  /** The job, or undefined when the id is unknown or the job has expired. */
  get(id: string): Job<P, R> | undefined;
  /** All jobs still held, newest first. */
  list(): Job<P, R>[];
  /** Resolves when every job started so far has finished (for tests and shutdown). */
  idle(): Promise<void>;
}

export const DEFAULT_JOB_TTL_MS = 60 * 60 * 1000;

export function createJobRegistry<P extends object, R>(options: JobRegistryOptions = {}): JobRegistry<P, R> {
  const ttl = options.ttlMs ?? DEFAULT_JOB_TTL_MS;
  const maxJobs = options.maxJobs ?? 200;
  const now = options.now ?? Date.now;
  const log = options.log ?? (() => undefined);
  const jobs = new Map<string, Job<P, R>>();
  let tail: Promise<void> = Promise.resolve();

  const sweep = () => {
    const t = now();
    const finished: Job<P, R>[] = [];
    for (const j of jobs.values()) {
      if (j.finishedAt === null) continue;
      if (t - j.finishedAt >= ttl) jobs.delete(j.id);
      else finished.push(j);
    }
    if (finished.length > maxJobs) {
      finished.sort((a, b) => (a.finishedAt ?? 0) - (b.finishedAt ?? 0));
      for (const j of finished.slice(0, finished.length - maxJobs)) jobs.delete(j.id);
    }
  };

  return {
    start(progress, work) {
      sweep();
      const job: Job<P, R> = {
        id: randomUUID(),
        state: 'queued',
        progress: { ...progress },
        result: null,
        error: null,
        createdAt: now(),
        startedAt: null,
        finishedAt: null,
      };
      jobs.set(job.id, job);
      const update = (patch: Partial<P>) => {
        job.progress = { ...job.progress, ...patch };
      };
      const run = async () => {
        job.state = 'running';
        job.startedAt = now();
        try {
          job.result = await work(update, job);
          job.state = 'done';
        } catch (err) {
          job.state = 'failed';
          job.error = 'The job stopped with an internal error. The details are in the server log.';
          log(`ERROR job ${job.id}: ${err instanceof Error ? (err.stack ?? err.message) : String(err)}`);
        } finally {
          job.finishedAt = now();
        }
      };
      tail = tail.then(run);
      return job;
    },
    get(id) {
      sweep();
      return jobs.get(id);
    },
    list() {
      sweep();
      return [...jobs.values()].sort((a, b) => b.createdAt - a.createdAt);
    },
    idle() {
      return tail;
    },
  };
}
