/**
 * The pages' thread (src/engine/view-thread.ts): each job answered by the worker thread equals the
 * same job run on this thread (its plain twin), the engine's input errors come back as their own
 * classes, and the work is done off this thread (a timer of this thread fires while the answer is
 * still out; run here, the answer would come first, as a microtask).
 */
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { loadDemoOnce } from '../../src/cli/demo.ts';
import { AuditInputError } from '../../src/engine/audit/errors.ts';
import { onViewThread, runHere, stopViewThread } from '../../src/engine/view-thread.ts';
import { type Db, migrate, openDatabase, openDataDir } from '../../src/store/db.ts';
import { listLots } from '../../src/store/lots.ts';
import { pageClockMs } from '../../src/store/settings.ts';

/**
 * The computations' own times set to 0 (`fittedAtMs`, the real time a fit was made; `elapsedMs`, how
 * long an audit took); all else as it is.
 */
function ownTimesOff<T>(x: T): T {
  if (Array.isArray(x)) return x.map(ownTimesOff) as T;
  if (x === null || typeof x !== 'object' || ArrayBuffer.isView(x)) return x;
  return Object.fromEntries(
    Object.entries(x).map(([k, v]) => [k, k === 'fittedAtMs' || k === 'elapsedMs' ? 0 : ownTimesOff(v)]),
  ) as T;
}

describe('the pages’ thread', () => {
  let dir: string;
  let db: Db;
  let plain: Db;
  let asOfMs: number;
  beforeAll(async () => {
    dir = mkdtempSync(join(tmpdir(), 'voidcast-view-thread-'));
    db = openDataDir(dir);
    await loadDemoOnce(db);
    asOfMs = pageClockMs(db);
    // the plain twin reads the same file through a connection of its own (its own kept results)
    plain = openDatabase(db.name);
  }, 180_000);
  afterAll(async () => {
    await stopViewThread();
    plain.close();
    db.close();
    rmSync(dir, { recursive: true, force: true });
  });

  it('answers a lot, the lots, the calibration, the learned fits, an area’s audit and the line view as this thread would', async () => {
    const lots = listLots(db).map((l) => l.lotId);
    expect(lots.length).toBeGreaterThan(2);
    for (const lotId of lots)
      for (const detail of ['summary', 'full'] as const) {
        const args = { lotId, asOfMs, detail };
        expect(await onViewThread(db, 'lot', args)).toEqual(runHere(plain, 'lot', args));
      }
    // the calibration states when its fits were made: the two were made at different times
    expect(ownTimesOff(await onViewThread(db, 'calibration', {}))).toEqual(
      ownTimesOff(runHere(plain, 'calibration', {})),
    );
    expect(ownTimesOff(await onViewThread(db, 'learned', {}))).toEqual(
      ownTimesOff(runHere(plain, 'learned', {})),
    );
    const period = { fromMs: asOfMs - 14 * 86_400_000, toMs: asOfMs };
    const line = { period, asOfMs };
    expect(await onViewThread(db, 'line', line)).toEqual(runHere(plain, 'line', line));
    const area = {
      areaId: 'BOR-B2',
      opts: {
        period,
        occupancy: 'operational' as const,
        edition: 2015 as const,
        chartBaseline: null,
        asOfMs,
      },
    };
    const there = await onViewThread(db, 'areaAudit', area);
    expect(ownTimesOff(there)).toEqual(ownTimesOff(runHere(plain, 'areaAudit', area)));
    expect(there.excursions.length).toBeGreaterThan(0); // the demo's planted fan-filter failure
  }, 300_000);

  it('gives the engine’s refusal as its own class, with its kind', async () => {
    const args = {
      areaId: 'NO-SUCH-AREA',
      opts: {
        period: { fromMs: asOfMs - 86_400_000, toMs: asOfMs },
        occupancy: 'operational' as const,
        edition: 2015 as const,
        chartBaseline: null,
        asOfMs,
      },
    };
    const err = await onViewThread(db, 'areaAudit', args).catch((e: unknown) => e);
    expect(err).toBeInstanceOf(AuditInputError);
    expect((err as AuditInputError).kind).toBe('not-found');
    expect(() => runHere(plain, 'areaAudit', args)).toThrow((err as Error).message);
  });

  it('works off this thread: this thread’s timer fires while the answer is out', async () => {
    const order: string[] = [];
    // a time no job above used, so nothing is kept for it yet
    const job = onViewThread(db, 'lot', {
      lotId: listLots(db)[0]!.lotId,
      asOfMs: asOfMs - 60_000,
      detail: 'full',
    }).then(() => order.push('answer'));
    await new Promise((r) => setTimeout(r, 0));
    order.push('timer');
    await job;
    expect(order).toEqual(['timer', 'answer']);
  });

  it('runs on this thread for a database in memory, with the same answer', async () => {
    const mem = openDatabase(':memory:');
    migrate(mem);
    try {
      const args = { lotId: 'NONE', asOfMs, detail: 'summary' as const };
      expect(await onViewThread(mem, 'lot', args)).toBeNull();
    } finally {
      mem.close();
    }
  });
});
