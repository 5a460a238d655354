/**
 * Kept pages: the HTML (and JSON) of the assessment pages and API answers, reused until the data
 * change — so that a team opening the same lot at once is served from one rendering.
 *
 * What is kept, and for whom:
 * - only GET answers with status 200 of the routes in KEPT_ROUTES (the assessment pages and their
 *   swaps, the learning pages, the JSON assessments); never the account, audit, import or upload
 *   pages (but the import history, which only an import changes), never a POST;
 * - per data generation (src/store/writer.ts `dataGeneration`: any committed write — an import,
 *   a parameter set adopted, a sign-off — starts a new one, so the next request renders afresh),
 *   through the engine's kept results (src/engine/cache.ts);
 * - per asker: the account (id, role, names shown in the page frame and the sign-off form) or open
 *   mode, so one account's page is never served to another;
 * - per assessment clock: the installation's frozen clock, else the current minute (the pages
 *   assess at now floored to the minute); an API answer at the real now (no `?asOf=`, no frozen
 *   clock) is not kept, as its time is the millisecond of the request;
 * - per URL (path and query) and htmx headers (a fragment is not a page).
 *
 * Only the body and its content type are kept, never a header: the cookies a request gets (the
 * CSRF cookie for a browser that has none) are set by the middleware before this one, for that
 * request.
 *
 * The page's CSRF token belongs to the asker's browser: it is replaced by a placeholder when the
 * page is kept and by the current request's own token when it is served, so no token is ever
 * served to another browser. A body without a token is also kept gzipped, and sent so to a client
 * that accepts it (browsers, fetch, curl --compressed). Concurrent requests for a page being rendered wait for that one
 * rendering instead of each rendering it.
 */

import { gzipSync } from 'node:zlib';
import type { Context, MiddlewareHandler } from 'hono';
import { matchedRoutes } from 'hono/route';
import { keptResultAsync } from '../engine/cache.ts';
import { installationClockMs } from '../store/settings.ts';
import { actorOf } from './auth/session.ts';
import type { AppContext } from './context.ts';

/** The GET routes whose answers are kept (route patterns as registered). */
export const KEPT_ROUTES: ReadonlySet<string> = new Set([
  '/',
  '/lots',
  '/lots/:id',
  '/lots/:id/pareto',
  '/pairs/:id',
  '/pairs/:id/pareto',
  '/pairs/:id/spectrum',
  '/calibration',
  '/calibration/map',
  '/tools',
  '/tools/learned',
  '/calculators',
  '/calculators/:id',
  '/imports/history',
  '/imports/history/:id',
  '/parameters',
  '/parameters/:id',
  '/api/lots',
  '/api/lots/:id/assessment',
  '/api/pairs/:id/assessment',
]);

const TOKEN_PLACEHOLDER = '\u0000csrf-token\u0000';

interface Kept {
  status: number;
  contentType: string;
  body: string;
  /** The body gzipped once (RFC 1952), for clients that accept it; null when it holds a token. */
  gzip: ArrayBuffer | null;
}

/** Bodies below this many characters are sent as they are (compressing them saves little). */
const GZIP_MIN_CHARS = 2048;

function askerKey(c: Context): string | null {
  const a = actorOf(c);
  if (a.kind === 'open') return 'open';
  if (a.kind === 'user')
    return `${a.via}:${a.user.id}:${a.role}:${a.user.username}:${a.user.displayName}:${a.user.mustChangePassword ? 1 : 0}`;
  return null;
}

/** Middleware, after identify/csrfProtection/authorize: serves and keeps the KEPT_ROUTES answers. */
export function keptPages(ctx: AppContext): MiddlewareHandler {
  return async function keptPages(c, next) {
    if (c.req.method !== 'GET') return next();
    const asker = askerKey(c);
    if (asker === null) return next();
    const api = c.req.path.startsWith('/api/');
    const clock = installationClockMs(ctx.db);
    const hasAsOf = c.req.query('asOf') !== undefined;
    if (api && clock === null && !hasAsOf) return next();
    const clockKey = clock ?? Math.floor(Date.now() / 60_000);
    const key = [
      'http',
      asker,
      clockKey,
      c.req.url.slice(new URL(c.req.url).origin.length),
      c.req.header('hx-request') ?? '',
      c.req.header('hx-boosted') ?? '',
      c.req.header('hx-target') ?? '',
    ].join('|');
    let rendered = false;
    const kept = await keptResultAsync<Kept | null>(ctx.db, key, async () => {
      rendered = true;
      await next();
      if (
        !matchedRoutes(c).some((r) => r.method === 'GET' && KEPT_ROUTES.has(r.path)) ||
        c.res.status !== 200
      )
        return null;
      const contentType = c.res.headers.get('content-type') ?? '';
      if (!/^(text\/html|application\/json)/.test(contentType)) return null;
      const body = await c.res.text();
      const token = c.get('csrfToken');
      c.res = new Response(body, c.res);
      const keptBody =
        typeof token === 'string' && token !== '' ? body.replaceAll(token, TOKEN_PLACEHOLDER) : body;
      const gzip =
        keptBody.length >= GZIP_MIN_CHARS && !keptBody.includes(TOKEN_PLACEHOLDER)
          ? arrayBufferOf(gzipSync(keptBody, { level: 6 }))
          : null;
      return { status: 200, contentType, body: keptBody, gzip };
    });
    if (rendered) return;
    if (kept === null) return next();
    c.header('content-type', kept.contentType);
    c.header('vary', 'Accept-Encoding');
    if (kept.gzip && /\bgzip\b/i.test(c.req.header('accept-encoding') ?? '')) {
      c.header('content-encoding', 'gzip');
      return c.body(kept.gzip, 200);
    }
    const token = c.get('csrfToken');
    return c.body(kept.body.replaceAll(TOKEN_PLACEHOLDER, typeof token === 'string' ? token : ''), 200);
  };
}

function arrayBufferOf(b: Buffer): ArrayBuffer {
  const out = new ArrayBuffer(b.byteLength);
  new Uint8Array(out).set(b);
  return out;
}
