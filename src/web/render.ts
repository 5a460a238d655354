/**
 * Rendering helpers: a full page goes through the layout with a doctype (hono/jsx sends none);
 * an htmx request for a fragment gets the fragment alone.
 */
import type { Context } from 'hono';
import type { Child } from 'hono/jsx';
import { Layout } from '../../views/layout.tsx';
import { accountOf } from './auth/session.ts';
import type { AppContext } from './context.ts';

export const DOCTYPE = '<!doctype html>';

export function renderPage(
  c: Context,
  ctx: AppContext,
  page: { title: string; active?: string; body: Child },
  status: 200 | 400 | 404 | 409 | 413 | 422 | 500 = 200,
): Response {
  const html =
    DOCTYPE +
    String(
      Layout({
        title: page.title,
        active: page.active ?? c.req.path,
        version: ctx.version,
        children: page.body,
        ...shell(c, ctx),
      }),
    );
  return c.html(html, status);
}

/** What the page frame shows of the session: the account, or the open-mode banner. */
function shell(c: Context, ctx: AppContext) {
  const a = accountOf(c);
  const token = c.get('csrfToken');
  return {
    openMode: ctx.auth?.mode !== 'accounts',
    account: a ? { username: a.user.username, displayName: a.user.displayName, role: a.role } : null,
    csrfToken: typeof token === 'string' ? token : undefined,
  };
}

/** True when htmx asked for a fragment (not a boosted full-page navigation). */
export function isFragmentRequest(c: Context): boolean {
  return c.req.header('HX-Request') === 'true' && c.req.header('HX-Boosted') !== 'true';
}

/** A fragment, no layout. */
export function renderFragment(c: Context, body: Child, status: 200 | 400 | 422 = 200): Response {
  return c.html(String(body), status);
}
