/**
 * A lot assessed on two threads equals the single-thread assessment exactly: each pair's figures
 * depend only on the pair and the lot's line data (seeded streams, content-keyed caches).
 */
import { execFile } from 'node:child_process';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { loadDemoOnce } from '../../src/cli/demo.ts';
import { assessLotFromDb } from '../../src/engine/loader.ts';
import { assessLotFromDbParallel, stopAssessWorker } from '../../src/engine/parallel.ts';
import {
  adoptParameterSetInDb,
  proposeParameterSet,
  revertToTypedValuesInDb,
} from '../../src/engine/parameter-sets.ts';
import { type Db, migrate, openDatabase, openDataDir } from '../../src/store/db.ts';
import { installationClockMs } from '../../src/store/settings.ts';
import {
  fittedAdders,
  fittedRemoval,
  fittedUnexplained,
  fittedVoidSize,
} from '../helpers/parameter-values.ts';

describe('assessLotFromDbParallel', () => {
  let dir: string;
  let db: Db;
  let asOfMs: number;
  beforeAll(async () => {
    dir = mkdtempSync(join(tmpdir(), 'voidcast-parallel-'));
    db = openDataDir(dir);
    await loadDemoOnce(db);
    asOfMs = installationClockMs(db)!;
  }, 180_000);
  afterAll(async () => {
    await stopAssessWorker();
    db.close();
    rmSync(dir, { recursive: true, force: true });
  });

  it('gives exactly the single-thread result for every demo lot waiting to bond', async () => {
    for (const lotId of ['TR2651', 'TR2652', 'TR2653']) {
      const serial = assessLotFromDb(db, lotId, { asOfMs });
      const parallel = await assessLotFromDbParallel(db, lotId, { asOfMs });
      expect(JSON.stringify(parallel)).toBe(JSON.stringify(serial));
    }
  }, 120_000);

  it('gives exactly the single-thread result with a parameter set adopted (both threads apply the same set)', async () => {
    const proposed = proposeParameterSet(
      db,
      {
        adders: { 'LACT-1/B': fittedAdders('LACT-1', 'B', { countAbove: 1.5, countLow: 1, countHigh: 2.2 }) },
        removal: { 'CLN-RIN1': fittedRemoval('CLN-RIN1') },
        voidSize: {
          'GALE-7': fittedVoidSize('GALE-7', { energyJm2: 1.1, energyLowJm2: 1, energyHighJm2: 1.2 }),
        },
        unexplainedVoids: {
          'GALE-7': fittedUnexplained('GALE-7', {
            ratePerPair: 0.8,
            rateLowPerPair: 0.3,
            rateHighPerPair: 1.6,
          }),
        },
      },
      [],
      'parallel check',
      'test',
    );
    if (!proposed.ok) throw new Error(proposed.message);
    adoptParameterSetInDb(db, proposed.set.id, 'a second person');
    try {
      const serial = assessLotFromDb(db, 'TR2652', { asOfMs })!;
      const parallel = await assessLotFromDbParallel(db, 'TR2652', { asOfMs });
      expect(serial.parameters.id).toBe(proposed.set.id);
      expect(serial.pairs.every((p) => p.contributions.some((c) => c.kind === 'unexplained'))).toBe(true);
      expect(JSON.stringify(parallel)).toBe(JSON.stringify(serial));
    } finally {
      revertToTypedValuesInDb(db, 'test');
    }
  }, 120_000);

  it('lets the CLI process end by itself once the lot is printed (the kept worker never holds it open)', async () => {
    const root = join(dirname(fileURLToPath(import.meta.url)), '..', '..');
    const run = await new Promise<{ code: number | null; out: string; err: string; killed: boolean }>(
      (done) => {
        const child = execFile(
          process.execPath,
          ['--import', 'tsx', 'src/cli/main.ts', 'assess', '--lot', 'TR2652', '--data', dir],
          { cwd: root, timeout: 60_000 },
          (e, out, err) =>
            done({ code: child.exitCode, out, err, killed: Boolean(e && 'killed' in e && e.killed) }),
        );
      },
    );
    expect(run.killed, run.err).toBe(false); // a hang would be killed by the 60 s timeout
    expect(run.code).toBe(0);
    expect(run.out, run.err).toMatch(/Lot TR2652/);
    expect(run.out).toMatch(/CALL: RE-CLEAN/);
  }, 90_000);

  it('answers null for an unknown lot', async () => {
    expect(await assessLotFromDbParallel(db, 'NO-SUCH-LOT', { asOfMs })).toBeNull();
  });

  it('takes the single-thread path for an in-memory database', async () => {
    const mem = openDatabase(':memory:');
    migrate(mem);
    expect(await assessLotFromDbParallel(mem, 'TR2651', { asOfMs })).toBeNull();
    mem.close();
  });
});
