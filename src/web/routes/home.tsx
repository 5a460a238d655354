import type { Hono } from 'hono';
import { type HomeLot, HomePage } from '../../../views/pages/home.tsx';
import type { Db } from '../../store/db.ts';
import { listLots } from '../../store/lots.ts';
import { listPairs } from '../../store/pairs.ts';
import { getSetting } from '../../store/settings.ts';
import { importsByKind, rowCount } from '../../store/views-home.ts';
import type { AppContext } from '../context.ts';
import { renderPage } from '../render.ts';

function lotsWithPairs(db: Db): HomeLot[] {
  const pairs = listPairs(db);
  return listLots(db).map((l) => {
    const mine = pairs.filter((p) => p.lotId === l.lotId);
    const planned = mine.map((p) => p.plannedBondMs).filter((t): t is number => t !== null);
    return {
      lotId: l.lotId,
      productId: l.productId,
      wafers: l.waferCount,
      pairs: mine.length,
      nextBond: planned.length
        ? new Date(Math.min(...planned)).toISOString().replace('T', ' ').slice(0, 16)
        : null,
    };
  });
}

export function register(app: Hono, ctx: AppContext): void {
  app.get('/', (c) => {
    const counts = {
      lots: rowCount(ctx.db, 'lots'),
      pairs: rowCount(ctx.db, 'pairs'),
      locations: rowCount(ctx.db, 'locations'),
      counterSamples: rowCount(ctx.db, 'counter_samples'),
      scans: rowCount(ctx.db, 'scans'),
      imports: rowCount(ctx.db, 'imports'),
    };
    const byKind = importsByKind(ctx.db);
    const asOf = getSetting(ctx.db, 'clock.as_of');
    return renderPage(c, ctx, {
      title: 'Overview',
      active: '/',
      body: HomePage({
        counts,
        dataDir: ctx.dataDir,
        lots: lotsWithPairs(ctx.db),
        byKind,
        asOf: asOf ?? null,
      }),
    });
  });
}
