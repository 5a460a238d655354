import type { Hono } from 'hono';
import { type HomeImportKind, type HomeLot, HomePage } from '../../../views/pages/home.tsx';
import type { Db } from '../../store/db.ts';
import { listLots } from '../../store/lots.ts';
import { listPairs } from '../../store/pairs.ts';
import { getSetting } from '../../store/settings.ts';
import type { AppContext } from '../context.ts';
import { renderPage } from '../render.ts';

/** Row count of a table, 0 while the table does not exist yet (an earlier schema). */
function countRows(db: Db, table: string): number {
  const exists = db.prepare("SELECT 1 FROM sqlite_master WHERE type = 'table' AND name = ?").get(table);
  if (!exists) return 0;
  return (db.prepare(`SELECT COUNT(*) AS n FROM "${table.replaceAll('"', '""')}"`).get() as { n: number }).n;
}

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

/** Files, rows and data-quality flags per import kind. */
function importsByKind(db: Db): HomeImportKind[] {
  const exists = db
    .prepare("SELECT 1 FROM sqlite_master WHERE type = 'table' AND name = 'import_flags'")
    .get();
  if (!exists) return [];
  return db
    .prepare(
      `SELECT i.kind AS kind, COUNT(*) AS files, SUM(i.rows_stored) AS rows, SUM(i.duplicates) AS duplicates,
              COALESCE(SUM((SELECT SUM(f.count) FROM import_flags f WHERE f.import_id = i.id)), 0) AS flags,
              MAX(i.imported_at) AS lastAt
         FROM imports i GROUP BY i.kind ORDER BY MIN(i.id)`,
    )
    .all() as HomeImportKind[];
}

export function register(app: Hono, ctx: AppContext): void {
  app.get('/', (c) => {
    const counts = {
      lots: countRows(ctx.db, 'lots'),
      pairs: countRows(ctx.db, 'pairs'),
      locations: countRows(ctx.db, 'locations'),
      counterSamples: countRows(ctx.db, 'counter_samples'),
      scans: countRows(ctx.db, 'scans'),
      imports: countRows(ctx.db, 'imports'),
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
