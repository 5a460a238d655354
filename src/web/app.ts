/**
 * The web application: one Hono app, routes in src/web/routes/, pages in views/.
 * Reads like a table of contents: middleware, static assets, then one module per area.
 */
import { readFileSync } from 'node:fs';
import { createRequire } from 'node:module';
import { Hono } from 'hono';
import { logger } from 'hono/logger';
import { MessagePage } from '../../views/pages/message.tsx';
import { ModelInputError, plainModelError } from '../model/errors.ts';
import { authorize, identify } from './auth/session.ts';
import type { AppContext } from './context.ts';
import { csrfProtection, csrfSecret } from './csrf.ts';
import { hostAllowList, securityHeaders } from './hardening.ts';
import { keptPages } from './page-cache.ts';
import { BadParamError } from './params.ts';
import { isFragmentRequest, renderPage } from './render.ts';
import * as accounts from './routes/accounts.tsx';
import * as api from './routes/api.ts';
import * as areas from './routes/areas.tsx';
import * as auditArea from './routes/audit-area.tsx';
import * as calculators from './routes/calculators.tsx';
import * as calibration from './routes/calibration.tsx';
import * as feed from './routes/feed.ts';
import * as health from './routes/health.ts';
import * as home from './routes/home.tsx';
import * as imports from './routes/imports.tsx';
import * as line from './routes/line.tsx';
import * as lots from './routes/lots.tsx';
import * as pairs from './routes/pairs.tsx';
import * as parameters from './routes/parameters.tsx';
import * as search from './routes/search.tsx';
import * as tools from './routes/tools.tsx';
import * as whatif from './routes/whatif.ts';
import * as whatifSaved from './routes/whatif-saved.ts';

const require = createRequire(import.meta.url);
const HTMX_JS = readFileSync(require.resolve('htmx.org/dist/htmx.min.js'));
const SCRIPT = readFileSync(new URL('../../public/voidcast.js', import.meta.url));
const CSS = readFileSync(new URL('../../public/voidcast.css', import.meta.url));
const PRINT_CSS = readFileSync(new URL('../../public/print.css', import.meta.url));
const FAVICON = readFileSync(new URL('../../public/favicon.svg', import.meta.url));

export type RouteModule = { register: (app: Hono, ctx: AppContext) => void };

/** Route modules, one per area of the product. Later areas add themselves here. */
const ROUTES: RouteModule[] = [
  home,
  health,
  calculators,
  imports,
  areas,
  auditArea,
  tools,
  api,
  lots,
  pairs,
  calibration,
  parameters,
  accounts,
  feed,
  whatifSaved,
  whatif,
  line,
  search,
];

export function createApp(ctx: AppContext, extraRoutes: RouteModule[] = []): Hono {
  const app = new Hono();
  // Before anything else: a foreign Host name (DNS rebinding) is refused; then the security headers.
  app.use('*', hostAllowList(ctx.allowedHosts ?? [], ctx.log));
  app.use('*', securityHeaders());
  app.use(
    '*',
    logger((line: string) => ctx.log(line)),
  );
  // Who is asking (a session, an API token, or open mode: src/web/auth/session.ts).
  app.use('*', identify(ctx));
  // Every POST/PUT/PATCH/DELETE needs a same-origin browser and the form token (src/web/csrf.ts).
  app.use(
    '*',
    csrfProtection({ secret: csrfSecret(ctx.db), streamingPaths: ['/imports'], version: ctx.version }),
  );
  // What the asker's role allows (src/web/auth/permissions.ts).
  app.use('*', authorize(ctx));
  // The assessment pages and API answers, kept until the data change (src/web/page-cache.ts).
  if (ctx.keepPages !== false) app.use('*', keptPages(ctx));

  const asset = (body: Buffer, type: string) => () =>
    new Response(new Uint8Array(body), {
      headers: { 'content-type': type, 'cache-control': 'public, max-age=3600' },
    });
  app.get('/assets/htmx.min.js', asset(HTMX_JS, 'text/javascript; charset=utf-8'));
  app.get('/assets/voidcast.js', asset(SCRIPT, 'text/javascript; charset=utf-8'));
  app.get('/assets/voidcast.css', asset(CSS, 'text/css; charset=utf-8'));
  app.get('/assets/print.css', asset(PRINT_CSS, 'text/css; charset=utf-8'));
  app.get('/assets/favicon.svg', asset(FAVICON, 'image/svg+xml'));

  for (const r of [...ROUTES, ...extraRoutes]) r.register(app, ctx);

  app.notFound((c) =>
    renderPage(
      c,
      ctx,
      {
        title: 'Not found',
        active: '',
        body: MessagePage({
          code: '404',
          heading: 'Nothing here',
          detail: `There is no page at ${c.req.path}.`,
        }),
      },
      404,
    ),
  );
  app.onError((err, c) => {
    // A bad request parameter (src/web/params.ts): 400 with the reason, in the form the caller reads.
    if (err instanceof BadParamError) {
      const status = err.status;
      if (c.req.path.startsWith('/api/'))
        return c.json({ error: status === 404 ? 'not found' : 'bad request', detail: err.message }, status);
      const body = MessagePage({
        code: String(status),
        heading: status === 404 ? 'Nothing here' : 'A value in this request cannot be used',
        detail: err.message,
      });
      if (isFragmentRequest(c)) return c.html(String(body), status);
      return renderPage(
        c,
        ctx,
        { title: status === 404 ? 'Not found' : 'Bad request', active: '', body },
        status,
      );
    }
    // A model's range error reached the page: the data cannot be assessed; say why in plain words.
    if (err instanceof ModelInputError) {
      ctx.log(`WARN ${c.req.method} ${c.req.path}: ${err.message}`);
      const detail = `A computed quantity is outside its model's range (${plainModelError(err)}). Check the data and the assessment time.`;
      if (c.req.path.startsWith('/api/')) return c.json({ error: 'cannot be assessed', detail }, 422);
      const body = MessagePage({ code: '422', heading: 'These data cannot be assessed', detail });
      if (isFragmentRequest(c)) return c.html(String(body), 422);
      return renderPage(c, ctx, { title: 'Cannot be assessed', active: '', body }, 422);
    }
    // The stack goes to the log for the operator, never to the browser.
    ctx.log(
      `ERROR ${c.req.method} ${c.req.path}: ${err instanceof Error ? (err.stack ?? err.message) : String(err)}`,
    );
    if (c.req.path.startsWith('/api/') || c.req.path === '/healthz')
      return c.json({ error: 'internal error', detail: 'The server could not complete this request.' }, 500);
    return renderPage(
      c,
      ctx,
      {
        title: 'Server error',
        active: '',
        body: MessagePage({
          code: '500',
          heading: 'Something went wrong on our side',
          detail: 'The request could not be completed. The details are in the server log.',
        }),
      },
      500,
    );
  });
  return app;
}
