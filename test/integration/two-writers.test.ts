/**
 * Two writers on one data directory (issue 14): a CLI import while another process writes — the
 * server importing, or a second CLI — waits its turn with a message and never fails with "database
 * is locked". Real processes throughout: SQLite's locks are between processes (and connections),
 * so a single connection could not show the behaviour.
 *
 * The busy timeout every connection sets is 5 s (src/store/db.ts); the holder below keeps the
 * write lock until the import has said that it waits, i.e. longer than that, so the waiting import
 * goes round the retry of src/store/writer.ts.
 */
import { spawn } from 'node:child_process';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join, resolve } from 'node:path';
import Database from 'better-sqlite3';
import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import { DATABASE_FILE_NAME, openDatabase, openDataDir } from '../../src/store/db.ts';
import { isBusyError, onWriterWait, WriterWaitError, writeTransaction } from '../../src/store/writer.ts';

const ROOT = resolve(import.meta.dirname, '..', '..');
const FIX = join(ROOT, 'test/fixtures');
let data: string;

beforeEach(() => {
  data = mkdtempSync(join(tmpdir(), 'voidcast-writers-'));
  openDataDir(data).close();
});
afterEach(() => rmSync(data, { recursive: true, force: true }));

function run(cmd: string[], env: Record<string, string> = {}) {
  const child = spawn(process.execPath, cmd, {
    cwd: ROOT,
    env: { ...process.env, NO_COLOR: '1', ...env },
    stdio: ['pipe', 'pipe', 'pipe'],
  });
  let out = '';
  let err = '';
  child.stdout!.on('data', (b: Buffer) => {
    out += b.toString();
  });
  child.stderr!.on('data', (b: Buffer) => {
    err += b.toString();
  });
  const done = new Promise<{ code: number | null; endedAt: number }>((r) =>
    child.once('exit', (code) => r({ code, endedAt: Date.now() })),
  );
  return { child, out: () => out, err: () => err, done };
}

function cli(...args: string[]) {
  return run(['--import', 'tsx', join(ROOT, 'src/cli/main.ts'), ...args]);
}

/**
 * Another process that takes the write lock, says "locked", and keeps it until a line arrives on its
 * stdin (or `ms` have passed), so the test decides when it lets go whatever the machine's load.
 */
function holder(ms: number): { proc: ReturnType<typeof run>; locked: Promise<void> } {
  const file = join(data, DATABASE_FILE_NAME);
  const script = `
    const Database = require('better-sqlite3');
    const db = new Database(${JSON.stringify(file)});
    db.exec('BEGIN IMMEDIATE');
    db.prepare("INSERT INTO settings (key, value, updated_at) VALUES ('test.holder', '1', 'now')").run();
    process.stdout.write('locked\\n');
    const release = () => { db.exec('COMMIT'); process.stdout.write('released ' + Date.now() + '\\n'); db.close(); process.exit(0); };
    process.stdin.once('data', release);
    setTimeout(release, ${ms});
  `;
  const proc = run(['-e', script]);
  const locked = new Promise<void>((r) => {
    proc.child.stdout!.on('data', () => {
      if (proc.out().includes('locked')) r();
    });
  });
  return { proc, locked };
}

function count(table: string): number {
  const db = new Database(join(data, DATABASE_FILE_NAME), { readonly: true });
  try {
    return (db.prepare(`SELECT COUNT(*) AS n FROM ${table}`).get() as { n: number }).n;
  } finally {
    db.close();
  }
}

describe('two writers', () => {
  it('a CLI import waits for another process holding the write lock, says so, and then stores its rows', async () => {
    const h = holder(60_000);
    await h.locked;
    const imp = cli('import', 'locations', join(FIX, 'good/locations-line.csv'), '--data', data);
    // Let go only once the import has said that it waits — which it says when its first busy timeout
    // (5 s) has run out — so the path exercised is the retry's.
    while (!imp.err().includes('waiting:') && imp.child.exitCode === null)
      await new Promise((r) => setTimeout(r, 50));
    await new Promise((r) => setTimeout(r, 1000));
    h.proc.child.stdin!.write('release\n');
    const [held, r] = await Promise.all([h.proc.done, imp.done]);
    expect(held.code).toBe(0);
    expect(imp.err()).toContain('waiting: another process is writing to');
    expect(imp.err()).not.toMatch(/locked|SQLITE_BUSY/i);
    expect(r.code).toBe(0);
    expect(imp.out()).toContain('imported 7 rows');
    // It finished after the holder let go (the holder's own clock, same machine).
    const released = Number(/released (\d+)/.exec(h.proc.out())![1]);
    expect(r.endedAt).toBeGreaterThanOrEqual(released);
    expect(count('locations')).toBe(7);
    expect(count('settings')).toBeGreaterThanOrEqual(1);
  }, 60_000);

  it('two CLI imports at once both succeed', async () => {
    const a = cli('import', 'locations', join(FIX, 'good/locations-line.csv'), '--data', data);
    const b = cli('import', 'locations', join(FIX, 'good/locations-quoted.csv'), '--data', data);
    const [ra, rb] = await Promise.all([a.done, b.done]);
    expect([ra.code, rb.code, a.err(), b.err()].join('|')).not.toMatch(/locked/i);
    expect(ra.code).toBe(0);
    expect(rb.code).toBe(0);
    expect(count('imports')).toBe(2);
    expect(count('locations')).toBe(10);
  }, 60_000);
});

describe('writeTransaction', () => {
  it('gives up after maxWaitMs with a clear message and stores nothing; the body runs once', () => {
    const file = join(data, DATABASE_FILE_NAME);
    const a = openDatabase(file);
    const b = openDatabase(file);
    b.pragma('busy_timeout = 0');
    const heard: string[] = [];
    onWriterWait(b, (m) => heard.push(m));
    let runs = 0;
    try {
      a.exec('BEGIN IMMEDIATE');
      expect(() =>
        writeTransaction(
          b,
          () => {
            runs++;
            b.prepare("INSERT INTO settings (key, value, updated_at) VALUES ('t', '1', 'now')").run();
          },
          { maxWaitMs: 600 },
        ),
      ).toThrow(WriterWaitError);
      a.exec('ROLLBACK');
      expect(runs).toBe(0);
      // Told once, however many times it tried.
      expect(heard).toHaveLength(1);
      expect(heard[0]).toContain('waiting: another process is writing to');
      expect(b.prepare("SELECT COUNT(*) AS n FROM settings WHERE key = 't'").get()).toEqual({ n: 0 });
      // Free again: the same call goes through at once.
      writeTransaction(b, () => {
        runs++;
        b.prepare("INSERT INTO settings (key, value, updated_at) VALUES ('t', '1', 'now')").run();
      });
      expect(runs).toBe(1);
    } finally {
      a.close();
      b.close();
    }
  });

  it('knows SQLite busy errors by code', () => {
    expect(isBusyError({ code: 'SQLITE_BUSY' })).toBe(true);
    expect(isBusyError({ code: 'SQLITE_BUSY_SNAPSHOT' })).toBe(true);
    expect(isBusyError({ code: 'SQLITE_CONSTRAINT' })).toBe(false);
    expect(isBusyError(new Error('x'))).toBe(false);
  });
});
