/**
 * Lots: the queue (/lots), one lot (/lots/:id) and its Pareto swap (/lots/:id/pareto).
 * Thin: load through the engine's loader, assess (pure engine), render.
 */
import type { Context, Hono } from 'hono';
import { LotPage } from '../../../views/pages/lot.tsx';
import { type LotRow, LotsPage } from '../../../views/pages/lots.tsx';
import { MessagePage } from '../../../views/pages/message.tsx';
import { ParetoPanel, parseParetoBy } from '../../../views/partials/pareto-panel.tsx';
import { loadLot } from '../../engine/loader.ts';
import { assessLotInSession } from '../../engine/lot.ts';
import { createSession, EngineInputError } from '../../engine/pair.ts';
import type { LotAssessment } from '../../engine/types.ts';
import { latestDisposition } from '../../store/dispositions.ts';
import { listLots } from '../../store/lots.ts';
import { parameterSetsStamp } from '../../store/parameter-sets.ts';
import { getSetting } from '../../store/settings.ts';
import type { AppContext } from '../context.ts';
import { isFragmentRequest, renderFragment, renderPage } from '../render.ts';

/**
 * The setting that freezes the line's clock (ISO 8601 with zone, or ms since the epoch): the demo
 * line is a recorded fortnight, assessed at its own "now". Unset: the pages assess at the real now.
 */
export const AS_OF_SETTING = 'clock.as_of';

function parseInstant(v: string | undefined | null): number | null {
  if (!v) return null;
  const n = /^\d+$/.test(v.trim()) ? Number(v.trim()) : Date.parse(v);
  return Number.isFinite(n) ? n : null;
}

/**
 * The assessment time of a request: `?asOf=` (ISO 8601 with zone, or ms since the epoch), else
 * the installation's frozen clock (AS_OF_SETTING), else now floored to the minute, so that a page
 * and its swaps within a minute show the same figures.
 */
export function asOfFrom(c: Context, ctx: AppContext): number {
  return (
    parseInstant(c.req.query('asOf')) ??
    parseInstant(getSetting(ctx.db, AS_OF_SETTING)) ??
    Math.floor(Date.now() / 60_000) * 60_000
  );
}

/**
 * A small memo of assessments for the pages: the engine is deterministic (seeded), so the same
 * subject at the same time on the same data gives the same figures. The data's version is the
 * imports table (every stored change of data comes through an import) and the parameter sets'
 * stamp (a set adopted or reverted changes every assessment). Bounded; oldest entries go first.
 */
const MEMO_MAX = 64;
const memos = new WeakMap<object, Map<string, unknown>>();

function dataVersion(ctx: AppContext): string {
  try {
    const r = ctx.db.prepare('SELECT COUNT(*) AS n, MAX(id) AS m FROM imports').get() as {
      n: number;
      m: number | null;
    };
    return `${r.n}:${r.m ?? 0}:${parameterSetsStamp(ctx.db)}`;
  } catch {
    return '0:0';
  }
}

export function memoised<T>(ctx: AppContext, key: string, compute: () => T): T {
  let memo = memos.get(ctx.db);
  if (!memo) {
    memo = new Map();
    memos.set(ctx.db, memo);
  }
  const k = `${dataVersion(ctx)}|${key}`;
  if (memo.has(k)) return memo.get(k) as T;
  const v = compute();
  memo.set(k, v);
  while (memo.size > MEMO_MAX) memo.delete(memo.keys().next().value as string);
  return v;
}

type LotForPage =
  | { lot: LotAssessment; bonded: boolean; bondedAtMs: number | null }
  | { problem: string }
  | null;

/** Lot assessment, or the reason there is none (unknown lot: null). */
export function assessLotForPage(
  ctx: AppContext,
  lotId: string,
  asOfMs: number,
  detail: 'summary' | 'full' = 'summary',
): LotForPage {
  return memoised(ctx, `lot|${lotId}|${asOfMs}|${detail}`, () =>
    assessLotUncached(ctx, lotId, asOfMs, detail),
  );
}

function assessLotUncached(
  ctx: AppContext,
  lotId: string,
  asOfMs: number,
  detail: 'summary' | 'full',
): LotForPage {
  const loaded = loadLot(ctx.db, lotId, asOfMs);
  if (!loaded) return null;
  if (loaded.lot.pairs.length === 0) return { problem: 'no pairs yet (import a pairs file)' };
  try {
    const lot = assessLotInSession(loaded.lot, createSession(loaded.line), { asOfMs, detail });
    const times = loaded.lot.pairs.map((p) => p.bondTimeMs);
    const bonded = times.every((t) => t !== null);
    return { lot, bonded, bondedAtMs: bonded ? Math.max(...(times as number[])) : null };
  } catch (e) {
    if (e instanceof EngineInputError) return { problem: e.message };
    throw e;
  }
}

export function register(app: Hono, ctx: AppContext): void {
  app.get('/lots', (c) => {
    const asOfMs = asOfFrom(c, ctx);
    const waiting: LotRow[] = [];
    const bonded: LotRow[] = [];
    for (const l of listLots(ctx.db)) {
      const r = assessLotForPage(ctx, l.lotId, asOfMs);
      if (!r) continue;
      if ('problem' in r) {
        waiting.push({
          lotId: l.lotId,
          productId: l.productId ?? '—',
          pairs: 0,
          call: null,
          counts: null,
          expectedVoids: null,
          dieKillsNB: null,
          dies: 0,
          dominant: null,
          bondedAtMs: null,
          signedPairs: 0,
          problem: r.problem,
        });
        continue;
      }
      const a = r.lot;
      const signedPairs = a.pairs.filter(
        (p) => latestDisposition(ctx.db, 'pair', p.pairId)?.inputsHash === p.inputsHash,
      ).length;
      const row: LotRow = {
        lotId: a.lotId,
        productId: a.productId,
        pairs: a.pairs.length,
        call: a.call,
        counts: a.counts,
        expectedVoids: a.totals.voids,
        dieKillsNB: a.totals.dieKillsNB,
        dies: a.totals.dies,
        dominant: a.dominant ? { label: a.dominant.label, share: a.dominant.share } : null,
        bondedAtMs: r.bondedAtMs,
        signedPairs,
        problem: null,
      };
      (r.bonded ? bonded : waiting).push(row);
    }
    // Worst calls first in the queue: hold, re-clean, then bond; unassessed lots last.
    const rank = (x: LotRow) =>
      x.call === 'hold' ? 0 : x.call === 're-clean' ? 1 : x.call === 'bond' ? 2 : 3;
    waiting.sort((x, y) => rank(x) - rank(y) || x.lotId.localeCompare(y.lotId));
    bonded.sort((x, y) => (y.bondedAtMs ?? 0) - (x.bondedAtMs ?? 0));
    return renderPage(c, ctx, {
      title: 'Lots',
      active: '/lots',
      body: LotsPage({ waiting, bonded, asOfMs }),
    });
  });

  app.get('/lots/:id', (c) => {
    const id = c.req.param('id');
    const r = assessLotForPage(ctx, id, asOfFrom(c, ctx));
    if (!r) return notFound(c, ctx, `There is no lot ${id}.`);
    if ('problem' in r)
      return renderPage(c, ctx, {
        title: `Lot ${id}`,
        active: '/lots',
        body: MessagePage({ heading: `Lot ${id} cannot be assessed`, detail: r.problem }),
      });
    return renderPage(c, ctx, {
      title: `Lot ${id}`,
      active: '/lots',
      body: LotPage({ lot: r.lot, paretoBy: parseParetoBy(c.req.query('pareto')) }),
    });
  });

  app.get('/lots/:id/pareto', (c) => {
    const id = c.req.param('id');
    const by = parseParetoBy(c.req.query('by'));
    if (!isFragmentRequest(c))
      return c.redirect(`/lots/${encodeURIComponent(id)}?pareto=${by}#pareto-panel`, 303);
    const r = assessLotForPage(ctx, id, asOfFrom(c, ctx));
    if (!r || 'problem' in r) return c.html('<p class="vc-error">This lot cannot be assessed.</p>', 404);
    return renderFragment(
      c,
      ParetoPanel({
        pareto: r.lot.pareto,
        by,
        base: `/lots/${encodeURIComponent(id)}`,
        subject: `Lot ${id}`,
        asOfMs: r.lot.asOfMs,
      }),
    );
  });
}

export function notFound(c: Context, ctx: AppContext, detail: string): Response {
  return renderPage(
    c,
    ctx,
    { title: 'Not found', active: '', body: MessagePage({ code: '404', heading: 'Nothing here', detail }) },
    404,
  );
}
