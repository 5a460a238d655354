/**
 * Saved scenarios on the web: save the scenario on show under a name (POST /whatif/scenarios,
 * engineers; recorded in the audit trail), list them (/whatif/scenarios), open one on its what-if
 * page (/whatif/scenarios/:id), export it as JSON (/whatif/scenarios/:id/export) and compare several
 * side by side (/whatif/scenarios/compare?id=…&id=…). Saving stores the levers only (the engine's
 * saveScenario checks them); nothing else is ever written.
 */
import type { Context, Hono } from 'hono';
import type { SavedScenarioView } from '../../../views/pages/whatif.tsx';
import {
  type CompareColumn,
  type CompareGroup,
  ComparePage,
  ScenariosPage,
} from '../../../views/pages/whatif-scenarios.tsx';
import { leverQuery } from '../../../views/partials/whatif-levers.tsx';
import {
  exportScenario,
  listScenarios,
  loadScenario,
  type SavedScenario,
  saveScenario,
  whatIfLot,
  whatIfPair,
} from '../../engine/tuning/index.ts';
import { audit } from '../auth/audit.ts';
import { accountOf } from '../auth/session.ts';
import type { AppContext } from '../context.ts';
import { BadParamError, pathWholeNumber } from '../params.ts';
import { renderPage } from '../render.ts';
import { asOfFrom, notFound } from './lots.tsx';
import { attempt, leverError, lotContext, pairContext } from './whatif-context.ts';
import { leverValuesOf, lineNames, scenarioOf, valuesOfScenario } from './whatif-query.ts';

/** The what-if address of a saved scenario: its subject's page with its levers in the query. */
export function scenarioHref(s: SavedScenario): string {
  const base = s.target ? `/whatif/${s.target.kind}/${encodeURIComponent(s.target.id)}` : '/whatif/waiting';
  return `${base}${leverQuery(valuesOfScenario(s.scenario))}`;
}

export function savedViews(
  ctx: AppContext,
  target?: { kind: 'pair' | 'lot'; id: string },
): SavedScenarioView[] {
  return listScenarios(ctx.db, target).map((s) => ({
    id: s.id,
    name: s.name,
    target: s.target ? `${s.target.kind} ${s.target.id}` : 'every waiting lot',
    createdBy: s.createdBy,
    createdAtMs: s.createdAtMs,
    href: scenarioHref(s),
  }));
}

function targetOf(v: string): { kind: 'pair' | 'lot'; id: string } | null {
  const m = /^(pair|lot):(.+)$/.exec(v.trim());
  if (!v.trim()) return null;
  if (!m) throw new BadParamError('target', `must be "pair:ID", "lot:ID" or empty; got "${v.slice(0, 40)}"`);
  return { kind: m[1] as 'pair' | 'lot', id: m[2]! };
}

/** One column of the comparison for a saved scenario on a subject. */
function column(ctx: AppContext, c: Context, s: SavedScenario): CompareColumn {
  const base: CompareColumn = {
    heading: s.name,
    href: scenarioHref(s),
    applied: [],
    call: null,
    voids: null,
    unbondedFraction: null,
    dieLoss: null,
    problem: null,
  };
  const t = s.target;
  if (!t) return { ...base, problem: 'made for every waiting lot: open it to see each lot' };
  const asOfMs = asOfFrom(c, ctx);
  const w = t.kind === 'pair' ? pairContext(ctx, t.id, asOfMs) : lotContext(ctx, t.id, asOfMs);
  if (!w || 'problem' in w) return { ...base, problem: `${t.kind} ${t.id} cannot be assessed now` };
  const r = attempt(() => (w.kind === 'pair' ? whatIfPair(w, s.scenario) : whatIfLot(w, s.scenario)));
  if ('error' in r) return { ...base, problem: r.error };
  if ('pairId' in r.ok) {
    const a = r.ok.whatIf;
    const ym = w.inputs.line.products[a.productId]?.spec.yieldModel;
    const k = ym === 'poisson' ? a.figures.dieKillsPoisson : a.figures.dieKillsNB;
    return {
      ...base,
      applied: r.ok.applied,
      call: a.call,
      voids: a.figures.voids.value,
      unbondedFraction: a.figures.unbondedFraction.value,
      dieLoss: k?.value ?? null,
    };
  }
  const l = r.ok.whatIf;
  return {
    ...base,
    applied: r.ok.applied,
    call: l.call,
    voids: l.totals.voids,
    dieLoss: l.totals.dieKillsNB,
  };
}

/** The as-is column of a subject (the same figures every scenario column is compared with). */
function asIsColumn(ctx: AppContext, c: Context, t: { kind: 'pair' | 'lot'; id: string }): CompareColumn {
  return column(ctx, c, {
    id: 0,
    name: 'as is',
    target: t,
    scenario: { levers: [] },
    createdBy: '',
    createdAtMs: 0,
  });
}

export function register(app: Hono, ctx: AppContext): void {
  app.post('/whatif/scenarios', async (c) => {
    const body = await c.req.parseBody();
    const str = (k: string) => (typeof body[k] === 'string' ? (body[k] as string) : '');
    const name = str('name').trim();
    if (!name) throw new BadParamError('name', 'is needed: the name to save the scenario under');
    if (name.length > 120) throw new BadParamError('name', 'must be at most 120 characters');
    const target = targetOf(str('target'));
    const q = new URLSearchParams(str('query'));
    const values = leverValuesOf((k) => q.get(k) ?? undefined);
    const asOfMs = asOfFrom(c, ctx);
    const w = target
      ? target.kind === 'pair'
        ? pairContext(ctx, target.id, asOfMs)
        : lotContext(ctx, target.id, asOfMs)
      : null;
    if (target && (!w || 'problem' in w))
      throw new BadParamError('target', `names no ${target.kind} that can be assessed: "${target.id}"`);
    const scenario = scenarioOf(values, w && !('problem' in w) ? lineNames(w.inputs.line) : null);
    const account = accountOf(c);
    const createdBy = account ? `${account.user.displayName} [${account.user.username}]` : 'open mode';
    let saved: SavedScenario;
    try {
      saved = saveScenario(ctx.db, { name, scenario, target, createdBy });
    } catch (e) {
      const m = leverError(e);
      if (m) throw new BadParamError('scenario', `cannot be saved: ${m}`);
      throw e;
    }
    audit(c, ctx, 'save-scenario', `scenario ${saved.id}`, {
      name: saved.name,
      target: saved.target,
      levers: saved.scenario.levers,
    });
    return c.redirect(`${scenarioHref(saved)}#saved-scenarios`, 303);
  });

  app.get('/whatif/scenarios', (c) =>
    renderPage(c, ctx, {
      title: 'Saved scenarios',
      active: '/lots',
      body: ScenariosPage({ saved: savedViews(ctx) }),
    }),
  );

  app.get('/whatif/scenarios/compare', (c) => {
    // Empty fields count as not given (forms send them), as everywhere in src/web/params.ts.
    const ids = (c.req.queries('id') ?? []).filter((v) => v.trim() !== '');
    const unknown: number[] = [];
    const found: SavedScenario[] = [];
    for (const raw of ids.slice(0, 12)) {
      if (!/^\d{1,12}$/.test(raw.trim()))
        throw new BadParamError('id', `must be a saved scenario's number; got "${raw.slice(0, 40)}"`);
      const s = loadScenario(ctx.db, Number(raw.trim()));
      if (s) found.push(s);
      else unknown.push(Number(raw.trim()));
    }
    // One table per subject: the as-is figures, then each scenario made for it.
    const groups = new Map<string, CompareGroup>();
    for (const s of found) {
      const key = s.target ? `${s.target.kind}:${s.target.id}` : 'waiting';
      let g = groups.get(key);
      if (!g) {
        g = {
          subject: s.target
            ? `${s.target.kind === 'pair' ? 'Pair' : 'Lot'} ${s.target.id}`
            : 'Every waiting lot',
          subjectHref: s.target ? `/${s.target.kind}s/${encodeURIComponent(s.target.id)}` : '/whatif/waiting',
          columns: s.target ? [asIsColumn(ctx, c, s.target)] : [],
        };
        groups.set(key, g);
      }
      g.columns.push(column(ctx, c, s));
    }
    return renderPage(c, ctx, {
      title: 'Scenarios side by side',
      active: '/lots',
      body: ComparePage({ groups: [...groups.values()], unknown }),
    });
  });

  app.get('/whatif/scenarios/:id', (c) => {
    const id = pathWholeNumber(c, 'id');
    const s = id === null ? null : loadScenario(ctx.db, id);
    if (!s) return notFound(c, ctx, `There is no saved scenario ${c.req.param('id')}.`);
    return c.redirect(scenarioHref(s), 303);
  });

  app.get('/whatif/scenarios/:id/export', (c) => {
    const id = pathWholeNumber(c, 'id');
    const s = id === null ? null : loadScenario(ctx.db, id);
    if (!s) return notFound(c, ctx, `There is no saved scenario ${c.req.param('id')}.`);
    c.header('content-disposition', `attachment; filename="scenario-${s.id}.json"`);
    return c.json(exportScenario(s));
  });
}
