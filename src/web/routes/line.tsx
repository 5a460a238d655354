/**
 * The line view over a period (/line?from&to; by default the 30 days up to the installation's
 * assessment clock, else now): a Pareto of expected voids across every lot assessed in the period
 * (tool, wait location, clean, size band) and each tool chamber's history, with every table as a download
 * (/line/tables/:table?format=). Thin: parameters, the engine's line view, tables, render.
 */
import type { Context, Hono } from 'hono';
import { LinePage, lineTables } from '../../../views/pages/line.tsx';
import { installationClockMs } from '../../store/settings.ts';
import type { AppContext } from '../context.ts';
import { renderPage } from '../render.ts';
import { fileDate, pickTable, queryFormat, sendTable } from './audit-export.ts';
import { minuteIso, periodOf } from './audit-params.ts';
import { runLineView } from './audit-run.ts';

async function make(ctx: AppContext, c: Context) {
  const period = periodOf(
    c.req.query('from'),
    c.req.query('to'),
    () => Math.ceil((installationClockMs(ctx.db) ?? Date.now()) / 3_600_000) * 3_600_000,
  );
  const view = await runLineView(ctx, period);
  const query = { from: minuteIso(period.fromMs), to: minuteIso(period.toMs) };
  return { period, query, view, tables: lineTables(view.pareto, view.histories) };
}

export function register(app: Hono, ctx: AppContext): void {
  app.get('/line', async (c) => {
    const m = await make(ctx, c);
    return renderPage(c, ctx, {
      title: 'Line view',
      active: '/line',
      body: LinePage({
        query: m.query,
        period: m.period,
        pareto: m.view.pareto,
        particleVoids: m.view.particleVoids,
        unexplainedVoids: m.view.unexplainedVoids,
        histories: m.view.histories,
        tables: m.tables,
        problems: m.view.problems,
        downloadHref: (table, format) =>
          `/line/tables/${encodeURIComponent(table)}?${new URLSearchParams({ ...m.query, format })}`,
      }),
    });
  });

  app.get('/line/tables/:table', async (c) => {
    const format = queryFormat(c);
    const m = await make(ctx, c);
    const t = pickTable(m.tables, c.req.param('table') ?? '');
    return sendTable(t, format, `line-${t.id}-${fileDate(m.period.fromMs)}-${fileDate(m.period.toMs)}`);
  });
}
