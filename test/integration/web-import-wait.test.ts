/**
 * A web import waiting for another writer (issue 14): while another process holds the database's
 * write lock, the import job's page says that the file waits for another writer, and since when;
 * once the other process lets go, the import goes ahead and its report is shown. Real processes:
 * SQLite's locks are between connections, so the holder is a second process (the pattern of
 * test/integration/two-writers.test.ts) and the import runs in the server's worker thread with its
 * own connection (src/web/import-worker.ts). The first busy timeout is 5 s (src/store/db.ts), so
 * the message appears about 5 s after the import started.
 */
import { spawn } from 'node:child_process';
import { mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join, resolve } from 'node:path';
import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import { DATABASE_FILE_NAME, type Db, openDataDir } from '../../src/store/db.ts';
import { createApp } from '../../src/web/app.ts';

const ROOT = resolve(import.meta.dirname, '..', '..');
const ORIGIN = 'http://localhost';
let dir: string;
let db: Db;

beforeEach(() => {
  dir = mkdtempSync(join(tmpdir(), 'voidcast-web-wait-'));
  db = openDataDir(dir);
});
afterEach(() => {
  db.close();
  rmSync(dir, { recursive: true, force: true });
});

/** Another process that takes the write lock, says "locked", and keeps it until a line arrives on its stdin. */
function holder() {
  const script = `
    const Database = require('better-sqlite3');
    const db = new Database(${JSON.stringify(join(dir, DATABASE_FILE_NAME))});
    db.exec('BEGIN IMMEDIATE');
    process.stdout.write('locked\\n');
    const release = () => { db.exec('COMMIT'); process.stdout.write('released ' + Date.now() + '\\n'); db.close(); process.exit(0); };
    process.stdin.once('data', release);
    setTimeout(release, 120000);
  `;
  const child = spawn(process.execPath, ['-e', script], { cwd: ROOT, stdio: ['pipe', 'pipe', 'inherit'] });
  let out = '';
  const locked = new Promise<void>((r) => {
    child.stdout.on('data', (b: Buffer) => {
      out += b.toString();
      if (out.includes('locked')) r();
    });
  });
  const done = new Promise<number | null>((r) => child.once('exit', (code) => r(code)));
  return { child, locked, done, out: () => out };
}

describe('a web import while another process writes', () => {
  it('the job page says it waits for another writer, and since when; then the import goes ahead', async () => {
    const app = createApp({ db, dataDir: dir, version: 'test', log: () => {} });
    const first = await app.request('/imports');
    const cookie = (first.headers.get('set-cookie') ?? '').split(';')[0]!;
    const token = /name="_csrf" value="([^"]+)"/.exec(await first.text())![1]!;

    const h = holder();
    await h.locked;
    const t0 = Date.now();
    const fd = new FormData();
    fd.append('_csrf', token);
    fd.append('kind', 'locations');
    const csv = readFileSync(join(ROOT, 'test/fixtures/good/locations-line.csv'));
    fd.append('files', new File([csv], 'locations-line.csv', { type: 'text/csv' }));
    const posted = await app.request('/imports', {
      method: 'POST',
      body: fd,
      headers: { cookie, origin: ORIGIN },
    });
    expect(posted.status).toBe(303);
    const url = posted.headers.get('location')!;
    const poll = async () => (await app.request(url, { headers: { cookie, 'HX-Request': 'true' } })).text();

    // Waiting: the page names the wait and the time it began (to the second, UTC).
    let html = '';
    for (;;) {
      html = await poll();
      if (html.includes('waiting for another writer')) break;
      if (Date.now() - t0 > 60_000) throw new Error(`the job never said that it waits: ${html}`);
      await new Promise((r) => setTimeout(r, 100));
    }
    const since = /waiting for another writer since (\d{4}-\d{2}-\d{2}) (\d{2}:\d{2}:\d{2}) UTC/.exec(html);
    expect(since).not.toBeNull();
    const sinceMs = Date.parse(`${since![1]}T${since![2]}Z`);
    // The wait began when the import asked for the lock: after the upload was posted (to the
    // second shown) and before the message appeared.
    expect(sinceMs).toBeGreaterThanOrEqual(Math.floor(t0 / 1000) * 1000);
    expect(sinceMs).toBeLessThanOrEqual(Date.now());
    expect(html).toContain('Waiting for another writer');
    expect(html).toContain('vc-job-running');
    expect((db.prepare('SELECT COUNT(*) AS n FROM locations').get() as { n: number }).n).toBe(0);

    // Let go: the import goes ahead, the wait is no longer shown, the report says imported.
    h.child.stdin.write('release\n');
    expect(await h.done).toBe(0);
    for (;;) {
      html = await poll();
      if (html.includes('vc-job-done')) break;
      expect(Date.now() - t0).toBeLessThan(90_000);
      await new Promise((r) => setTimeout(r, 100));
    }
    expect(html).not.toContain('waiting for another writer');
    expect(html).toMatch(/imported/i);
    expect((db.prepare('SELECT COUNT(*) AS n FROM locations').get() as { n: number }).n).toBe(7);
  }, 120_000);
});
