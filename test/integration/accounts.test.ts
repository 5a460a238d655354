/**
 * Accounts, roles, sessions, API tokens and the audit trail (issue 14), through app.request with
 * accounts on, and open mode's limits. Expected behaviour from: RFC 7914 §12 (the scrypt test
 * vector), RFC 6265bis (cookie attributes HttpOnly, SameSite=Strict, Max-Age), RFC 6750 (Bearer
 * tokens, 401 with WWW-Authenticate), OWASP Authentication and Session Management Cheat Sheets
 * (throttled failed sign-ins, a new session id at sign-in).
 */
import { createHash } from 'node:crypto';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { parseAsOf } from '../../src/cli/commands/assess.ts';
import { main } from '../../src/cli/main.ts';
import { proposeParameterSet } from '../../src/engine/parameter-sets.ts';
import { findUserByName, listApiTokens } from '../../src/store/accounts.ts';
import { appendAudit, readAudit } from '../../src/store/audit.ts';
import { type Db, migrate, openDatabase } from '../../src/store/db.ts';
import { readDispositions } from '../../src/store/dispositions.ts';
import { adoptedParameterSetId } from '../../src/store/parameter-sets.ts';
import { setSetting } from '../../src/store/settings.ts';
import { createApp } from '../../src/web/app.ts';
import { ensureFirstAdmin } from '../../src/web/auth/bootstrap.ts';
import { hashPassword, verifyPassword } from '../../src/web/auth/passwords.ts';
import { LoginThrottle, THROTTLE } from '../../src/web/auth/throttle.ts';
import { AS_OF_SETTING } from '../../src/web/routes/lots.tsx';
import { startServer } from '../../src/web/server.ts';
import { browser, makeUser, signIn, TEST_PASSWORD } from '../helpers/accounts.ts';
import { AS_OF_MS, importPageLine, type LineFiles, lineFiles } from '../helpers/pages-data.ts';
import { fittedAdders } from '../helpers/parameter-values.ts';

let db: Db;
let files: LineFiles;
let app: ReturnType<typeof createApp>;
let setByAlice: number;

beforeAll(async () => {
  db = openDatabase(':memory:');
  migrate(db);
  files = await importPageLine(db, lineFiles());
  setSetting(db, AS_OF_SETTING, new Date(AS_OF_MS).toISOString());
  app = createApp({
    db,
    dataDir: files.dir,
    version: 'test',
    log: () => {},
    auth: { mode: 'accounts', sessionSecret: 'k'.repeat(43) },
  });
  await makeUser(db, 'vera', 'viewer', 'Vera Viewer');
  await makeUser(db, 'emil', 'engineer', 'Emil Engineer');
  await makeUser(db, 'alice', 'approver', 'Alice Approver');
  await makeUser(db, 'bob', 'approver', 'Bob Approver');
  await makeUser(db, 'ada', 'admin', 'Ada Admin');
  const r = proposeParameterSet(
    db,
    {
      adders: {
        'BOND-1/ALN': fittedAdders('BOND-1', 'ALN', { countAbove: 0.9, countLow: 0.6, countHigh: 1.3 }),
      },
    },
    [],
    'week 10 fits',
    'alice',
    Date.UTC(2025, 2, 3, 12, 0),
  );
  if (!r.ok) throw new Error(r.message);
  setByAlice = r.set.id;
});
afterAll(() => {
  files?.cleanup();
  db?.close();
});

describe('passwords (scrypt)', () => {
  it('verifies against the RFC 7914 §12 test vector when the stored parameters are its own', async () => {
    // scrypt(P="password", S="NaCl", N=1024, r=8, p=16, dkLen=64), RFC 7914 §12.
    const vector =
      'fdbabe1c9d3472007856e7190d01e9fe7c6ad7cbc8237830e77376634b3731622eaf30d92e22a3886ff109279d9830dac727afb94a83ee6d8360cbdfa2cc0640';
    const stored = `scrypt$1024$8$16$${Buffer.from('NaCl').toString('base64url')}$${Buffer.from(vector, 'hex').toString('base64url')}`;
    expect(await verifyPassword('password', stored)).toBe(true);
    expect(await verifyPassword('Password', stored)).toBe(false);
  });

  it('salts every hash, stores its parameters, and refuses malformed or extravagant stored forms', async () => {
    const a = await hashPassword(TEST_PASSWORD);
    const b = await hashPassword(TEST_PASSWORD);
    expect(a).toMatch(/^scrypt\$32768\$8\$1\$[A-Za-z0-9_-]{22}\$[A-Za-z0-9_-]{43}$/);
    expect(a).not.toBe(b);
    expect(await verifyPassword(TEST_PASSWORD, a)).toBe(true);
    expect(await verifyPassword(`${TEST_PASSWORD}!`, a)).toBe(false);
    expect(await verifyPassword(TEST_PASSWORD, 'plain')).toBe(false);
    expect(await verifyPassword(TEST_PASSWORD, a.replace('$32768$', '$1073741824$'))).toBe(false);
    // Only hashes in the database.
    expect(findUserByName(db, 'vera')!.passwordHash).not.toContain(TEST_PASSWORD);
  });
});

describe('signing in', () => {
  it('sends nobody to the sign-in page, and an API call without a token gets 401', async () => {
    const b = browser(app);
    const page = await b.get('/lots');
    expect(page.status).toBe(303);
    expect(page.headers.get('location')).toBe('/login?next=%2Flots');
    const api = await b.get('/api/lots');
    expect(api.status).toBe(401);
    expect(api.headers.get('www-authenticate')).toContain('Bearer');
    expect((await b.get('/login')).status).toBe(200);
    expect((await b.get('/healthz')).status).toBe(200);
  });

  it('sets a signed HttpOnly SameSite=Strict session cookie with an expiry, and a new one at every sign-in', async () => {
    const b = browser(app);
    const res = await b.post('/login', { username: 'vera', password: TEST_PASSWORD, next: '/lots' });
    expect(res.status).toBe(303);
    expect(res.headers.get('location')).toBe('/lots');
    const cookie = res.headers.getSetCookie().find((c) => c.startsWith('voidcast_session='))!;
    expect(cookie).toMatch(/HttpOnly/i);
    expect(cookie).toMatch(/SameSite=Strict/i);
    expect(cookie).toMatch(/Max-Age=43200/);
    const first = b.cookies.get('voidcast_session')!;
    expect((await b.get('/lots')).status).toBe(200);
    // Signing in again (rotation): a new id, and the old one no longer opens anything.
    await b.post('/login', { username: 'vera', password: TEST_PASSWORD, next: '/' });
    const second = b.cookies.get('voidcast_session')!;
    expect(second).not.toBe(first);
    const old = await app.request('/lots', { headers: { cookie: `voidcast_session=${first}` } });
    expect(old.status).toBe(303);
    // A cookie whose signature does not match is nobody's.
    const forged = `${second.slice(0, -4)}AAAA`;
    expect((await app.request('/lots', { headers: { cookie: `voidcast_session=${forged}` } })).status).toBe(
      303,
    );
  });

  it('refuses a wrong password the same way as an unknown user, and signing out ends the session', async () => {
    const b = browser(app);
    const wrong = await b.post('/login', { username: 'vera', password: 'not the password at all' });
    const unknown = await b.post('/login', { username: 'nobody-here', password: 'not the password at all' });
    expect(wrong.status).toBe(422);
    expect(unknown.status).toBe(422);
    const text = (r: string) => /class="vc-error"[^>]*>([^<]*)</.exec(r)![1];
    expect(text(await wrong.text())).toBe(text(await unknown.text()));
    const v = await signIn(app, 'vera');
    const id = v.cookies.get('voidcast_session')!;
    expect((await v.post('/logout', {})).status).toBe(303);
    expect((await app.request('/', { headers: { cookie: `voidcast_session=${id}` } })).status).toBe(303);
  });

  it('throttles failed sign-ins: after 5 for one name, even the right password is refused (429)', async () => {
    await makeUser(db, 'tess', 'viewer');
    const b = browser(app);
    for (let i = 0; i < THROTTLE.perUser; i++)
      expect((await b.post('/login', { username: 'tess', password: `wrong password ${i}` })).status).toBe(
        422,
      );
    const blocked = await b.post('/login', { username: 'tess', password: TEST_PASSWORD });
    expect(blocked.status).toBe(429);
    expect(await blocked.text()).toContain('Too many failed sign-ins. Try again in 15 minutes.');
    expect(b.cookies.has('voidcast_session')).toBe(false);
  });

  it('lets attempts through again 15 min after the first of the 5 failures (hand computation)', () => {
    let now = 0;
    const t = new LoginThrottle(() => now);
    for (let i = 0; i < 5; i++) {
      now = i * 1000;
      t.fail('x', 'a');
    }
    now = 4000;
    // failures at 0, 1, 2, 3, 4 s: the first leaves the 15-min window at 900 s, 896 s from now.
    expect(t.waitMs('x', 'a')).toBe(15 * 60_000 - 4000);
    now = 15 * 60_000;
    expect(t.waitMs('x', 'a')).toBe(0);
    expect(t.waitMs('y', 'a')).toBe(0);
  });
});

describe('roles', () => {
  it('a viewer reads but may not import, sign off or adopt', async () => {
    const v = await signIn(app, 'vera');
    expect((await v.get('/pairs/P-01')).status).toBe(200);
    for (const [path, form] of [
      ['/pairs/P-01/signoff', { role: 'bonding process engineer' }],
      [`/parameters/${setByAlice}/adopt`, {}],
      ['/parameters/revert', {}],
      ['/admin/users', { username: 'x', displayName: 'x', role: 'admin' }],
    ] as const) {
      const res = await v.post(path, form);
      expect(res.status, path).toBe(403);
      expect(await res.text()).toContain('Your role (viewer) may not');
    }
    expect(readDispositions(db, 'pair', 'P-01')).toHaveLength(0);
  });

  it('an approver signs off as their account (the name field cannot choose another), recorded in the audit trail', async () => {
    const a = await signIn(app, 'bob');
    const page = await (await a.get('/pairs/P-01')).text();
    const field = (n: string) => new RegExp(`name="${n}" value="([^"]+)"`).exec(page)![1]!;
    const res = await a.post('/pairs/P-01/signoff', {
      inputsHash: field('inputsHash'),
      assessmentRef: field('assessmentRef'),
      name: 'Somebody Else',
      role: 'line or yield owner',
    });
    expect(res.status).toBe(303);
    const stored = readDispositions(db, 'pair', 'P-01');
    expect(stored.at(-1)!.signedBy).toBe('Bob Approver [bob] (line or yield owner)');
    const entry = readAudit(db).find((e) => e.action === 'signoff' && e.subject === 'pair P-01')!;
    expect(entry).toMatchObject({ actor: 'bob', via: 'session' });
    expect(entry.detail.dispositionId).toBe(stored.at(-1)!.id);
  });

  it("proposing the line's fits needs an engineer, and the proposer is the account, not a typed name", async () => {
    const vera = await signIn(app, 'vera');
    expect((await vera.post('/tools/propose', { name: 'Vera', label: 'x' })).status).toBe(403);
    expect((await vera.post('/calibration/propose', { name: 'Vera', label: 'x' })).status).toBe(403);
    const emil = await signIn(app, 'emil');
    for (const path of ['/tools/propose', '/calibration/propose']) {
      // The name field is left empty on purpose: signed in, the account names the proposer, so the
      // refusal is not for a missing name. This small line has no fit to propose (422 with the reason);
      // the demo line's proposal by an account is in learn-propose.test.ts.
      const res = await emil.post(path, { name: '', label: 'fits of the test line' });
      expect(res.status, path).toBe(422);
      const text = await res.text();
      expect(text).not.toContain('the name of the person proposing the set is required');
      expect(text, path).toMatch(/nothing to propose|no value/i);
    }
  });

  it('an approver cannot adopt the set they proposed; another approver can', async () => {
    const alice = await signIn(app, 'alice');
    const own = await alice.post(`/parameters/${setByAlice}/adopt`, {});
    expect(own.status).toBe(422);
    expect(await own.text()).toContain(
      `parameter set ${setByAlice} was proposed by alice: another person has to adopt it.`,
    );
    // The same through htmx (the refusal swaps into the page with 200), and with a typed name that
    // is not hers: the account decides, and nothing is adopted or recorded as adopted.
    const swapped = await alice.post(
      `/parameters/${setByAlice}/adopt`,
      { name: 'Bob Approver' },
      { 'HX-Request': 'true' },
    );
    expect(await swapped.text()).toContain(
      `parameter set ${setByAlice} was proposed by alice: another person has to adopt it.`,
    );
    expect(adoptedParameterSetId(db)).toBeNull();
    expect(readAudit(db).some((e) => e.action === 'parameters.adopt')).toBe(false);
    const bob = await signIn(app, 'bob');
    expect((await bob.post(`/parameters/${setByAlice}/adopt`, { name: 'ignored' })).status).toBe(303);
    expect(adoptedParameterSetId(db)).toBe(setByAlice);
    expect(readAudit(db).find((e) => e.action === 'parameters.adopt')).toMatchObject({
      actor: 'bob',
      subject: `parameter set ${setByAlice}`,
    });
    expect((await bob.post('/parameters/revert', {})).status).toBe(303);
    expect(adoptedParameterSetId(db)).toBeNull();
  });

  it('a set proposed under an approver’s display name (as the CLI records `--as NAME`) is hers too', async () => {
    const r = proposeParameterSet(
      db,
      {
        adders: {
          'BOND-1/ALN': fittedAdders('BOND-1', 'ALN', { countAbove: 1, countLow: 0.7, countHigh: 1.4 }),
        },
      },
      [],
      'proposed from the command line',
      '  alice  approver ',
      Date.UTC(2025, 2, 4, 12, 0),
    );
    if (!r.ok) throw new Error(r.message);
    const alice = await signIn(app, 'alice');
    const own = await alice.post(`/parameters/${r.set.id}/adopt`, {});
    expect(own.status).toBe(422);
    expect(await own.text()).toContain(`parameter set ${r.set.id} was proposed by`);
    expect(adoptedParameterSetId(db)).toBeNull();
    const bob = await signIn(app, 'bob');
    expect((await bob.post(`/parameters/${r.set.id}/adopt`, {})).status).toBe(303);
    expect((await bob.post('/parameters/revert', {})).status).toBe(303);
  });

  it('an admin makes an account with a one-time password that must be changed at the first sign-in', async () => {
    const ada = await signIn(app, 'ada');
    const made = await ada.post('/admin/users', {
      username: 'newbie',
      displayName: 'New Engineer',
      role: 'engineer',
    });
    const madeHtml = await made.text();
    expect(made.status, madeHtml).toBe(200);
    const once = /<code class="vc-token">([^<]+)<\/code>/.exec(madeHtml)![1]!;
    const n = await signIn(app, 'newbie', once);
    const first = await n.get('/lots');
    expect(first.status).toBe(303);
    expect(first.headers.get('location')).toBe('/account?first=1');
    const changed = await n.post('/account/password', {
      current: once,
      password: 'a much longer secret 42',
      repeat: 'a much longer secret 42',
    });
    expect(changed.status).toBe(303);
    expect((await n.get('/lots')).status).toBe(200);
    const actions = readAudit(db).map((e) => `${e.actor}:${e.action}:${e.subject}`);
    expect(actions).toContain('ada:user.create:newbie');
    expect(actions).toContain('newbie:user.password:newbie');
    // Disabled: the session ends at once.
    const id = findUserByName(db, 'newbie')!.id;
    expect((await ada.post(`/admin/users/${id}/disable`, {})).status).toBe(303);
    expect((await n.get('/lots')).status).toBe(303);
  });
});

describe('API tokens', () => {
  it('are shown once, stored as SHA-256 only, limited by scope, and stop working when revoked', async () => {
    const bob = await signIn(app, 'bob');
    const made = await bob.post('/account/tokens', { name: 'nightly report', scope: 'read' });
    const token = /<code class="vc-token">([^<]+)<\/code>/.exec(await made.text())![1]!;
    expect(token).toMatch(/^vct_[A-Za-z0-9_-]{43}$/);
    const row = db.prepare('SELECT token_sha256 FROM api_tokens WHERE name = ?').get('nightly report') as {
      token_sha256: string;
    };
    expect(row.token_sha256).toBe(createHash('sha256').update(token).digest('hex'));
    expect(JSON.stringify(db.prepare('SELECT * FROM api_tokens').all())).not.toContain(token);

    const bearer = { authorization: `Bearer ${token}` };
    expect((await app.request('/api/lots', { headers: bearer })).status).toBe(200);
    // Scope read: no sign-off even though bob is an approver; no account pages either.
    const signoff = await app.request('/api/pairs/P-01/signoff', {
      method: 'POST',
      headers: { ...bearer, 'content-type': 'application/json' },
      body: '{}',
    });
    expect(signoff.status).toBe(403);
    expect(((await signoff.json()) as { detail: string }).detail).toContain('through a token of scope read');
    expect((await app.request('/account', { headers: bearer })).status).toBe(403);

    const id = listApiTokens(db, findUserByName(db, 'bob')!.id)[0]!.id;
    expect((await bob.post(`/account/tokens/${id}/revoke`, {})).status).toBe(303);
    expect((await app.request('/api/lots', { headers: bearer })).status).toBe(401);
    expect(
      (await app.request('/api/lots', { headers: { authorization: 'Bearer vct_unknown' } })).status,
    ).toBe(401);
  });

  it('a signoff-scoped token signs off through the JSON API as its account, without a form token', async () => {
    const alice = await signIn(app, 'alice');
    const made = await alice.post('/account/tokens', { name: 'line script', scope: 'signoff' });
    const token = /<code class="vc-token">([^<]+)<\/code>/.exec(await made.text())![1]!;
    const bearer = { authorization: `Bearer ${token}` };
    const a = (await (await app.request('/api/pairs/P-04/assessment', { headers: bearer })).json()) as {
      inputsHash: string;
      assessmentRef: string;
    };
    const res = await app.request('/api/pairs/P-04/signoff', {
      method: 'POST',
      headers: { ...bearer, 'content-type': 'application/json' },
      body: JSON.stringify({ inputsHash: a.inputsHash, assessmentRef: a.assessmentRef, signedBy: 'Mallory' }),
    });
    expect(res.status).toBe(201);
    expect(readDispositions(db, 'pair', 'P-04').at(-1)!.signedBy).toBe('Alice Approver [alice]');
    expect(readAudit(db)[0]).toMatchObject({
      actor: 'alice',
      via: 'token',
      action: 'signoff',
      subject: 'pair P-04',
    });
  });
});

describe('the audit trail', () => {
  it('is append-only: the database refuses to change or remove an entry', () => {
    const id = appendAudit(db, { atMs: 1, actor: 'test', userId: null, via: 'system', action: 'test.entry' });
    expect(() => db.prepare('UPDATE audit_log SET actor = ? WHERE id = ?').run('someone else', id)).toThrow(
      'the audit trail is append-only: an entry is never changed',
    );
    expect(() => db.prepare('DELETE FROM audit_log WHERE id = ?').run(id)).toThrow(
      'the audit trail is append-only: an entry is never deleted',
    );
    expect(readAudit(db).find((e) => e.id === id)?.actor).toBe('test');
  });

  it('has its own page, for every signed-in account', async () => {
    const v = await signIn(app, 'vera');
    const html = await (await v.get('/audit')).text();
    expect(html).toContain('<h1>Audit trail</h1>');
    expect(html).toContain('data-action="signoff"');
    expect((await v.get('/audit?before=abc')).status).toBe(400);
  });
});

describe('first start and open mode', () => {
  it('makes the first administrator once, with a one-time password or the one from the environment', async () => {
    const fresh = openDatabase(':memory:');
    migrate(fresh);
    const made = await ensureFirstAdmin(fresh, undefined);
    expect(made.created).toBe(true);
    if (!made.created) return;
    expect(made.oneTimePassword).toMatch(/^[A-Za-z0-9_-]{24}$/);
    expect(findUserByName(fresh, 'admin')).toMatchObject({ role: 'admin', mustChangePassword: true });
    expect((await ensureFirstAdmin(fresh, undefined)).created).toBe(false);
    const other = openDatabase(':memory:');
    migrate(other);
    await expect(ensureFirstAdmin(other, 'short')).rejects.toThrow(
      'VOIDCAST_ADMIN_PASSWORD: The password must have at least 12 characters.',
    );
    const given = await ensureFirstAdmin(other, 'a long first-start secret');
    expect(given).toMatchObject({ created: true, oneTimePassword: null });
    expect(
      await verifyPassword('a long first-start secret', findUserByName(other, 'admin')!.passwordHash),
    ).toBe(true);
    fresh.close();
    other.close();
  });

  it('open mode shows its banner on every page and refuses any bind beyond loopback', async () => {
    const open = createApp({ db, dataDir: files.dir, version: 'test', log: () => {} });
    for (const p of ['/', '/lots', '/audit'])
      expect(await (await open.request(p)).text(), p).toContain('class="vc-open-banner"');
    await expect(
      startServer({ host: '0.0.0.0', port: 0, dataDir: files.dir, auth: 'open', log: () => {} }),
    ).rejects.toThrow('open mode serves this machine only');
    let err = '';
    const code = await main(['serve', '--open', '--host', '0.0.0.0', '--data', files.dir], {
      out: () => {},
      err: (t) => {
        err += t;
      },
      isTty: false,
      env: {},
      cwd: files.dir,
    });
    expect(code).toBe(2);
    expect(err).toContain('--open serves this machine only; binding to 0.0.0.0 requires accounts');
  });
});

describe('the command line', () => {
  it('records its imports in the audit trail under the operating-system user', async () => {
    const { mkdtempSync, rmSync } = await import('node:fs');
    const { tmpdir } = await import('node:os');
    const { join } = await import('node:path');
    const dir = mkdtempSync(join(tmpdir(), 'voidcast-cli-audit-'));
    try {
      const fixture = join(import.meta.dirname, '../fixtures/good/locations-line.csv');
      const io = { out: () => {}, err: () => {}, isTty: false, env: {}, cwd: dir };
      expect(await main(['import', 'locations', fixture, '--data', dir], io)).toBe(0);
      const cli = openDatabase(join(dir, 'voidcast.db'));
      const entry = readAudit(cli)[0]!;
      cli.close();
      expect(entry).toMatchObject({ via: 'cli', action: 'import', subject: fixture });
      expect(entry.actor).toMatch(/^command line \(.+\)$/);
      expect(entry.detail).toMatchObject({ kind: 'locations', status: 'imported', rowsStored: 7 });
    } finally {
      rmSync(dir, { recursive: true, force: true });
    }
  });

  it('refuses an --as-of in milliseconds beyond the accepted range (1e300 used to be taken)', () => {
    // Hand computation: Date.UTC(2100, 0, 1) − 1 = 4102444799999, the last accepted instant
    // (src/engine/as-of.ts: from 1970 up to, not including, 2100).
    expect(parseAsOf('4102444799999', 0)).toBe(4102444799999);
    expect(() => parseAsOf(`1${'0'.repeat(300)}`, 0)).toThrow('is outside the accepted range');
    expect(() => parseAsOf('9007199254740993', 0)).toThrow('is outside the accepted range');
  });
});
