/**
 * Protection against cross-site request forgery, for every state-changing request of the app.
 *
 * Two independent checks, both required (OWASP Cross-Site Request Forgery Prevention Cheat Sheet):
 *
 * 1. **Where the request comes from.** A browser states it in `Sec-Fetch-Site` (W3C Fetch Metadata
 *    Request Headers) and in `Origin` (WHATWG Fetch); a page cannot forge either. `Sec-Fetch-Site`
 *    must be `same-origin`; without it, `Origin` must equal this server's origin (or one listed in
 *    `allowedOrigins`). `Origin: null` is refused. A request with neither header does not come from a
 *    current browser's cross-site form; it still needs the token.
 * 2. **A token only our pages know** ("signed double-submit cookie"): the cookie `voidcast_csrf`
 *    holds a random id; the token is HMAC-SHA256(secret, id), base64url. Forms carry it in the hidden
 *    field `_csrf` (`csrfField(c)`), htmx requests may send it as the header `X-CSRF-Token`
 *    (`csrfHeaders(c)` for `hx-headers`). Another site can neither read the cookie nor compute the
 *    token; the secret lives in this installation's settings.
 *
 * The token is required of requests another site's page could send without a CORS preflight:
 * bodies of type application/x-www-form-urlencoded, multipart/form-data, text/plain or none
 * (WHATWG Fetch, CORS-safelisted request headers). A JSON body needs a preflight, which this
 * server never grants across origins, so JSON API clients need only pass the origin check.
 *
 * Large multipart bodies are not read here (they would have to be buffered): a route that streams
 * uploads lists itself in `streamingPaths` and must check the `_csrf` field itself with
 * `verifyCsrfToken` before it accepts a file (src/web/upload.ts `beforeFile`). Every other large
 * form must send the header.
 */
import { createHmac, randomBytes, timingSafeEqual } from 'node:crypto';
import type { Context, MiddlewareHandler } from 'hono';
import { getCookie, setCookie } from 'hono/cookie';
import { html } from 'hono/html';
import type { HtmlEscapedString } from 'hono/utils/html';
import { Layout } from '../../views/layout.tsx';
import { MessagePage } from '../../views/pages/message.tsx';
import type { Db } from '../store/db.ts';
import { getSetting, setSetting } from '../store/settings.ts';
import { DOCTYPE, isFragmentRequest } from './render.ts';

declare module 'hono' {
  interface ContextVariableMap {
    /** The CSRF token of this request's session (set by csrfProtection). */
    csrfToken: string;
    /** True when a streaming route must check the token itself. */
    csrfDeferred: boolean;
  }
}

export const CSRF_COOKIE = 'voidcast_csrf';
export const CSRF_FIELD = '_csrf';
export const CSRF_HEADER = 'X-CSRF-Token';
const SECRET_SETTING = 'web.csrf_secret';
const SAFE_METHODS = new Set(['GET', 'HEAD', 'OPTIONS']);
/** Content types a cross-site page may send without a preflight (WHATWG Fetch, CORS-safelisted), and none. */
const SIMPLE_TYPES = new Set(['', 'application/x-www-form-urlencoded', 'multipart/form-data', 'text/plain']);
/** Bodies up to this size are parsed here to find the field (hono caches the parse for the route). */
const SMALL_BODY_BYTES = 1024 * 1024;

export interface CsrfOptions {
  /** Key of the HMAC; see `csrfSecret(db)`. */
  secret: string;
  /** Origins besides this server's own that may post (e.g. the public name behind a proxy). */
  allowedOrigins?: string[];
  /** Paths whose multipart bodies the route itself checks while streaming (exact match). */
  streamingPaths?: string[];
  /** Version shown in the footer of the 403 page. */
  version?: string;
}

/** The installation's CSRF secret: created once (32 random bytes) and kept in the settings table. */
export function csrfSecret(db: Db): string {
  const existing = getSetting(db, SECRET_SETTING);
  if (existing && existing.length >= 32) return existing;
  const fresh = randomBytes(32).toString('base64url');
  setSetting(db, SECRET_SETTING, fresh);
  return fresh;
}

/** HMAC-SHA256(secret, id) in base64url: the token that goes with a cookie id. */
export function tokenFor(secret: string, id: string): string {
  return createHmac('sha256', secret).update(id).digest('base64url');
}

/** Constant-time comparison of two tokens (no early exit that would leak a matching prefix). */
export function tokensEqual(a: string, b: string): boolean {
  const x = Buffer.from(a);
  const y = Buffer.from(b);
  return x.length === y.length && x.length > 0 && timingSafeEqual(x, y);
}

/**
 * Where the request comes from, by Fetch Metadata and Origin: null when acceptable, else the reason.
 */
export function originProblem(
  headers: { secFetchSite?: string; origin?: string },
  ownOrigin: string,
  allowed: string[] = [],
): string | null {
  const site = headers.secFetchSite?.trim().toLowerCase();
  const origin = headers.origin?.trim();
  if (origin !== undefined && origin !== '') {
    if (origin === ownOrigin || allowed.includes(origin)) return null;
    // Behind a proxy the server may not know its public origin; the browser's own statement counts.
    if (site === 'same-origin' && origin !== 'null') return null;
    return `it was sent from another origin (${origin})`;
  }
  if (site !== undefined && site !== '' && site !== 'same-origin') return `the browser reports it as ${site}`;
  return null;
}

/**
 * The middleware: sets the cookie on any request that lacks one, makes the token available to the
 * handlers (`csrfToken(c)`), and refuses an unsafe request that fails either check with a 403 page.
 */
export function csrfProtection(options: CsrfOptions): MiddlewareHandler {
  const secret = options.secret;
  const allowed = options.allowedOrigins ?? [];
  const streaming = new Set(options.streamingPaths ?? []);
  const version = options.version ?? '';
  return async function csrfProtection(c, next) {
    let id = getCookie(c, CSRF_COOKIE);
    const hadCookie = id !== undefined && /^[A-Za-z0-9_-]{43}$/.test(id);
    if (!hadCookie) {
      id = randomBytes(32).toString('base64url');
      setCookie(c, CSRF_COOKIE, id, { path: '/', httpOnly: true, sameSite: 'Lax' });
    }
    const expected = tokenFor(secret, id!);
    c.set('csrfToken', expected);

    if (SAFE_METHODS.has(c.req.method)) return next();
    // A script with an API token (src/web/auth/session.ts): a browser cannot send Authorization
    // across sites without a preflight this server never grants, so no form token is needed.
    const actor = c.get('actor');
    if (actor?.kind === 'user' && actor.via === 'token') return next();

    const problem = originProblem(
      { secFetchSite: c.req.header('sec-fetch-site'), origin: c.req.header('origin') },
      new URL(c.req.url).origin,
      allowed,
    );
    if (problem) return forbidden(c, version, `The request was refused because ${problem}.`);

    // Only a "simple" request (WHATWG Fetch: a CORS-safelisted Content-Type, or none) can be sent
    // by another site's page without a CORS preflight, which this server never grants. Those need
    // the token; a JSON body (an API client, or a preflighted request) does not.
    const type = (c.req.header('content-type') ?? '').split(';')[0]!.trim().toLowerCase();
    if (!SIMPLE_TYPES.has(type)) return next();

    if (!hadCookie)
      return forbidden(
        c,
        version,
        'The request carried no session cookie. Reload the page and send the form again.',
      );

    const header = c.req.header(CSRF_HEADER);
    if (header !== undefined) {
      if (tokensEqual(header, expected)) return next();
      return forbidden(c, version, 'The form token did not match. Reload the page and send the form again.');
    }
    if (type === 'multipart/form-data' && streaming.has(c.req.path)) {
      // A streaming route reads its own body (never buffered here, whatever its size) and checks the
      // field (verifyCsrfToken) before it keeps any file byte.
      c.set('csrfDeferred', true);
      return next();
    }
    const length = Number(c.req.header('content-length') ?? Number.NaN);
    const isForm = type === 'application/x-www-form-urlencoded' || type === 'multipart/form-data';
    if (isForm && Number.isFinite(length) && length <= SMALL_BODY_BYTES) {
      const body = await c.req.parseBody();
      const field = body[CSRF_FIELD];
      if (typeof field === 'string' && tokensEqual(field, expected)) return next();
      return forbidden(
        c,
        version,
        'The form token was missing or did not match. Reload the page and send the form again.',
      );
    }
    return forbidden(c, version, `The request carried no form token (send it in the ${CSRF_HEADER} header).`);
  };
}

/** The token for forms on this request's page. */
export function csrfToken(c: Context): string {
  const t = c.get('csrfToken');
  if (typeof t !== 'string') throw new Error('csrfProtection middleware is not installed');
  return t;
}

/** `<input type="hidden" name="_csrf" value="…">` for a form; put it first in the form. */
export function csrfField(c: Context): HtmlEscapedString {
  return html`<input type="hidden" name="${CSRF_FIELD}" value="${csrfToken(c)}" />` as HtmlEscapedString;
}

/** The value for `hx-headers` on an element that posts without a form: `{"X-CSRF-Token":"…"}`. */
export function csrfHeaders(c: Context): string {
  return JSON.stringify({ [CSRF_HEADER]: csrfToken(c) });
}

/** For streaming routes: does this value (the `_csrf` field) match the request's token? */
export function verifyCsrfToken(c: Context, value: string | undefined): boolean {
  return value !== undefined && tokensEqual(value, csrfToken(c));
}

/** True when the middleware left the token check to the route (a large streamed multipart body). */
export function csrfDeferred(c: Context): boolean {
  return c.get('csrfDeferred') === true;
}

/** The 403 answer: the message alone for an htmx request, else a full page. */
export function forbidden(c: Context, version: string, detail: string): Response {
  const message = MessagePage({ code: '403', heading: 'This request was refused', detail });
  // An htmx request gets the message alone; the page's own rule decides whether a 403 is swapped in.
  if (isFragmentRequest(c)) return c.html(String(message), 403);
  const page =
    DOCTYPE +
    String(
      Layout({
        title: 'Refused',
        active: '',
        version,
        children: message,
      }),
    );
  return c.html(page, 403);
}
