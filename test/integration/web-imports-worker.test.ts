/**
 * The import runs off the server's event loop (src/web/import-worker.ts): the ingest pipeline
 * writes a file synchronously inside one SQLite transaction, so in the server's own thread a large
 * file would stop every other request until it is done. In a worker thread the server keeps
 * answering and the progress reports arrive while the file is being written.
 */
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterEach, describe, expect, it } from 'vitest';
import type { ImportProgress } from '../../src/ingest/types.ts';
import { type Db, migrate, openDatabase, openDataDir } from '../../src/store/db.ts';
import { databaseFile } from '../../src/store/worker-thread.ts';
import { runImport } from '../../src/web/import-worker.ts';

const dirs: string[] = [];
const dbs: Db[] = [];
afterEach(() => {
  for (const db of dbs.splice(0)) db.close();
  for (const d of dirs.splice(0)) rmSync(d, { recursive: true, force: true });
});

/** A locations file of `n` sites, about 40 bytes a row: 80 000 rows ≈ 3 MiB, three 1 MiB read chunks. */
function bigLocations(dir: string, n: number): string {
  const rows = ['location_id,parent_id,level,name,environment,iso_class,floor_area_m2'];
  for (let i = 0; i < n; i++) rows.push(`site-${i},,site,Site number ${i},open-room,5,100`);
  const path = join(dir, 'big.csv');
  writeFileSync(path, `${rows.join('\n')}\n`);
  return path;
}

/** Runs the import and counts how often a 5 ms timer fired between the first progress report and the result. */
async function ticksDuringImport(
  db: Db,
  path: string,
): Promise<{ ticks: number; progress: ImportProgress[] }> {
  const progress: ImportProgress[] = [];
  let ticks = 0;
  let counting = false;
  const timer = setInterval(() => {
    if (counting) ticks++;
  }, 5);
  try {
    const report = await runImport(db, { kind: 'locations', path }, (p) => {
      progress.push(p);
      counting = true;
    });
    counting = false;
    expect(report.status).toBe('imported');
    expect(report.rowsStored).toBe(80_000);
  } finally {
    clearInterval(timer);
  }
  return { ticks, progress };
}

describe('runImport', () => {
  it('in a worker thread: progress arrives chunk by chunk while the server thread keeps running', async () => {
    const dir = mkdtempSync(join(tmpdir(), 'voidcast-worker-'));
    dirs.push(dir);
    const db = openDataDir(dir);
    dbs.push(db);
    expect(databaseFile(db)).toBe(join(dir, 'voidcast.db'));
    const { ticks, progress } = await ticksDuringImport(db, bigLocations(dir, 80_000));
    expect(progress.length).toBeGreaterThanOrEqual(3);
    // Bytes read only grow, and end at the file's size.
    for (let i = 1; i < progress.length; i++)
      expect(progress[i]!.bytesRead).toBeGreaterThanOrEqual(progress[i - 1]!.bytesRead);
    expect(progress.at(-1)!.bytesRead).toBe(progress.at(-1)!.bytesTotal);
    expect(progress.some((p) => p.bytesRead > 0 && p.bytesRead < p.bytesTotal)).toBe(true);
    expect(ticks).toBeGreaterThan(0);
    // The server's own connection sees the worker's committed rows.
    expect((db.prepare('SELECT COUNT(*) AS n FROM locations').get() as { n: number }).n).toBe(80_000);
  });

  it('in this thread for an in-memory database: the same import holds the event loop (the control case)', async () => {
    const dir = mkdtempSync(join(tmpdir(), 'voidcast-worker-'));
    dirs.push(dir);
    const db = openDatabase(':memory:');
    migrate(db);
    dbs.push(db);
    expect(databaseFile(db)).toBeNull();
    const { ticks } = await ticksDuringImport(db, bigLocations(dir, 80_000));
    expect(ticks).toBe(0);
  });

  it('rejects when the worker cannot import (an I/O failure), without killing the server thread', async () => {
    const dir = mkdtempSync(join(tmpdir(), 'voidcast-worker-'));
    dirs.push(dir);
    const db = openDataDir(dir);
    dbs.push(db);
    await expect(runImport(db, { kind: 'locations', path: join(dir, 'missing.csv') })).rejects.toThrow(
      /cannot read/,
    );
  });
});
