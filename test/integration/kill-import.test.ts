/**
 * SIGKILL in the middle of an import (issue 14): the process dies with its write transaction open;
 * SQLite's write-ahead log leaves the database as it was before the import — `PRAGMA
 * integrity_check` says ok and nothing of the killed file is stored (SQLite documentation,
 * "Atomic Commit In SQLite" and "Write-Ahead Logging": an uncommitted transaction in the WAL is
 * ignored on recovery). A real process killed by a real signal.
 */
import { spawn } from 'node:child_process';
import { existsSync, mkdtempSync, rmSync, statSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join, resolve } from 'node:path';
import Database from 'better-sqlite3';
import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import type { CliIo } from '../../src/cli/io.ts';
import { main } from '../../src/cli/main.ts';
import { integrityCheck } from '../../src/store/backup.ts';
import { DATABASE_FILE_NAME } from '../../src/store/db.ts';

const ROOT = resolve(import.meta.dirname, '..', '..');
let dir: string;

beforeEach(() => {
  dir = mkdtempSync(join(tmpdir(), 'voidcast-kill-'));
});
afterEach(() => rmSync(dir, { recursive: true, force: true }));

/** An invented counter log of `n` one-minute samples at BAY-BOND (test/fixtures/good/locations-line.csv). */
function bigCounterLog(n: number): string {
  const lines = ['# units: counts=raw', 'counter_id,location_id,start,duration_s,volume_L,ge_0.1um,ge_0.5um'];
  const t0 = Date.UTC(2026, 2, 2, 0, 0);
  for (let i = 0; i < n; i++)
    lines.push(`PC-9,BAY-BOND,${new Date(t0 + i * 60_000).toISOString()},60,28.3,${100 + (i % 50)},${i % 7}`);
  return `${lines.join('\n')}\n`;
}

describe('SIGKILL of an import in progress', () => {
  it('leaves an intact database holding nothing of the killed file', async () => {
    const data = join(dir, 'data');
    const io: CliIo = { out: () => {}, err: () => {}, isTty: false, env: {}, cwd: dir };
    const locations = join(ROOT, 'test/fixtures/good/locations-line.csv');
    expect(await main(['import', 'locations', locations, '--data', data], io)).toBe(0);
    const file = join(dir, 'big.csv');
    writeFileSync(file, bigCounterLog(600_000));

    const child = spawn(
      process.execPath,
      ['--import', 'tsx', join(ROOT, 'src/cli/main.ts'), 'import', 'counter-samples', file, '--data', data],
      { cwd: ROOT, stdio: 'ignore' },
    );
    const exited = new Promise<{ code: number | null; signal: NodeJS.Signals | null }>((r) =>
      child.once('exit', (code, signal) => r({ code, signal })),
    );
    // Rows spill into the write-ahead log while the transaction is open: once the log has grown past
    // 4 MiB the import is surely writing (its file has 600,000 rows, the locations import wrote little).
    const wal = join(data, `${DATABASE_FILE_NAME}-wal`);
    const t0 = Date.now();
    while (child.exitCode === null && (!existsSync(wal) || statSync(wal).size < 4 * 1024 * 1024)) {
      if (Date.now() - t0 > 60_000) throw new Error('the import never started writing');
      await new Promise((r) => setTimeout(r, 20));
    }
    expect(child.exitCode).toBeNull();
    child.kill('SIGKILL');
    const ended = await exited;
    expect(ended.signal).toBe('SIGKILL');

    expect(integrityCheck(join(data, DATABASE_FILE_NAME))).toBe('ok');
    const db = new Database(join(data, DATABASE_FILE_NAME));
    try {
      expect(db.prepare('SELECT COUNT(*) AS n FROM counter_samples').get()).toEqual({ n: 0 });
      expect(db.prepare("SELECT COUNT(*) AS n FROM imports WHERE kind = 'counter-samples'").get()).toEqual({
        n: 0,
      });
      expect(db.prepare('SELECT COUNT(*) AS n FROM locations').get()).toEqual({ n: 7 });
    } finally {
      db.close();
    }
    // The same file imports whole afterwards.
    expect(await main(['import', 'counter-samples', file, '--data', data], io)).toBe(0);
  }, 180_000);
});
