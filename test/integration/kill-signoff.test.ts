/**
 * SIGKILL in the middle of a sign-off (issue 14): the process dies inside its write — after the
 * sign-off row, before its audit-trail entry; or after both, before the commit. SQLite's
 * write-ahead log leaves the database as it was (SQLite documentation, "Atomic Commit In SQLite"
 * and "Write-Ahead Logging": an uncommitted transaction in the WAL is ignored on recovery), so
 * `PRAGMA integrity_check` says ok and there is neither the sign-off nor its audit entry — never one
 * without the other. A real process killed by a real signal; where it stops is set by a TEMP trigger
 * on the child's own connection (test/helpers/signoff-child.ts), not by a hook in product code.
 *
 * Data: the page line of test/helpers/pages-data.ts (pair P-01, assessed at AS_OF_MS).
 */
import { spawn } from 'node:child_process';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join, resolve } from 'node:path';
import Database from 'better-sqlite3';
import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import { integrityCheck } from '../../src/store/backup.ts';
import { migrate, openDatabase } from '../../src/store/db.ts';
import { setSetting } from '../../src/store/settings.ts';
import { createApp } from '../../src/web/app.ts';
import { AS_OF_SETTING } from '../../src/web/routes/lots.tsx';
import { makeUser, ORIGIN, signIn } from '../helpers/accounts.ts';
import { AS_OF_MS, importPageLine, lineFiles } from '../helpers/pages-data.ts';

const ROOT = resolve(import.meta.dirname, '..', '..');
const CHILD = join(ROOT, 'test/helpers/signoff-child.ts');
let dir: string;
let file: string;

beforeEach(async () => {
  dir = mkdtempSync(join(tmpdir(), 'voidcast-kill-signoff-'));
  file = join(dir, 'voidcast.db');
  const db = openDatabase(file);
  migrate(db);
  const files = await importPageLine(db, lineFiles());
  files.cleanup();
  db.close();
}, 60_000);
afterEach(() => rmSync(dir, { recursive: true, force: true }));

function child(mode: 'after-signoff' | 'after-audit' | 'complete') {
  const proc = spawn(process.execPath, ['--import', 'tsx', CHILD, file, 'P-01', String(AS_OF_MS), mode], {
    cwd: ROOT,
    stdio: ['ignore', 'pipe', 'pipe'],
  });
  let out = '';
  let err = '';
  proc.stdout.on('data', (b: Buffer) => {
    out += b.toString();
  });
  proc.stderr.on('data', (b: Buffer) => {
    err += b.toString();
  });
  const exited = new Promise<{ code: number | null; signal: NodeJS.Signals | null }>((r) =>
    proc.once('exit', (code, signal) => r({ code, signal })),
  );
  return { proc, out: () => out, err: () => err, exited };
}

function stored(): { signoffs: number; audits: number; auditedIds: number[] } {
  const db = new Database(file, { readonly: true });
  try {
    const signoffs = (
      db.prepare("SELECT COUNT(*) AS n FROM dispositions WHERE subject_id = 'P-01'").get() as {
        n: number;
      }
    ).n;
    const rows = db.prepare("SELECT detail_json FROM audit_log WHERE action = 'signoff'").all() as {
      detail_json: string;
    }[];
    return {
      signoffs,
      audits: rows.length,
      auditedIds: rows.map((r) => (JSON.parse(r.detail_json) as { dispositionId: number }).dispositionId),
    };
  } finally {
    db.close();
  }
}

describe('SIGKILL of a sign-off in progress', () => {
  it.each(['after-signoff', 'after-audit'] as const)(
    'killed %s: an intact database with neither the sign-off nor its audit entry; signing again works',
    async (mode) => {
      const c = child(mode);
      const t0 = Date.now();
      while (!c.out().includes('in-write') && c.proc.exitCode === null) {
        if (Date.now() - t0 > 60_000) throw new Error(`the sign-off never reached its write: ${c.err()}`);
        await new Promise((r) => setTimeout(r, 20));
      }
      expect(c.proc.exitCode).toBeNull();
      c.proc.kill('SIGKILL');
      const ended = await c.exited;
      expect(ended.signal).toBe('SIGKILL');
      expect(c.out()).not.toContain('signed');

      expect(integrityCheck(file)).toBe('ok');
      expect(stored()).toEqual({ signoffs: 0, audits: 0, auditedIds: [] });

      // The same sign-off goes through afterwards, whole: one sign-off, one audit entry naming it.
      const again = child('complete');
      expect((await again.exited).code).toBe(0);
      const id = Number(/signed (\d+)/.exec(again.out())?.[1]);
      expect(stored()).toEqual({ signoffs: 1, audits: 1, auditedIds: [id] });
      expect(integrityCheck(file)).toBe('ok');
    },
    120_000,
  );
});

describe('the web sign-off routes store a sign-off and its audit entry together', () => {
  it('when the audit entry cannot be written, neither the form nor the JSON API leaves a sign-off', async () => {
    const db = openDatabase(file);
    try {
      setSetting(db, AS_OF_SETTING, new Date(AS_OF_MS).toISOString());
      const app = createApp({
        db,
        dataDir: dir,
        version: 'test',
        log: () => {},
        auth: { mode: 'accounts', sessionSecret: 'k'.repeat(43) },
      });
      await makeUser(db, 'bob', 'approver', 'Bob Approver');
      const bob = await signIn(app, 'bob');
      const page = await (await bob.get('/pairs/P-01')).text();
      const field = (n: string) => new RegExp(`name="${n}" value="([^"]+)"`).exec(page)![1]!;
      const form = {
        inputsHash: field('inputsHash'),
        assessmentRef: field('assessmentRef'),
        name: 'Bob',
        role: 'line or yield owner',
      };
      const api = async () =>
        app.request('/api/pairs/P-01/signoff', {
          method: 'POST',
          headers: {
            cookie: [...bob.cookies].map(([k, v]) => `${k}=${v}`).join('; '),
            'content-type': 'application/json',
            origin: ORIGIN,
            'sec-fetch-site': 'same-origin',
            'x-csrf-token': await bob.token(),
          },
          body: JSON.stringify({ inputsHash: form.inputsHash, assessmentRef: form.assessmentRef }),
        });
      // The audit trail refuses writes (a TEMP trigger on this connection only).
      db.exec(
        "CREATE TEMP TRIGGER vc_no_audit BEFORE INSERT ON main.audit_log BEGIN SELECT RAISE(ABORT, 'audit trail unavailable'); END",
      );
      expect((await bob.post('/pairs/P-01/signoff', form)).status).toBe(500);
      expect((await api()).status).toBe(500);
      db.close();
      expect(stored()).toEqual({ signoffs: 0, audits: 0, auditedIds: [] });
    } finally {
      if (db.open) db.close();
    }
  }, 60_000);
});
