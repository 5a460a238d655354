/**
 * Kept pages: the HTML (and JSON) of the assessment pages and API answers, reused until the data
 * change — so that a team opening the same lot at once is served from one rendering.
 *
 * What is kept, and for whom:
 * - only GET answers with status 200 of the routes in KEPT_ROUTES (the assessment pages and their
 *   swaps, the learning pages, the JSON assessments, the Areas page and its trend, an area's audit
 *   page, its printed report and its table downloads, the line view and its table downloads, the
 *   what-if of every waiting lot and its export, the Imports page and its history); never the
 *   account, audit-trail (/audit) or upload-job pages, never a POST;
 * - per data generation (src/store/writer.ts `dataGeneration`: any committed write — an import,
 *   a parameter set adopted, a sign-off — starts a new one, so the next request renders afresh),
 *   through the engine's kept results (src/engine/cache.ts);
 * - per asker: the account (id, role, names shown in the page frame and the sign-off form) or open
 *   mode, so one account's page is never served to another;
 * - per assessment clock: the installation's frozen clock, else the current minute (the pages
 *   assess at now floored to the minute); an API answer at the real now (no `?asOf=`, no frozen
 *   clock) is not kept, as its time is the millisecond of the request;
 * - per URL (path and query) and htmx headers (a fragment is not a page);
 * - per what else a route registers with `keptKeyPart` (the Imports page: the uploads running in
 *   this process, which change without a write; an audit report: the real minute it states it was
 *   made in, even under a frozen assessment clock).
 *
 * Only the body, its content type and a download's file name (content-disposition) are kept, never
 * another header: the cookies a request gets (the CSRF cookie for a browser that has none) are set
 * by the middleware before this one, for that request.
 *
 * The page's CSRF token belongs to the asker's browser: it is replaced by a placeholder when the
 * page is kept and by the current request's own token when it is served, so no token is ever
 * served to another browser. A body is also kept compressed (around its tokens, see GzipPieces) and
 * sent gzipped to a client that accepts it (browsers, fetch, curl --compressed). Concurrent requests for a page being rendered wait for that one
 * rendering instead of each rendering it.
 */

import { crc32, deflateRawSync, constants as zlibConstants } from 'node:zlib';
import type { Context, MiddlewareHandler } from 'hono';
import { matchedRoutes } from 'hono/route';
import { keptResultAsync } from '../engine/cache.ts';
import { installationClockMs } from '../store/settings.ts';
import { actorOf } from './auth/session.ts';
import type { AppContext } from './context.ts';

/** The GET routes whose answers are kept (route patterns as registered). */
export const KEPT_ROUTES: ReadonlySet<string> = new Set([
  '/',
  '/areas',
  '/areas/trend',
  '/areas/:id/audit',
  '/areas/:id/audit/report',
  '/areas/:id/audit/tables/:table',
  '/line',
  '/line/tables/:table',
  '/whatif/waiting',
  '/whatif/waiting/export',
  '/imports',
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
  /** A download's `content-disposition` (its file name), the only other header kept; null for a page. */
  disposition: string | null;
  body: string;
  /** The body gzipped once, in pieces around its tokens (see `gzipAround`); null when small. */
  gzip: GzipPieces | null;
}

/**
 * A body compressed once though it holds a per-browser token: the text between the tokens is
 * compressed as raw DEFLATE segments, each ended with a sync flush (RFC 1951: an empty stored block
 * leaves the stream byte-aligned and not final), so that a stream is put together per request from
 * the kept segments and the browser's token as a stored block between them, closed by an empty
 * final block, inside the gzip header and trailer (RFC 1952: CRC-32 and length of the whole text).
 */
interface GzipPieces {
  /** Compressed text segments; a token goes between each two. */
  segments: Buffer[];
  /** The UTF-8 bytes of the text segments, for the CRC-32 of the whole (with the token's). */
  plain: Buffer[];
  /** A body without a token: its whole gzip stream, made once. */
  whole: Uint8Array<ArrayBuffer> | null;
}

const GZIP_HEADER = Buffer.from([0x1f, 0x8b, 8, 0, 0, 0, 0, 0, 0, 0xff]);
/** An empty final block with fixed Huffman codes (BFINAL=1, BTYPE=01, end-of-block): 0x03 0x00. */
const FINAL_BLOCK = Buffer.from([0x03, 0x00]);

function gzipAround(body: string): GzipPieces {
  const plain = body.split(TOKEN_PLACEHOLDER).map((t) => Buffer.from(t, 'utf8'));
  const segments = plain.map((p) => deflateRawSync(p, { level: 6, finishFlush: zlibConstants.Z_SYNC_FLUSH }));
  const g: GzipPieces = { segments, plain, whole: null };
  if (segments.length === 1) g.whole = gzipWith(g, '');
  return g;
}

/** The gzip stream of the kept text with `token` in each placeholder. */
function gzipWith(g: GzipPieces, token: string): Uint8Array<ArrayBuffer> {
  if (g.whole) return g.whole;
  const t = Buffer.from(token, 'utf8');
  // a non-final stored block (BFINAL=0, BTYPE=00) holding the token's bytes (at most 65,535)
  const stored = Buffer.alloc(5 + t.length);
  stored[0] = 0;
  stored.writeUInt16LE(t.length, 1);
  stored.writeUInt16LE(~t.length & 0xffff, 3);
  t.copy(stored, 5);
  const parts: Buffer[] = [GZIP_HEADER];
  let crc = 0;
  let size = 0;
  g.segments.forEach((seg, i) => {
    if (i > 0) {
      parts.push(stored);
      crc = crc32(t, crc);
      size += t.length;
    }
    parts.push(seg);
    crc = crc32(g.plain[i]!, crc);
    size += g.plain[i]!.length;
  });
  const trailer = Buffer.alloc(8);
  trailer.writeUInt32LE(crc >>> 0, 0);
  trailer.writeUInt32LE(size >>> 0, 4);
  parts.push(FINAL_BLOCK, trailer);
  const out = Buffer.concat(parts);
  return new Uint8Array(out.buffer.slice(out.byteOffset, out.byteOffset + out.byteLength) as ArrayBuffer);
}

/** Bodies below this many characters are sent as they are (compressing them saves little). */
const GZIP_MIN_CHARS = 2048;

/**
 * Parts of a route's key besides the data, the asker, the clock, the URL and the htmx headers: what
 * else its answer shows that changes without a write (the Imports page lists the uploads running
 * in this process). Registered by the route module, per app.
 */
const keyParts = new WeakMap<AppContext, Map<string, (c: Context) => string>>();

/** Adds `part(c)` to the key of `route`'s kept answers (see `keyParts`). */
export function keptKeyPart(ctx: AppContext, route: string, part: (c: Context) => string): void {
  if (!KEPT_ROUTES.has(route)) throw new Error(`${route} is not a kept route`);
  let m = keyParts.get(ctx);
  if (!m) {
    m = new Map();
    keyParts.set(ctx, m);
  }
  m.set(route, part);
}

/** Kept answers' types: pages, JSON, and the tables' CSV downloads. */
const KEPT_TYPES = /^(text\/html|application\/json|text\/csv)/;
/** UTF-8 with a leading byte-order mark kept (Response.text() drops it; a spreadsheet CSV has one). */
const UTF8 = new TextDecoder('utf-8', { ignoreBOM: true });

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
    // Only the kept routes enter the store (routing is done before the middleware runs), so that
    // other pages — a what-if with its levers in the query, say — take no room in it.
    const route = matchedRoutes(c).find((r) => r.method === 'GET' && KEPT_ROUTES.has(r.path))?.path;
    if (route === undefined) return next();
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
      // a history restore asks a swap's route for the whole page (routes/whatif-context.ts wantsFragment)
      c.req.header('hx-history-restore-request') ?? '',
      keyParts.get(ctx)?.get(route)?.(c) ?? '',
    ].join('|');
    let rendered = false;
    const kept = await keptResultAsync<Kept | null>(ctx.db, key, async () => {
      rendered = true;
      await next();
      if (c.res.status !== 200) return null;
      const contentType = c.res.headers.get('content-type') ?? '';
      if (!KEPT_TYPES.test(contentType)) return null;
      const disposition = c.res.headers.get('content-disposition');
      const body = UTF8.decode(await c.res.arrayBuffer());
      const token = c.get('csrfToken');
      c.res = new Response(body, c.res);
      const keptBody =
        typeof token === 'string' && token !== '' ? body.replaceAll(token, TOKEN_PLACEHOLDER) : body;
      const gzip = keptBody.length >= GZIP_MIN_CHARS ? gzipAround(keptBody) : null;
      return { status: 200, contentType, disposition, body: keptBody, gzip };
    });
    if (rendered) return;
    if (kept === null) return next();
    c.header('content-type', kept.contentType);
    if (kept.disposition !== null) c.header('content-disposition', kept.disposition);
    c.header('vary', 'Accept-Encoding');
    const token = c.get('csrfToken');
    const own = typeof token === 'string' && token.length < 65_536 ? token : '';
    if (kept.gzip && /\bgzip\b/i.test(c.req.header('accept-encoding') ?? '')) {
      c.header('content-encoding', 'gzip');
      return c.body(gzipWith(kept.gzip, own), 200);
    }
    return c.body(kept.body.replaceAll(TOKEN_PLACEHOLDER, own), 200);
  };
}
