/**
 * `voidcast backup FILE` (issue 14): an online copy taken while another process writes, checked,
 * opened and restored. Real processes: the writer and the backup are separate programs, as the
 * server and an operator's backup are.
 */
import { spawn } from 'node:child_process';
import { copyFileSync, existsSync, mkdirSync, mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join, resolve } from 'node:path';
import Database from 'better-sqlite3';
import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import type { CliIo } from '../../src/cli/io.ts';
import { main } from '../../src/cli/main.ts';
import { integrityCheck } from '../../src/store/backup.ts';
import { DATABASE_FILE_NAME, databaseHealth, openDataDir } from '../../src/store/db.ts';

const ROOT = resolve(import.meta.dirname, '..', '..');
const FIX = join(ROOT, 'test/fixtures');
let dir: string;

function io() {
  let out = '';
  let err = '';
  const io: CliIo = { out: (t) => (out += t), err: (t) => (err += t), isTty: false, env: {}, cwd: dir };
  return { io, out: () => out, err: () => err };
}

function run(args: string[]) {
  const child = spawn(process.execPath, args, { cwd: ROOT, stdio: ['ignore', 'pipe', 'pipe'] });
  let out = '';
  child.stdout!.on('data', (b: Buffer) => {
    out += b.toString();
  });
  child.stderr!.on('data', (b: Buffer) => {
    out += b.toString();
  });
  const done = new Promise<number | null>((r) => child.once('exit', r));
  return { out: () => out, done };
}

beforeEach(() => {
  dir = mkdtempSync(join(tmpdir(), 'voidcast-backup-'));
});
afterEach(() => rmSync(dir, { recursive: true, force: true }));

describe('voidcast backup', () => {
  it('copies the database while another process writes; the copy is whole, opens, and restores', async () => {
    const data = join(dir, 'data');
    expect(
      await main(['import', 'locations', join(FIX, 'good/locations-line.csv'), '--data', data], io().io),
    ).toBe(0);
    // The writer: short write transactions for 4 s, each adding 64 KiB (the file grows by many pages).
    const writer = run([
      '-e',
      `
      const Database = require('better-sqlite3');
      const db = new Database(${JSON.stringify(join(data, DATABASE_FILE_NAME))});
      db.pragma('busy_timeout = 5000');
      const ins = db.prepare("INSERT INTO settings (key, value, updated_at) VALUES (?, ?, 'now')");
      const end = Date.now() + 4000; let n = 0;
      process.stdout.write('writing\\n');
      while (Date.now() < end) { db.transaction(() => ins.run('test.blob.' + n, 'x'.repeat(65536))).immediate(); n++; }
      db.close(); process.stdout.write('wrote ' + n + '\\n');
      `,
    ]);
    while (!writer.out().includes('writing')) await new Promise((r) => setTimeout(r, 20));
    await new Promise((r) => setTimeout(r, 500));
    const target = join(dir, 'copy.db');
    const b = run(['--import', 'tsx', join(ROOT, 'src/cli/main.ts'), 'backup', target, '--data', data]);
    const [bCode, wCode] = await Promise.all([b.done, writer.done]);
    expect(bCode, b.out()).toBe(0);
    expect(b.out()).toMatch(/backed up .* pages, \d+ bytes, schema version \d+, integrity ok/);
    expect(wCode, writer.out()).toBe(0);
    const written = Number(/wrote (\d+)/.exec(writer.out())![1]);
    expect(written).toBeGreaterThan(0);

    // The copy: integrity ok, the imported rows present, a snapshot of the writer's rows (all or a prefix).
    expect(integrityCheck(target)).toBe('ok');
    const copy = new Database(target, { readonly: true });
    expect((copy.prepare('SELECT COUNT(*) AS n FROM locations').get() as { n: number }).n).toBe(7);
    const blobs = copy.prepare("SELECT key FROM settings WHERE key LIKE 'test.blob.%'").all() as {
      key: string;
    }[];
    copy.close();
    expect(blobs.length).toBeLessThanOrEqual(written);
    const got = new Set(blobs.map((r) => r.key));
    for (let i = 0; i < blobs.length; i++) expect(got.has(`test.blob.${i}`)).toBe(true);
    expect(existsSync(`${target}.partial-${process.pid}`)).toBe(false);

    // Restore as docs/cli.md says: the copy becomes voidcast.db of a data directory.
    const restored = join(dir, 'restored');
    mkdirSync(restored);
    copyFileSync(target, join(restored, DATABASE_FILE_NAME));
    const db = openDataDir(restored);
    expect(databaseHealth(db).ok).toBe(true);
    db.close();
    const again = io();
    expect(
      await main(['import', 'locations', join(FIX, 'good/locations-line.csv'), '--data', restored], again.io),
    ).toBe(0);
    expect(again.out()).toContain('unchanged (same content as import #1)');
  }, 90_000);

  it('never overwrites, and says so when there is no database', async () => {
    const data = join(dir, 'data');
    openDataDir(data).close();
    const t = io();
    expect(await main(['backup', 'a.db', '--data', data], t.io)).toBe(0);
    const again = io();
    expect(await main(['backup', 'a.db', '--data', data], again.io)).toBe(1);
    expect(again.err()).toContain('exists already; name a new file');
    const none = io();
    expect(await main(['backup', 'b.db', '--data', join(dir, 'empty')], none.io)).toBe(4);
    expect(none.err()).toContain('there is no database at');
    expect(existsSync(join(dir, 'b.db'))).toBe(false);
  });
});
