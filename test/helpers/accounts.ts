/**
 * Test helpers for the app with accounts on: make accounts with a role, sign in through the real
 * /login form, and send requests as that account (session cookie, CSRF cookie and form token).
 */
import type { Hono } from 'hono';
import { insertUser, type Role } from '../../src/store/accounts.ts';
import type { Db } from '../../src/store/db.ts';
import { hashPassword } from '../../src/web/auth/passwords.ts';

export const TEST_PASSWORD = 'correct horse battery staple';
export const ORIGIN = 'http://localhost';

/** Makes an account (password TEST_PASSWORD, nothing to change). */
export async function makeUser(
  db: Db,
  username: string,
  role: Role,
  displayName = username,
): Promise<number> {
  return insertUser(db, {
    username,
    displayName,
    role,
    passwordHash: await hashPassword(TEST_PASSWORD),
    mustChangePassword: false,
    atMs: Date.now(),
  });
}

export interface Browser {
  /** Cookies as a browser keeps them: name → value. */
  cookies: Map<string, string>;
  get: (path: string, headers?: Record<string, string>) => Promise<Response>;
  /** A form post carrying the page's CSRF token (taken from the last page fetched, or fetched). */
  post: (path: string, form: Record<string, string>, headers?: Record<string, string>) => Promise<Response>;
  token: () => Promise<string>;
}

/** A cookie jar and the two ways a browser talks to the app. */
export function browser(app: Hono): Browser {
  const cookies = new Map<string, string>();
  const cookieHeader = () => [...cookies].map(([k, v]) => `${k}=${v}`).join('; ');
  const keep = (res: Response) => {
    for (const line of res.headers.getSetCookie()) {
      const [pair, ...attrs] = line.split(';');
      const eq = pair!.indexOf('=');
      const name = pair!.slice(0, eq).trim();
      const value = pair!.slice(eq + 1).trim();
      const expired = attrs.some((a) => /^\s*max-age=0\s*$/i.test(a)) || value === '';
      if (expired) cookies.delete(name);
      else cookies.set(name, value);
    }
    return res;
  };
  const get = async (path: string, headers: Record<string, string> = {}) =>
    keep(await app.request(path, { headers: { cookie: cookieHeader(), ...headers } }));
  /** The form token, from the first page that carries one (sign-in, own account, overview). */
  const token = async () => {
    for (const path of ['/login', '/account', '/']) {
      const m = /name="_csrf" value="([^"]+)"/.exec(await (await get(path)).text());
      if (m) return m[1]!;
    }
    throw new Error('no page carried a form token');
  };
  const post = async (path: string, form: Record<string, string>, headers: Record<string, string> = {}) => {
    const body = new URLSearchParams({ _csrf: await token(), ...form }).toString();
    return keep(
      await app.request(path, {
        method: 'POST',
        body,
        headers: {
          cookie: cookieHeader(),
          'content-type': 'application/x-www-form-urlencoded',
          'content-length': String(Buffer.byteLength(body)),
          origin: ORIGIN,
          'sec-fetch-site': 'same-origin',
          ...headers,
        },
      }),
    );
  };
  return { cookies, get, post, token };
}

/** A browser signed in as `username` (password TEST_PASSWORD) through the /login form. */
export async function signIn(app: Hono, username: string, password = TEST_PASSWORD): Promise<Browser> {
  const b = browser(app);
  const res = await b.post('/login', { username, password, next: '/' });
  if (res.status !== 303 || !b.cookies.has('voidcast_session'))
    throw new Error(`sign-in as ${username} failed: ${res.status} ${await res.text()}`);
  return b;
}
