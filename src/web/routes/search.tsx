/**
 * Search by id (/search?q=): wafers, pairs, lots, tools and locations whose id starts with the words
 * (or whose name holds them), from the search box in every page's masthead (the engine's search,
 * src/engine/audit/line-view.ts). One hit that is exactly the id typed goes straight to its page.
 */
import type { Hono } from 'hono';
import { SearchPage } from '../../../views/pages/search.tsx';
import { searchLine } from '../../engine/audit/index.ts';
import type { SearchHit } from '../../engine/audit/types.ts';
import type { Db } from '../../store/db.ts';
import { pairOfWafer } from '../../store/pairs.ts';
import type { AppContext } from '../context.ts';
import { BadParamError } from '../params.ts';
import { renderPage } from '../render.ts';

export const SEARCH_LIMIT = 50;
const MAX_QUERY = 120;

/** Where a hit leads: its page; a wafer to its pair (else its lot), a tool to the Tools page. */
function hrefOf(db: Db, h: SearchHit): string {
  const id = encodeURIComponent(h.id);
  switch (h.kind) {
    case 'pair':
      return `/pairs/${id}`;
    case 'lot':
      return `/lots/${id}`;
    case 'tool':
      return '/tools';
    case 'location':
      return `/areas/${id}/audit`;
    default: {
      const pair = pairOfWafer(db, h.id);
      if (pair) return `/pairs/${encodeURIComponent(pair.pairId)}`;
      const lot = /\blot (\S+)$/.exec(h.label)?.[1];
      return lot ? `/lots/${encodeURIComponent(lot)}` : '/lots';
    }
  }
}

export function register(app: Hono, ctx: AppContext): void {
  app.get('/search', (c) => {
    const q = (c.req.query('q') ?? '').trim();
    if (q.length > MAX_QUERY) throw new BadParamError('q', `must be at most ${MAX_QUERY} characters`);
    const hits = q === '' ? [] : searchLine(ctx.db, q, SEARCH_LIMIT);
    if (hits.length === 1 && hits[0]!.id.toLowerCase() === q.toLowerCase())
      return c.redirect(hrefOf(ctx.db, hits[0]!), 303);
    return renderPage(c, ctx, {
      title: q ? `Find ${q}` : 'Find',
      active: '/search',
      body: SearchPage({ q, hits, limit: SEARCH_LIMIT, hrefOf: (h) => hrefOf(ctx.db, h) }),
    });
  });
}
