/**
 * The live counter feed against a running server (issue 14): a token-authenticated push of counter
 * samples in the documented format, streamed; idempotent per sample; line-level errors as in a file
 * import; refused without the right token. Expected values: the invented samples below (hand count).
 */
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join, resolve } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { main } from '../../src/cli/main.ts';
import { insertApiToken, insertUser } from '../../src/store/accounts.ts';
import { readAudit } from '../../src/store/audit.ts';
import { hashPassword, newApiToken } from '../../src/web/auth/passwords.ts';
import { type RunningServer, startServer } from '../../src/web/server.ts';

const ROOT = resolve(import.meta.dirname, '..', '..');
let dir: string;
let server: RunningServer;
let importToken: string;
let readToken: string;

const HEADER = '# units: counts=raw\ncounter_id,location_id,start,duration_s,volume_L,ge_0.1um,ge_0.5um\n';
const row = (minute: number, a: number, b: number) =>
  `PC-7,BAY-BOND,2026-03-02T08:${String(minute).padStart(2, '0')}:00Z,60,28.3,${a},${b}\n`;

beforeAll(async () => {
  dir = mkdtempSync(join(tmpdir(), 'voidcast-feed-'));
  const io = { out: () => {}, err: () => {}, isTty: false, env: {}, cwd: dir };
  expect(
    await main(
      ['import', 'locations', join(ROOT, 'test/fixtures/good/locations-line.csv'), '--data', dir],
      io,
    ),
  ).toBe(0);
  server = await startServer({
    host: '127.0.0.1',
    port: 0,
    dataDir: dir,
    auth: 'accounts',
    adminPassword: 'feed test secret 2026',
    log: () => {},
  });
  const engineer = insertUser(server.db, {
    username: 'gateway',
    displayName: 'Counter gateway',
    role: 'engineer',
    passwordHash: await hashPassword('not used by this test'),
    mustChangePassword: false,
    atMs: Date.now(),
  });
  const t1 = newApiToken();
  insertApiToken(server.db, {
    userId: engineer,
    name: 'bay feed',
    scope: 'import',
    sha256: t1.sha256,
    atMs: Date.now(),
  });
  importToken = t1.token;
  const t2 = newApiToken();
  insertApiToken(server.db, {
    userId: engineer,
    name: 'dashboard',
    scope: 'read',
    sha256: t2.sha256,
    atMs: Date.now(),
  });
  readToken = t2.token;
});
afterAll(async () => {
  await server?.close();
  rmSync(dir, { recursive: true, force: true });
});

function push(
  body: string | ReadableStream<Uint8Array>,
  token: string | null = importToken,
  type = 'text/csv',
) {
  return fetch(`${server.url}api/feed/counter-samples`, {
    method: 'POST',
    headers: { 'content-type': type, ...(token ? { authorization: `Bearer ${token}` } : {}) },
    body,
    duplex: 'half',
  } as RequestInit);
}

function count(): number {
  return (server.db.prepare('SELECT COUNT(*) AS n FROM counter_samples').get() as { n: number }).n;
}

describe('POST /api/feed/counter-samples', () => {
  it('stores a streamed batch, and a batch sent again stores nothing twice', async () => {
    // The body arrives in pieces (a stream), as from a gateway writing samples as they come.
    const parts = [HEADER, row(0, 1200, 60), row(1, 1100, 55), row(2, 1000, 50)];
    const stream = new ReadableStream<Uint8Array>({
      pull(ctl) {
        const p = parts.shift();
        if (p === undefined) ctl.close();
        else ctl.enqueue(new TextEncoder().encode(p));
      },
    });
    const first = await push(stream);
    expect(first.status).toBe(200);
    expect(await first.json()).toMatchObject({
      status: 'imported',
      rowsRead: 3,
      rowsStored: 3,
      rowsRejected: 0,
    });
    expect(count()).toBe(3);
    const again = await push(HEADER + row(0, 1200, 60) + row(1, 1100, 55) + row(2, 1000, 50));
    expect(((await again.json()) as { status: string }).status).toBe('unchanged');
    expect(count()).toBe(3);
  });

  it('counts re-sent samples as duplicates and reports bad lines by line, column, value and rule', async () => {
    const res = await push(HEADER + row(2, 1000, 50) + row(3, 900, -4) + row(4, 800, 40));
    expect(res.status).toBe(200);
    const r = (await res.json()) as {
      status: string;
      rowsStored: number;
      duplicates: number;
      rowsRejected: number;
      issues: { line: number; column: string; value: string; rule: string }[];
    };
    expect(r).toMatchObject({ status: 'partial', rowsStored: 1, duplicates: 1, rowsRejected: 1 });
    // Line 4 of the batch: the metadata line, the header, then minute 2, then minute 3.
    expect(r.issues).toEqual([
      { line: 4, column: 'ge_0.5um', value: '-4', rule: 'must be a whole number ≥ 0' },
    ]);
    expect(count()).toBe(4);
    expect(readAudit(server.db).find((e) => e.action === 'import' && e.via === 'token')).toMatchObject({
      actor: 'gateway',
    });
  });

  it('is refused without a token, with a read-only token, or in another format, storing nothing', async () => {
    const body = HEADER + row(10, 500, 5);
    expect((await push(body, null)).status).toBe(401);
    expect((await push(body, readToken)).status).toBe(403);
    expect((await push(body, importToken, 'text/plain')).status).toBe(415);
    const rejected = await push('not,a,counter,log\n');
    expect(rejected.status).toBe(422);
    expect(count()).toBe(4);
  });
});
