/**
 * Search by id (/search?q=): wafers, pairs, lots, tools and locations whose id (or, for a location
 * or tool, name) contains the words, case ignored, from the search box in every page's masthead.
 * Exact ids first, then ids that start with the words, then the rest. One hit that is exactly the id
 * of something with a page of its own goes straight to that page. Reads the store's own list
 * helpers; nothing is written.
 */
import type { Hono } from 'hono';
import { SearchPage } from '../../../views/pages/search.tsx';
import type { SearchHit } from '../../engine/audit/types.ts';
import type { Db } from '../../store/db.ts';
import { listLocations } from '../../store/locations.ts';
import { listLots, listWafers } from '../../store/lots.ts';
import { listPairs, pairOfWafer } from '../../store/pairs.ts';
import { listTools, toolKey } from '../../store/tools.ts';
import type { AppContext } from '../context.ts';
import { BadParamError } from '../params.ts';
import { renderPage } from '../render.ts';

export const SEARCH_LIMIT = 50;
const MAX_QUERY = 120;

/** Ranks a candidate: 0 exact id, 1 id starts with q, 2 id or words contain q, null no match. */
function rank(q: string, id: string, words = ''): number | null {
  const i = id.toLowerCase();
  if (i === q) return 0;
  if (i.startsWith(q)) return 1;
  if (i.includes(q) || words.toLowerCase().includes(q)) return 2;
  return null;
}

/** Everything on the line whose id contains `text`, best first, at most `limit`. */
export function searchLine(db: Db, text: string, limit: number): SearchHit[] {
  const q = text.trim().toLowerCase();
  if (q === '') return [];
  const found: { hit: SearchHit; r: number }[] = [];
  const add = (hit: SearchHit, r: number | null) => {
    if (r !== null) found.push({ hit, r });
  };
  for (const l of listLocations(db))
    add({ kind: 'location', id: l.locationId, label: l.name }, rank(q, l.locationId, l.name));
  const tools = new Set<string>();
  for (const t of listTools(db)) {
    const key = toolKey(t.toolId, t.chamber);
    if (tools.has(key)) continue;
    tools.add(key);
    add({ kind: 'tool', id: key, label: '' }, rank(q, key));
  }
  for (const lot of listLots(db)) {
    add({ kind: 'lot', id: lot.lotId, label: `${lot.waferCount} wafers` }, rank(q, lot.lotId));
    for (const w of listWafers(db, lot.lotId))
      add({ kind: 'wafer', id: w.waferId, label: `lot ${lot.lotId}` }, rank(q, w.waferId));
  }
  for (const p of listPairs(db))
    add(
      { kind: 'pair', id: p.pairId, label: `lot ${p.lotId}, ${p.topWaferId} on ${p.bottomWaferId}` },
      rank(q, p.pairId),
    );
  found.sort((a, b) => a.r - b.r || a.hit.id.localeCompare(b.hit.id));
  return found.slice(0, limit).map((f) => f.hit);
}

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
      const lot = /^lot (.+)$/.exec(h.label)?.[1];
      return lot ? `/lots/${encodeURIComponent(lot)}` : '/lots';
    }
  }
}

export function register(app: Hono, ctx: AppContext): void {
  app.get('/search', (c) => {
    const q = (c.req.query('q') ?? '').trim();
    if (q.length > MAX_QUERY) throw new BadParamError('q', `must be at most ${MAX_QUERY} characters`);
    const hits = searchLine(ctx.db, q, SEARCH_LIMIT);
    if (hits.length === 1 && hits[0]!.id.toLowerCase() === q.toLowerCase())
      return c.redirect(hrefOf(ctx.db, hits[0]!), 303);
    return renderPage(c, ctx, {
      title: q ? `Find ${q}` : 'Find',
      active: '/search',
      body: SearchPage({ q, hits, limit: SEARCH_LIMIT, hrefOf: (h) => hrefOf(ctx.db, h) }),
    });
  });
}
