/**
 * Kept results: assessments (and what is made from them) reused until their inputs change.
 *
 * The engine is deterministic on its inputs (seeded Monte Carlo), so the same subject at the same
 * assessment time on the same data gives the same result. "The same data" is the store's data
 * generation (src/store/writer.ts `dataGeneration`): it changes whenever any write transaction
 * commits — an import, a parameter set adopted or reverted, a sign-off, a proposal, a setting — in
 * this process or another. Results are kept per database and generation; the first request after
 * a change finds the old generation gone and computes afresh (explicit invalidation, no time-outs).
 *
 * Bounded: at most `maxEntries` results and about `maxBytes` of strings per database (oldest first
 * out). Only values that are not mutated by their users may be kept.
 */
import type { Db } from '../store/db.ts';
import { dataGeneration } from '../store/writer.ts';

export interface KeptStats {
  hits: number;
  misses: number;
  /** Times the whole store was dropped because the data changed. */
  invalidations: number;
  entries: number;
}

interface Store {
  generation: string;
  entries: Map<string, { value: unknown; bytes: number }>;
  bytes: number;
  stats: KeptStats;
}

const stores = new WeakMap<Db, Store>();
const MAX_ENTRIES = 256;
const MAX_BYTES = 64 * 1024 * 1024;

function storeOf(db: Db): Store {
  const generation = dataGeneration(db);
  let s = stores.get(db);
  if (!s) {
    s = {
      generation,
      entries: new Map(),
      bytes: 0,
      stats: { hits: 0, misses: 0, invalidations: 0, entries: 0 },
    };
    stores.set(db, s);
  } else if (s.generation !== generation) {
    s.generation = generation;
    s.entries.clear();
    s.bytes = 0;
    s.stats.invalidations++;
  }
  return s;
}

/**
 * The result kept under `key` for the database's current data generation, else `compute()` (kept
 * for the next caller). Strings count by their length towards the byte bound; other values by 1 KB.
 */
export function keptResult<T>(db: Db, key: string, compute: () => T): T {
  const s = storeOf(db);
  const hit = s.entries.get(key);
  if (hit) {
    s.stats.hits++;
    // most recently used last
    s.entries.delete(key);
    s.entries.set(key, hit);
    return hit.value as T;
  }
  s.stats.misses++;
  const value = compute();
  put(s, key, value);
  return value;
}

/**
 * As keptResult for an asynchronous computation (e.g. on the worker thread). The promise itself is
 * kept at once, so that concurrent callers share one computation; a rejected one is dropped.
 */
export function keptResultAsync<T>(db: Db, key: string, compute: () => Promise<T>): Promise<T> {
  const s = storeOf(db);
  const hit = s.entries.get(key);
  if (hit) {
    s.stats.hits++;
    return hit.value as Promise<T>;
  }
  s.stats.misses++;
  const p = compute();
  put(s, key, p);
  p.catch(() => {
    if (s.entries.get(key)?.value === p) s.entries.delete(key);
  });
  return p;
}

function put(s: Store, key: string, value: unknown): void {
  const bytes = typeof value === 'string' ? value.length : 1024;
  s.entries.set(key, { value, bytes });
  s.bytes += bytes;
  while (s.entries.size > MAX_ENTRIES || (s.bytes > MAX_BYTES && s.entries.size > 1)) {
    const oldest = s.entries.keys().next().value as string;
    s.bytes -= s.entries.get(oldest)!.bytes;
    s.entries.delete(oldest);
  }
  s.stats.entries = s.entries.size;
}

/** Hits, misses and invalidations so far (for the tests and the bench). */
export function keptStats(db: Db): KeptStats {
  return { ...storeOf(db).stats };
}
