import type { Hono } from 'hono';
import { HomePage } from '../../../views/pages/home.tsx';
import type { Db } from '../../store/db.ts';
import type { AppContext } from '../context.ts';
import { renderPage } from '../render.ts';

/** Row count of a table, 0 while the table does not exist yet (an earlier schema). */
function countRows(db: Db, table: string): number {
  const exists = db.prepare("SELECT 1 FROM sqlite_master WHERE type = 'table' AND name = ?").get(table);
  if (!exists) return 0;
  return (db.prepare(`SELECT COUNT(*) AS n FROM "${table.replaceAll('"', '""')}"`).get() as { n: number }).n;
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
    return renderPage(c, ctx, {
      title: 'Overview',
      active: '/',
      body: HomePage({ counts, dataDir: ctx.dataDir }),
    });
  });
}
