/**
 * An area's contamination audit: the page (/areas/:id/audit), its printable report
 * (/areas/:id/audit/report), every table as a download (/areas/:id/audit/tables/:table?format=),
 * deriving levels (POST …/levels, approvers) and acknowledging an excursion (POST …/acknowledge,
 * engineers and up). Thin: read the parameters, ask the engine (src/engine/audit/), build the tables
 * once (views/pages/audit-tables.ts), render or send.
 */
import type { Context, Hono } from 'hono';
import { AreaAuditPage, type AuditQuery, auditQueryString } from '../../../views/pages/audit-area.tsx';
import { AuditReportPage } from '../../../views/pages/audit-report.tsx';
import type { AuditTable } from '../../../views/pages/audit-table.tsx';
import { type AuditView, areaAuditTables, auditProblems } from '../../../views/pages/audit-tables.ts';
import type { AuditPeriod } from '../../engine/audit/types.ts';
import { audit } from '../auth/audit.ts';
import type { AppContext } from '../context.ts';
import { keptKeyPart } from '../page-cache.ts';
import { renderPage } from '../render.ts';
import { fileDate, pickTable, queryFormat, sendTable } from './audit-export.ts';
import { type AreaRef, auditQuery, pathArea } from './audit-params.ts';
import { acknowledgeFromForm, deriveLevelsFromForm, FormRefusal, runAreaAudit } from './audit-run.ts';

interface Made {
  area: AreaRef;
  query: AuditQuery;
  period: AuditPeriod;
  audit: AuditView | null;
  tables: AuditTable[];
  problems: string[];
}

async function make(
  ctx: AppContext,
  c: Context,
  get: (k: string) => string | undefined = (k) => c.req.query(k),
): Promise<Made> {
  const area = pathArea(ctx, c);
  const q = auditQuery(ctx, get, area);
  const r = await runAreaAudit(ctx, area, q.period, q.occupancy, q.edition, q.limits);
  const a = r.audit;
  return {
    area,
    query: q.query,
    period: q.period,
    audit: a,
    tables: a ? areaAuditTables(a) : [],
    problems: a ? auditProblems(a) : [r.refusal ?? 'This area cannot be audited.'],
  };
}

function base(areaId: string): string {
  return `/areas/${encodeURIComponent(areaId)}/audit`;
}

function page(
  ctx: AppContext,
  c: Context,
  m: Made,
  flash: { kind: 'success' | 'error'; text: string } | null = null,
  status: 200 | 400 | 422 = 200,
): Response {
  const token = c.get('csrfToken');
  const channels = [
    ...new Set(
      (m.audit?.classification.sizesM ?? [])
        .concat(m.audit?.charts?.map((ch) => ch.diameterM) ?? [])
        .map((d) => Number((d * 1e6).toPrecision(3))),
    ),
  ].sort((a, b) => a - b);
  return renderPage(
    c,
    ctx,
    {
      title: `Audit ${m.area.name}`,
      active: '/areas',
      body: AreaAuditPage({
        area: { id: m.area.id, name: m.area.name },
        query: m.query,
        audit: m.audit,
        problems: m.problems,
        tables: m.tables,
        downloadHref: (table, format) =>
          `${base(m.area.id)}/tables/${encodeURIComponent(table)}?${auditQueryString(m.query, { format })}`,
        csrfToken: typeof token === 'string' ? token : '',
        flash,
        locations: m.area.locations.map((l) => ({ id: l.locationId, name: l.name })),
        channelsUm: channels,
        allCharts: c.req.query('charts') === 'all',
      }),
    },
    status,
  );
}

/** The audit query of a form post (its hidden `return` field holds the page's query string). */
function returnQuery(body: Record<string, unknown>): string {
  const r = typeof body.return === 'string' ? body.return : '';
  const p = new URLSearchParams(r);
  const keep = new URLSearchParams();
  for (const k of ['from', 'to', 'occupancy', 'edition']) {
    const v = p.get(k);
    if (v) keep.set(k, v);
  }
  return keep.toString();
}

export function register(app: Hono, ctx: AppContext): void {
  app.get('/areas/:id/audit', async (c) => {
    const m = await make(ctx, c);
    const stored = c.req.query('stored');
    const flash =
      stored === 'levels'
        ? { kind: 'success' as const, text: 'The new levels are stored; the tables below use them.' }
        : stored === 'acknowledgement'
          ? { kind: 'success' as const, text: 'The acknowledgement is stored.' }
          : null;
    return page(ctx, c, m, flash);
  });

  // The report states when it was made (to the minute): kept per real minute, even under a frozen
  // assessment clock (src/web/page-cache.ts).
  keptKeyPart(ctx, '/areas/:id/audit/report', () => String(Math.floor(Date.now() / 60_000)));
  app.get('/areas/:id/audit/report', async (c) => {
    const m = await make(ctx, c);
    return renderPage(c, ctx, {
      title: `Audit report ${m.area.name}`,
      active: '/areas',
      body: AuditReportPage({
        area: { id: m.area.id, name: m.area.name },
        query: m.query,
        audit: m.audit,
        problems: m.problems,
        tables: m.tables,
        generatedAtMs: Date.now(),
        version: ctx.version,
      }),
    });
  });

  app.get('/areas/:id/audit/tables/:table', async (c) => {
    const format = queryFormat(c);
    const m = await make(ctx, c);
    if (!m.audit) return c.text(`This area cannot be audited: ${m.problems.join(' ')}\n`, 422);
    const t = pickTable(m.tables, c.req.param('table') ?? '');
    const stem = `audit-${m.area.id}-${t.id}-${fileDate(m.period.fromMs)}-${fileDate(m.period.toMs)}`;
    return sendTable(t, format, stem);
  });

  app.post('/areas/:id/audit/levels', async (c) => {
    const area = pathArea(ctx, c);
    const body = await c.req.parseBody();
    const qs = returnQuery(body);
    try {
      const stored = deriveLevelsFromForm(ctx, c, area, body);
      audit(
        c,
        ctx,
        'derive levels',
        `${stored.locationId} ≥ ${Number((stored.diameterM * 1e6).toPrecision(3))} µm`,
        {
          method: stored.method,
          name: stored.name,
          version: stored.version,
          window: stored.window,
          alertPerM3: stored.alertPerM3,
          actionPerM3: stored.actionPerM3,
        },
        typeof body.openName === 'string' ? body.openName : undefined,
      );
      return c.redirect(`${base(area.id)}?${qs}${qs ? '&' : ''}stored=levels#levels`, 303);
    } catch (err) {
      if (!(err instanceof FormRefusal)) throw err;
      const p = new URLSearchParams(qs);
      return page(
        ctx,
        c,
        await make(ctx, c, (k) => p.get(k) ?? undefined),
        { kind: 'error', text: err.message },
        err.status,
      );
    }
  });

  app.post('/areas/:id/audit/acknowledge', async (c) => {
    const area = pathArea(ctx, c);
    const body = await c.req.parseBody();
    const qs = returnQuery(body);
    try {
      const ack = acknowledgeFromForm(ctx, c, body);
      audit(
        c,
        ctx,
        'acknowledge excursion',
        ack.excursionId,
        { area: area.id, comment: ack.comment },
        typeof body.openName === 'string' ? body.openName : undefined,
      );
      return c.redirect(`${base(area.id)}?${qs}${qs ? '&' : ''}stored=acknowledgement#excursions`, 303);
    } catch (err) {
      if (!(err instanceof FormRefusal)) throw err;
      const p = new URLSearchParams(qs);
      return page(
        ctx,
        c,
        await make(ctx, c, (k) => p.get(k) ?? undefined),
        { kind: 'error', text: err.message },
        err.status,
      );
    }
  });
}
