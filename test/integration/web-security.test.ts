/**
 * Safety of the web path: cross-site request forgery (every unsafe request of the app), the
 * escaping of names that come from files, and refused uploads leaving nothing behind.
 *
 * The rules checked are those of the OWASP Cross-Site Request Forgery Prevention Cheat Sheet
 * (Fetch Metadata / Origin verification, signed double-submit cookie) and of W3C Fetch Metadata
 * Request Headers (Sec-Fetch-Site values same-origin, same-site, cross-site, none).
 */
import { mkdtempSync, readdirSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join, relative } from 'node:path';
import type { Hono } from 'hono';
import { afterEach, describe, expect, it } from 'vitest';
import { type Db, openDataDir } from '../../src/store/db.ts';
import { createApp } from '../../src/web/app.ts';
import type { AppContext } from '../../src/web/context.ts';
import {
  csrfField,
  csrfHeaders,
  csrfSecret,
  originProblem,
  tokenFor,
  tokensEqual,
} from '../../src/web/csrf.ts';

const ORIGIN = 'http://localhost';
const LOCATIONS = [
  'location_id,parent_id,level,name,environment,iso_class,floor_area_m2',
  'site-a,,site,"<script>alert(1)</script> ""A"" & B",open-room,,',
  '',
].join('\n');

interface H {
  app: Hono;
  db: Db;
  dir: string;
  cookie: string;
  token: string;
  posted: Record<string, unknown>[];
}
const made: H[] = [];
afterEach(() => {
  for (const h of made.splice(0)) {
    h.db.close();
    rmSync(h.dir, { recursive: true, force: true });
  }
});

/** The app with one extra route that posts a small urlencoded form, as other pages will. */
async function harness(): Promise<H> {
  const dir = mkdtempSync(join(tmpdir(), 'voidcast-web-security-'));
  const db = openDataDir(dir);
  const posted: Record<string, unknown>[] = [];
  const extra = {
    register(app: Hono, _ctx: AppContext) {
      app.get('/test-form', (c) =>
        c.html(
          `<form method="post" action="/test-echo">${csrfField(c)}</form><div hx-headers='${csrfHeaders(c)}'></div>`,
        ),
      );
      app.post('/test-echo', async (c) => {
        posted.push(await c.req.parseBody({ all: true }));
        return c.text('stored');
      });
    },
  };
  const app = createApp({ db, dataDir: dir, version: '9.9.9', log: () => undefined }, [extra]);
  const res = await app.request('/test-form');
  const cookie = (res.headers.get('set-cookie') ?? '').split(';')[0]!;
  const token = /name="_csrf" value="([^"]+)"/.exec(await res.text())![1]!;
  const h = { app, db, dir, cookie, token, posted };
  made.push(h);
  return h;
}

function echo(h: H, body: Record<string, string>, headers: Record<string, string>) {
  const data = new URLSearchParams(body).toString();
  return h.app.request('/test-echo', {
    method: 'POST',
    body: data,
    headers: {
      'content-type': 'application/x-www-form-urlencoded',
      'content-length': String(Buffer.byteLength(data)),
      ...headers,
    },
  });
}

function upload(h: H, fields: [string, string | File][], headers: Record<string, string>) {
  const fd = new FormData();
  for (const [k, v] of fields) fd.append(k, v);
  return h.app.request('/imports', { method: 'POST', body: fd, headers });
}

const count = (db: Db, table: string) =>
  (db.prepare(`SELECT COUNT(*) AS n FROM ${table}`).get() as { n: number }).n;

describe('CSRF: the token', () => {
  it('sets an HttpOnly, SameSite=Lax cookie once, and the form token is bound to it', async () => {
    const h = await harness();
    const first = await h.app.request('/imports');
    expect(first.headers.get('set-cookie')).toMatch(
      /^voidcast_csrf=[A-Za-z0-9_-]{43}; Path=\/; HttpOnly; SameSite=Lax$/,
    );
    // With the cookie sent back, no new cookie is set and the token stays the same.
    const again = await h.app.request('/test-form', { headers: { cookie: h.cookie } });
    expect(again.headers.get('set-cookie')).toBeNull();
    expect(await again.text()).toContain(`value="${h.token}"`);
    const id = h.cookie.split('=')[1]!;
    expect(h.token).toBe(tokenFor(csrfSecret(h.db), id));
    expect(h.token).not.toBe(id);
  });

  it('accepts a small form with the token in its _csrf field; the route still reads the whole body', async () => {
    const h = await harness();
    const res = await echo(h, { _csrf: h.token, note: 'a & b' }, { cookie: h.cookie, origin: ORIGIN });
    expect(res.status).toBe(200);
    expect(h.posted).toEqual([{ _csrf: h.token, note: 'a & b' }]);
  });

  it('accepts the token in the X-CSRF-Token header (htmx hx-headers)', async () => {
    const h = await harness();
    const res = await echo(h, { note: 'x' }, { cookie: h.cookie, origin: ORIGIN, 'X-CSRF-Token': h.token });
    expect(res.status).toBe(200);
  });

  const refusals: [
    string,
    (h: H) => { body: Record<string, string>; headers: Record<string, string> },
    RegExp,
  ][] = [
    [
      'without a token',
      (h) => ({ body: { note: 'x' }, headers: { cookie: h.cookie, origin: ORIGIN } }),
      /token was missing/,
    ],
    [
      'with a wrong token',
      (h) => ({
        body: { _csrf: `${h.token.slice(0, -2)}xx`, note: 'x' },
        headers: { cookie: h.cookie, origin: ORIGIN },
      }),
      /did not match/,
    ],
    [
      'with a wrong token in the header',
      (h) => ({
        body: { _csrf: h.token },
        headers: { cookie: h.cookie, origin: ORIGIN, 'X-CSRF-Token': 'nope' },
      }),
      /did not match/,
    ],
    [
      "with another session's token",
      (h) => ({
        body: { _csrf: tokenFor(csrfSecret(h.db), 'A'.repeat(43)) },
        headers: { cookie: h.cookie, origin: ORIGIN },
      }),
      /did not match/,
    ],
    [
      'without the cookie',
      (h) => ({ body: { _csrf: h.token }, headers: { origin: ORIGIN } }),
      /no session cookie/,
    ],
    [
      'from a foreign Origin, even with the right token',
      (h) => ({ body: { _csrf: h.token }, headers: { cookie: h.cookie, origin: 'https://evil.example' } }),
      /another origin \(https:\/\/evil\.example\)/,
    ],
    [
      'with Origin: null (sandboxed frame, privacy redirect)',
      (h) => ({ body: { _csrf: h.token }, headers: { cookie: h.cookie, origin: 'null' } }),
      /another origin \(null\)/,
    ],
    [
      'marked cross-site by the browser (Sec-Fetch-Site)',
      (h) => ({ body: { _csrf: h.token }, headers: { cookie: h.cookie, 'sec-fetch-site': 'cross-site' } }),
      /reports it as cross-site/,
    ],
    [
      'marked same-site (a sibling subdomain is still another origin)',
      (h) => ({ body: { _csrf: h.token }, headers: { cookie: h.cookie, 'sec-fetch-site': 'same-site' } }),
      /reports it as same-site/,
    ],
  ];
  for (const [what, make, message] of refusals)
    it(`refuses a POST ${what} with a 403 page, and the route never runs`, async () => {
      const h = await harness();
      const { body, headers } = make(h);
      const res = await echo(h, body, headers);
      expect(res.status).toBe(403);
      const html = await res.text();
      expect(html.startsWith('<!doctype html>')).toBe(true);
      expect(html).toContain('This request was refused');
      expect(html).toMatch(message);
      expect(h.posted).toEqual([]);
    });

  it('answers an htmx request refused for its token with the message alone', async () => {
    const h = await harness();
    const res = await echo(h, { note: 'x' }, { cookie: h.cookie, origin: ORIGIN, 'HX-Request': 'true' });
    expect(res.status).toBe(403);
    const html = await res.text();
    expect(html).not.toContain('<!doctype');
    expect(html).toContain('This request was refused');
  });

  it('asks no token of a JSON body (a cross-site page cannot send one without a CORS preflight), but checks its origin', async () => {
    const h = await harness();
    const json = (headers: Record<string, string>) =>
      h.app.request('/test-echo', {
        method: 'POST',
        body: '{"a":1}',
        headers: { 'content-type': 'application/json', ...headers },
      });
    expect((await json({})).status).toBe(200);
    expect((await json({ origin: 'https://evil.example' })).status).toBe(403);
    expect((await json({ 'sec-fetch-site': 'cross-site' })).status).toBe(403);
  });

  it('asks the token of text/plain and of bodies without a type (a cross-site form can send those)', async () => {
    const h = await harness();
    for (const headers of [{ 'content-type': 'text/plain' }, {}] as Record<string, string>[]) {
      const res = await h.app.request('/test-echo', {
        method: 'POST',
        body: new Blob(['{"a":1}']),
        headers: { cookie: h.cookie, origin: ORIGIN, ...headers },
      });
      expect(res.status).toBe(403);
    }
    expect(h.posted).toEqual([]);
  });

  it('lets GET, HEAD and OPTIONS through whatever their origin', async () => {
    const h = await harness();
    for (const method of ['GET', 'HEAD', 'OPTIONS']) {
      const res = await h.app.request('/imports', { method, headers: { origin: 'https://evil.example' } });
      expect(res.status).not.toBe(403);
    }
  });
});

describe('CSRF: uploads to /imports', () => {
  const file = () => new File([LOCATIONS], 'l.csv', { type: 'text/csv' });

  it('refuses an upload without the token (403) and stores nothing, writing no file', async () => {
    const h = await harness();
    const res = await upload(
      h,
      [
        ['kind', 'locations'],
        ['files', file()],
      ],
      { cookie: h.cookie, origin: ORIGIN },
    );
    expect(res.status).toBe(403);
    expect(count(h.db, 'imports')).toBe(0);
    expect(readdirSync(join(h.dir, 'uploads-in-progress'))).toEqual([]);
  });

  it('refuses an upload whose token comes only after the file (it is checked before any file byte is kept)', async () => {
    const h = await harness();
    const res = await upload(
      h,
      [
        ['kind', 'locations'],
        ['files', file()],
        ['_csrf', h.token],
      ],
      {
        cookie: h.cookie,
        origin: ORIGIN,
      },
    );
    expect(res.status).toBe(403);
    expect(readdirSync(join(h.dir, 'uploads-in-progress'))).toEqual([]);
  });

  it('refuses an upload from a foreign Origin with the right token (403)', async () => {
    const h = await harness();
    const res = await upload(
      h,
      [
        ['_csrf', h.token],
        ['kind', 'locations'],
        ['files', file()],
      ],
      {
        cookie: h.cookie,
        origin: 'https://evil.example',
      },
    );
    expect(res.status).toBe(403);
    expect(count(h.db, 'imports')).toBe(0);
  });

  it('accepts the same upload from our origin with the token first', async () => {
    const h = await harness();
    const res = await upload(
      h,
      [
        ['_csrf', h.token],
        ['kind', 'locations'],
        ['files', file()],
      ],
      {
        cookie: h.cookie,
        origin: ORIGIN,
      },
    );
    expect(res.status).toBe(303);
  });
});

describe('origin rule (Fetch Metadata, then Origin)', () => {
  const own = 'http://127.0.0.1:4180';
  const table: [string, { secFetchSite?: string; origin?: string }, string[], boolean][] = [
    ['same origin', { origin: own }, [], true],
    [
      'same-origin by Fetch Metadata, proxied origin',
      { origin: 'https://fab.example', secFetchSite: 'same-origin' },
      [],
      true,
    ],
    ['an allowed proxy origin', { origin: 'https://fab.example' }, ['https://fab.example'], true],
    ['no headers at all (not a browser form)', {}, [], true],
    ['empty headers', { origin: '', secFetchSite: '' }, [], true],
    ['another port is another origin', { origin: 'http://127.0.0.1:4181' }, [], false],
    ['another scheme is another origin', { origin: 'https://127.0.0.1:4180' }, [], false],
    ['a prefix is not the origin', { origin: `${own}.evil.example` }, [], false],
    ['Origin null', { origin: 'null' }, [], false],
    ['Origin null claiming same-origin', { origin: 'null', secFetchSite: 'same-origin' }, [], false],
    ['cross-site', { secFetchSite: 'cross-site' }, [], false],
    ['same-site', { secFetchSite: 'same-site' }, [], false],
    ['none (typed into the address bar; never a form POST)', { secFetchSite: 'none' }, [], false],
    ['an unknown Sec-Fetch-Site value', { secFetchSite: 'bogus' }, [], false],
  ];
  for (const [what, headers, allowed, ok] of table)
    it(`${ok ? 'allows' : 'refuses'} ${what}`, () => {
      expect(originProblem(headers, own, allowed) === null).toBe(ok);
    });

  it('compares tokens only when both are present and equal in length', () => {
    expect(tokensEqual('abc', 'abc')).toBe(true);
    expect(tokensEqual('abc', 'abd')).toBe(false);
    expect(tokensEqual('abc', 'abcd')).toBe(false);
    expect(tokensEqual('', '')).toBe(false);
  });
});

describe('names from files are shown as text, never as markup', () => {
  it('escapes location names, rejected values and file names on the report, the history and the overview', async () => {
    const h = await harness();
    const name = `<script>alert(1)</script> "q" & 'a'.csv`;
    const res = await upload(
      h,
      [
        ['_csrf', h.token],
        ['kind', 'locations'],
        ['files', new File([LOCATIONS], name, { type: 'text/csv' })],
      ],
      { cookie: h.cookie, origin: ORIGIN },
    );
    const url = res.headers.get('location')!;
    let html = '';
    for (let i = 0; i < 600 && !html.includes('vc-job-done'); i++) {
      html = await (await h.app.request(url, { headers: { cookie: h.cookie } })).text();
      if (!html.includes('vc-job-done')) await new Promise((r) => setTimeout(r, 50));
    }
    expect(html).toContain('Import report');
    expect(html).toContain('&lt;script&gt;alert(1)&lt;/script&gt; &quot;q&quot; &amp; &#39;a&#39;.csv');
    // The only <script> elements on the page are our own (htmx and the page script); none from the file name.
    expect(html.match(/<script[^>]*>/g)).toEqual([
      '<script src="/assets/htmx.min.js" defer="">',
      '<script src="/assets/voidcast.js" defer="">',
    ]);
    const stored = h.db.prepare('SELECT name FROM locations').get() as { name: string };
    expect(stored.name).toBe(`<script>alert(1)</script> "A" & B`);
    for (const path of ['/imports', '/']) {
      const page = await (await h.app.request(path, { headers: { cookie: h.cookie } })).text();
      expect(page.match(/<script/g)).toHaveLength(2); // htmx and the page script, both from /assets
    }
  });

  it('no view or route inserts unescaped HTML (raw(), dangerouslySetInnerHTML)', () => {
    // A static guard next to the behavioural tests: hono/jsx escapes text and attributes unless told not to.
    const root = join(import.meta.dirname, '..', '..');
    const offenders: string[] = [];
    const walk = (dir: string) => {
      for (const e of readdirSync(dir, { withFileTypes: true })) {
        const p = join(dir, e.name);
        if (e.isDirectory()) walk(p);
        else if (/\.tsx?$/.test(e.name)) {
          const text = readFileSync(p, 'utf8');
          if (/\braw\(|dangerouslySetInnerHTML/.test(text)) offenders.push(relative(root, p));
        }
      }
    };
    walk(join(root, 'views'));
    walk(join(root, 'src', 'web'));
    expect(offenders).toEqual([]);
  });
});
