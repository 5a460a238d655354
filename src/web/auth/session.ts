/**
 * Who is asking: the account behind a request (a signed session cookie, or an API token), or the
 * open mode's nobody-in-particular. Two middlewares:
 *
 * - `identify` (before the CSRF check) finds the actor. A request with `Authorization: Bearer` is a
 *   script's: it is judged by its token alone (a browser never sends that header across sites
 *   without a CORS preflight, which this server never grants, so it needs no CSRF token).
 * - `authorize` (after it) refuses what the actor's role may not do (src/web/auth/permissions.ts):
 *   401 and the sign-in page for nobody, 403 for too small a role.
 *
 * Sessions: a random 32-byte id, stored server-side with its expiry (12 h), carried in the cookie
 * `voidcast_session` signed with HMAC-SHA256 under the data directory's key (Hono's signed cookies),
 * HttpOnly, SameSite=Strict. Signing in always makes a new session (the old one, if any, is ended):
 * an id fixed before sign-in never becomes a signed-in one.
 */
import { randomBytes } from 'node:crypto';
import type { Context, MiddlewareHandler } from 'hono';
import { deleteCookie, getSignedCookie, setSignedCookie } from 'hono/cookie';
import {
  deleteSession,
  findApiToken,
  findSession,
  findUserById,
  insertSession,
  type Role,
  type TokenScope,
  touchApiToken,
  type User,
} from '../../store/accounts.ts';
import type { AppContext } from '../context.ts';
import { forbidden } from '../csrf.ts';
import { isFragmentRequest } from '../render.ts';
import { tokenSha256 } from './passwords.ts';
import { atLeast, isPublic, lowerOf, requiredRole, SCOPE_ROLE } from './permissions.ts';

export const SESSION_COOKIE = 'voidcast_session';
export const SESSION_HOURS = 12;

export type Actor =
  | { kind: 'open' }
  | { kind: 'user'; user: User; via: 'session'; sessionId: string; role: Role }
  | { kind: 'user'; user: User; via: 'token'; tokenId: number; scope: TokenScope; role: Role }
  | { kind: 'nobody' };

declare module 'hono' {
  interface ContextVariableMap {
    actor: Actor;
  }
}

export function actorOf(c: Context): Actor {
  return c.get('actor') ?? { kind: 'open' };
}

/** The signed-in account of a request, or null (open mode, nobody). */
export function accountOf(c: Context): Extract<Actor, { kind: 'user' }> | null {
  const a = actorOf(c);
  return a.kind === 'user' ? a : null;
}

export function accountsOn(ctx: AppContext): boolean {
  return ctx.auth?.mode === 'accounts';
}

function secretOf(ctx: AppContext): string {
  if (ctx.auth?.mode !== 'accounts') throw new Error('accounts are not on');
  return ctx.auth.sessionSecret;
}

/** Last-used times of tokens are written at most once a minute per token. */
const touched = new Map<number, number>();

export function identify(ctx: AppContext): MiddlewareHandler {
  return async function identify(c, next) {
    if (!accountsOn(ctx)) {
      c.set('actor', { kind: 'open' });
      return next();
    }
    const authz = c.req.header('authorization');
    if (authz !== undefined) {
      const m = /^Bearer\s+(\S+)$/i.exec(authz.trim());
      const t = m ? findApiToken(ctx.db, tokenSha256(m[1]!)) : null;
      const user = t ? findUserById(ctx.db, t.userId) : null;
      if (!t || !user || user.disabled)
        return c.json(
          { error: 'unauthorized', detail: 'The API token is unknown, revoked, or its account is disabled.' },
          401,
          { 'WWW-Authenticate': 'Bearer realm="voidcast"' },
        );
      const now = Date.now();
      if ((touched.get(t.id) ?? 0) < now - 60_000) {
        touched.set(t.id, now);
        touchApiToken(ctx.db, t.id, now);
      }
      c.set('actor', {
        kind: 'user',
        user,
        via: 'token',
        tokenId: t.id,
        scope: t.scope,
        role: lowerOf(user.role, SCOPE_ROLE[t.scope]),
      });
      return next();
    }
    const id = await getSignedCookie(c, secretOf(ctx), SESSION_COOKIE);
    const s = typeof id === 'string' && /^[0-9a-f]{64}$/.test(id) ? findSession(ctx.db, id) : null;
    const user = s && s.expiresAtMs > Date.now() ? findUserById(ctx.db, s.userId) : null;
    if (s && user && !user.disabled)
      c.set('actor', { kind: 'user', user, via: 'session', sessionId: s.id, role: user.role });
    else c.set('actor', { kind: 'nobody' });
    return next();
  };
}

/** True when the request came with a token (the CSRF check does not apply). */
export function viaToken(c: Context): boolean {
  const a = c.get('actor');
  return a?.kind === 'user' && a.via === 'token';
}

export function authorize(ctx: AppContext): MiddlewareHandler {
  return async function authorize(c, next) {
    const actor = actorOf(c);
    if (actor.kind === 'open') return next();
    const method = c.req.method;
    const path = c.req.path;
    if (isPublic(method, path)) return next();
    const api = path.startsWith('/api/');
    if (actor.kind === 'nobody') {
      if (api)
        return c.json(
          { error: 'unauthorized', detail: 'Sign in, or send an API token as Authorization: Bearer.' },
          401,
          { 'WWW-Authenticate': 'Bearer realm="voidcast"' },
        );
      const back =
        method === 'GET'
          ? `?next=${encodeURIComponent(c.req.url.slice(new URL(c.req.url).origin.length))}`
          : '';
      if (isFragmentRequest(c)) {
        c.header('HX-Redirect', `/login${back}`);
        return c.text('Sign in first.', 401);
      }
      return c.redirect(`/login${back}`, 303);
    }
    if (
      actor.via === 'token' &&
      (path.startsWith('/account') || path.startsWith('/admin') || path === '/logout')
    )
      return api
        ? c.json({ error: 'forbidden', detail: 'API tokens cannot manage accounts.' }, 403)
        : forbidden(c, ctx.version, 'API tokens cannot manage accounts; sign in.');
    if (
      actor.via === 'session' &&
      actor.user.mustChangePassword &&
      !path.startsWith('/account') &&
      path !== '/logout'
    )
      return c.redirect('/account?first=1', 303);
    const need = requiredRole(method, path);
    if (!atLeast(actor.role, need.role)) {
      const detail = `Your role (${actor.role}${actor.via === 'token' ? `, through a token of scope ${actor.scope}` : ''}) may not ${need.what}: that needs the role ${need.role}.`;
      return api ? c.json({ error: 'forbidden', detail }, 403) : forbidden(c, ctx.version, detail);
    }
    return next();
  };
}

/** Starts a new session for `user` (ending the request's old one), and sets the cookie. */
export async function startSession(c: Context, ctx: AppContext, user: User): Promise<void> {
  const old = accountOf(c);
  if (old?.via === 'session') deleteSession(ctx.db, old.sessionId);
  const now = Date.now();
  const id = randomBytes(32).toString('hex');
  insertSession(ctx.db, {
    id,
    userId: user.id,
    createdAtMs: now,
    expiresAtMs: now + SESSION_HOURS * 3600_000,
  });
  await setSignedCookie(c, SESSION_COOKIE, id, secretOf(ctx), {
    path: '/',
    httpOnly: true,
    sameSite: 'Strict',
    maxAge: SESSION_HOURS * 3600,
  });
}

export function endSession(c: Context, ctx: AppContext): void {
  const a = accountOf(c);
  if (a?.via === 'session') deleteSession(ctx.db, a.sessionId);
  deleteCookie(c, SESSION_COOKIE, { path: '/' });
}
