/**
 * Lots: the queue (/lots), one lot (/lots/:id) and its Pareto swap (/lots/:id/pareto).
 * Thin: load through the engine's loader, assess (pure engine), render.
 */
import type { Context, Hono } from 'hono';
import { LotPage } from '../../../views/pages/lot.tsx';
import { type LotRow, LotsPage } from '../../../views/pages/lots.tsx';
import { MessagePage } from '../../../views/pages/message.tsx';
import { ParetoPanel } from '../../../views/partials/pareto-panel.tsx';
import { keptResult } from '../../engine/cache.ts';
import { type LotView, NO_PAIRS } from '../../engine/lot-view.ts';
import { onViewThread } from '../../engine/view-thread.ts';
import { latestDisposition } from '../../store/dispositions.ts';
import { listLots } from '../../store/lots.ts';
import { CLOCK_SETTING, pageClockMs } from '../../store/settings.ts';
import type { AppContext } from '../context.ts';
import { queryAsOf, queryParetoBy } from '../params.ts';
import { isFragmentRequest, renderFragment, renderPage } from '../render.ts';

/**
 * The setting that freezes the line's clock (ISO 8601 with zone, or ms since the epoch): the demo
 * line is a recorded fortnight, assessed at its own "now". Unset: the pages assess at the real now.
 */
export const AS_OF_SETTING = CLOCK_SETTING;

/**
 * The assessment time of a request: `?asOf=` (ISO 8601 with zone, or ms since the epoch, 1970 up to
 * 2100; anything else is a 400 naming asOf — src/web/params.ts), else the installation's frozen
 * clock, else now floored to the minute (src/store/settings.ts pageClockMs).
 */
export function asOfFrom(c: Context, ctx: AppContext): number {
  return queryAsOf(c) ?? pageClockMs(ctx.db);
}

/**
 * Assessments for the pages, kept until the data change (src/engine/cache.ts): the engine is
 * deterministic (seeded), so the same subject at the same time on the same data gives the same
 * figures; any committed write (an import, a parameter set adopted or reverted, a sign-off) starts
 * a new data generation and the next request computes afresh.
 */
export function memoised<T>(ctx: AppContext, key: string, compute: () => T): T {
  return keptResult(ctx.db, `page|${key}`, compute);
}

/**
 * Lot assessment for the pages, or the reason there is none (unknown lot: null), computed on the
 * pages' thread (src/engine/view-thread.ts) and kept until the data change.
 */
export function assessLotForPage(
  ctx: AppContext,
  lotId: string,
  asOfMs: number,
  detail: 'summary' | 'full' = 'summary',
): Promise<LotView> {
  return onViewThread(ctx.db, 'lot', { lotId, asOfMs, detail });
}

export function register(app: Hono, ctx: AppContext): void {
  app.get('/lots', async (c) => {
    const asOfMs = asOfFrom(c, ctx);
    const waiting: LotRow[] = [];
    const bonded: LotRow[] = [];
    const unpaired: LotRow[] = [];
    const lots = listLots(ctx.db);
    const views = await Promise.all(lots.map((l) => assessLotForPage(ctx, l.lotId, asOfMs)));
    for (const [i, l] of lots.entries()) {
      const r = views[i]!;
      if (!r) continue;
      if ('problem' in r) {
        // A lot without pairs has nothing to bond: not in the queue (e.g. the monitor lot).
        (r.problem === NO_PAIRS ? unpaired : waiting).push({
          lotId: l.lotId,
          productId: l.productId ?? '—',
          pairs: 0,
          wafers: l.waferCount,
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
        wafers: l.waferCount,
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
      body: LotsPage({ waiting, bonded, unpaired, asOfMs }),
    });
  });

  app.get('/lots/:id', async (c) => {
    const id = c.req.param('id');
    const r = await assessLotForPage(ctx, id, asOfFrom(c, ctx));
    if (!r) return notFound(c, ctx, `There is no lot ${id}.`);
    if ('problem' in r)
      return renderPage(c, ctx, {
        title: `Lot ${id}`,
        active: '/lots',
        body: MessagePage({
          heading:
            r.problem === NO_PAIRS ? `Lot ${id} is not waiting to bond` : `Lot ${id} cannot be assessed`,
          detail: r.problem,
        }),
      });
    return renderPage(c, ctx, {
      title: `Lot ${id}`,
      active: '/lots',
      body: LotPage({ lot: r.lot, paretoBy: queryParetoBy(c, 'pareto') }),
    });
  });

  app.get('/lots/:id/pareto', async (c) => {
    const id = c.req.param('id');
    const by = queryParetoBy(c, 'by');
    if (!isFragmentRequest(c))
      return c.redirect(`/lots/${encodeURIComponent(id)}?pareto=${by}#pareto-panel`, 303);
    const r = await assessLotForPage(ctx, id, asOfFrom(c, ctx));
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
