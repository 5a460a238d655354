/**
 * What-if (/whatif/pair/:id, /whatif/lot/:id, /whatif/waiting): the levers as a GET query (so a
 * scenario is a link), the scenario beside the as-is figures, its JSON export, and — as the page's
 * htmx swap — the result alone. Thin: the lever fields become the engine's Scenario
 * (whatif-query.ts), the engine applies it to the loaded inputs in memory (src/engine/tuning);
 * nothing is written. Saved scenarios, solvers and sensitivity: whatif-saved.ts, whatif-tools.ts.
 */
import type { Context, Hono } from 'hono';
import { MessagePage } from '../../../views/pages/message.tsx';
import {
  type SavedScenarioView,
  SaveScenarioForm,
  WhatIfPage,
  type WhatIfSubject,
  whatIfBase,
} from '../../../views/pages/whatif.tsx';
import { SensitivityPage, SensitivitySlot } from '../../../views/partials/sensitivity-panel.tsx';
import { type LeverOptions, type LeverValues, leverQuery } from '../../../views/partials/whatif-levers.tsx';
import {
  LotWhatIfResult,
  PARETO_GROUPINGS,
  PairWhatIfResult,
  type ResultLinks,
  WaitingWhatIfResult,
  WhatIfError,
  type WhatIfParetoBy,
} from '../../../views/partials/whatif-result.tsx';
import { type Scenario, whatIfLot, whatIfPair } from '../../engine/tuning/index.ts';
import type { LineData } from '../../engine/types.ts';
import { accountOf } from '../auth/session.ts';
import type { AppContext } from '../context.ts';
import { BadParamError, queryChoice } from '../params.ts';
import { renderFragment, renderPage } from '../render.ts';
import { asOfFrom, notFound } from './lots.tsx';
import {
  attempt,
  hiddenOf,
  leverError,
  leverOptions,
  lotContext,
  pairContext,
  token,
  waitingOptions,
  waitingWhatIf,
  wantsFragment,
} from './whatif-context.ts';
import { leverValuesOf, lineNames, scenarioOf } from './whatif-query.ts';
import { savedViews } from './whatif-saved.ts';
import { sensitivityBody, solverAnswer, solverSection, solverValuesOf } from './whatif-tools.ts';

/**
 * `?pareto=`: the grouping of the Pareto; by default the grouping of the subject's dominant source
 * (a wait location, a tool, else by kind of source), so the chart opens on what matters most.
 */
function paretoBy(c: Context, dominantGroupKey?: string | null): WhatIfParetoBy {
  const fallback: WhatIfParetoBy = dominantGroupKey?.startsWith('location:')
    ? 'location'
    : dominantGroupKey?.startsWith('tool:') || !dominantGroupKey
      ? 'tool'
      : 'kind';
  return (
    queryChoice(
      c,
      'pareto',
      PARETO_GROUPINGS.map((g) => g.by),
    ) ?? fallback
  );
}

function links(subject: WhatIfSubject, values: LeverValues, hidden: Record<string, string>): ResultLinks {
  const base = whatIfBase(subject);
  return {
    self: `${base}${leverQuery(values, hidden)}`,
    exportHref: `${base}/export${leverQuery(values, hidden)}`,
    paretoHref: (b) => `${base}${leverQuery(values, { ...hidden, pareto: b })}#whatif-result`,
  };
}

function canSave(c: Context, ctx: AppContext): boolean {
  if (ctx.auth?.mode !== 'accounts') return true;
  const a = accountOf(c);
  return a !== null && a !== undefined && ['engineer', 'approver', 'admin'].includes(a.role);
}

/** The sections below the scenario: the solvers (with an answer) and the sensitivity slot. */
interface Below {
  solvers?: unknown;
  sensitivity?: unknown;
  saved?: SavedScenarioView[];
}

function renderWhatIf(
  c: Context,
  ctx: AppContext,
  subject: WhatIfSubject,
  asOfMs: number,
  values: LeverValues,
  options: LeverOptions,
  result: unknown,
  status: 200 | 400,
  below: Below = {},
): Response {
  const hidden = hiddenOf(c);
  if (wantsFragment(c)) return renderFragment(c, result as never, status);
  return renderPage(
    c,
    ctx,
    {
      title: `What if… ${subject.kind === 'waiting' ? 'waiting lots' : subject.id}`,
      active: '/lots',
      body: WhatIfPage({
        subject,
        asOfMs,
        values,
        options,
        hidden,
        result: result as never,
        solvers: below.solvers as never,
        sensitivity: below.sensitivity as never,
        save: SaveScenarioForm({
          subject,
          query: leverQuery(values).replace(/^\?/, ''),
          csrfToken: token(c),
          canSave: canSave(c, ctx),
        }),
        saved: below.saved ?? [],
      }),
    },
    status,
  );
}

function cannotAssess(c: Context, ctx: AppContext, what: string, problem: string): Response {
  return renderPage(c, ctx, {
    title: `What if… ${what}`,
    active: '/lots',
    body: MessagePage({ heading: `${what} cannot be assessed`, detail: problem }),
  });
}

/** The scenario of a request against a line, or the error in words. */
function scenarioFor(values: LeverValues, lines: LineData[]): { scenario: Scenario } | { error: string } {
  try {
    return { scenario: scenarioOf(values, lineNames(...lines)) };
  } catch (e) {
    const m = leverError(e);
    if (m) return { error: m };
    throw e;
  }
}

function download(c: Context, name: string, body: unknown): Response {
  c.header('content-disposition', `attachment; filename="${name.replace(/[^A-Za-z0-9._-]/g, '_')}"`);
  return c.json(body);
}

export function register(app: Hono, ctx: AppContext): void {
  /**
   * A pair's or lot's what-if page (mode 'whatif': the levers of the query), or its solver answer
   * (mode 'solve': the solver fields of the query, beside the as-is figures; the htmx swap is the
   * answer alone).
   */
  const subjectPage = (c: Context, kind: 'pair' | 'lot', mode: 'whatif' | 'solve') => {
    const id = c.req.param('id') ?? '';
    const asOfMs = asOfFrom(c, ctx);
    const w = kind === 'pair' ? pairContext(ctx, id, asOfMs) : lotContext(ctx, id, asOfMs);
    const what = `${kind === 'pair' ? 'Pair' : 'Lot'} ${id}`;
    if (!w) return notFound(c, ctx, `There is no ${kind} ${id}.`);
    if ('problem' in w) return cannotAssess(c, ctx, what, w.problem);
    const dominant = w.asIs.dominant?.groupKey ?? null;
    const by = paretoBy(c, dominant);
    const subject: WhatIfSubject =
      w.kind === 'pair' ? { kind: 'pair', id, lotId: w.pair.lotId } : { kind: 'lot', id };
    const pairs = w.kind === 'pair' ? [w.pair] : w.lot.pairs;
    const options = leverOptions(ctx, w.inputs.line, pairs);
    const solved = mode === 'solve' ? solverAnswer(w, solverValuesOf(c)) : null;
    if (solved && wantsFragment(c)) return renderFragment(c, solved.answer as never, solved.status);
    const values = mode === 'solve' ? {} : leverValuesOf((k) => c.req.query(k));
    const s = scenarioFor(values, [w.inputs.line]);
    const r =
      'error' in s
        ? s
        : attempt(() => (w.kind === 'pair' ? whatIfPair(w, s.scenario) : whatIfLot(w, s.scenario)));
    const below: Below = {
      solvers: solverSection(c, subject, options, solved?.answer ?? null),
      saved: savedViews(ctx, { kind, id }),
      sensitivity: SensitivitySlot({
        href: `/whatif/${kind}/${encodeURIComponent(id)}/sensitivity${leverQuery({}, hiddenOf(c))}`,
        subject: what,
      }),
    };
    if ('error' in r)
      return renderWhatIf(
        c,
        ctx,
        subject,
        asOfMs,
        values,
        options,
        WhatIfError({ message: r.error }),
        400,
        below,
      );
    const l = links(subject, values, hiddenOf(c));
    const result =
      'pairId' in r.ok
        ? PairWhatIfResult({ w: r.ok, by, links: l })
        : LotWhatIfResult({ w: r.ok, by, links: l });
    return renderWhatIf(c, ctx, subject, asOfMs, values, options, result, solved?.status ?? 200, below);
  };
  app.get('/whatif/pair/:id', (c) => subjectPage(c, 'pair', 'whatif'));
  app.get('/whatif/lot/:id', (c) => subjectPage(c, 'lot', 'whatif'));
  app.get('/whatif/pair/:id/solve', (c) => subjectPage(c, 'pair', 'solve'));
  app.get('/whatif/lot/:id/solve', (c) => subjectPage(c, 'lot', 'solve'));

  // The sensitivity of the call: the htmx swap into the pair, lot and what-if pages, or a page.
  const sensitivityPage = (c: Context, kind: 'pair' | 'lot') => {
    const id = c.req.param('id') ?? '';
    const asOfMs = asOfFrom(c, ctx);
    const w = kind === 'pair' ? pairContext(ctx, id, asOfMs) : lotContext(ctx, id, asOfMs);
    if (!w) return notFound(c, ctx, `There is no ${kind} ${id}.`);
    if ('problem' in w) return cannotAssess(c, ctx, `${kind === 'pair' ? 'Pair' : 'Lot'} ${id}`, w.problem);
    const body = sensitivityBody(ctx, w, hiddenOf(c));
    if (wantsFragment(c)) return renderFragment(c, body as never);
    return renderPage(c, ctx, {
      title: `Sensitivity of ${id}`,
      active: '/lots',
      body: SensitivityPage({ kind, id, lotId: w.kind === 'pair' ? w.pair.lotId : undefined, body }),
    });
  };
  app.get('/whatif/pair/:id/sensitivity', (c) => sensitivityPage(c, 'pair'));
  app.get('/whatif/lot/:id/sensitivity', (c) => sensitivityPage(c, 'lot'));

  app.get('/whatif/waiting', (c) => {
    const asOfMs = asOfFrom(c, ctx);
    const subject: WhatIfSubject = { kind: 'waiting', id: null };
    const values = leverValuesOf((k) => c.req.query(k));
    const w0 = waitingOptions(ctx, asOfMs);
    const below: Below = { saved: savedViews(ctx).filter((v) => v.target === 'every waiting lot') };
    const s = scenarioFor(values, w0.lines);
    const r = 'error' in s ? s : attempt(() => waitingWhatIf(ctx, s.scenario, asOfMs));
    if ('error' in r)
      return renderWhatIf(
        c,
        ctx,
        subject,
        asOfMs,
        values,
        w0.options,
        WhatIfError({ message: r.error }),
        400,
        below,
      );
    const result = WaitingWhatIfResult({ w: r.ok, links: links(subject, values, hiddenOf(c)) });
    return renderWhatIf(c, ctx, subject, asOfMs, values, w0.options, result, 200, below);
  });

  // The scenario and its figures as JSON (a download): the levers, what they changed, both sides.
  app.get('/whatif/pair/:id/export', (c) => {
    const id = c.req.param('id');
    const asOfMs = asOfFrom(c, ctx);
    const pc = pairContext(ctx, id, asOfMs);
    if (!pc || 'problem' in pc)
      throw new BadParamError('pair', `names no pair that can be assessed: "${id}"`, 404);
    const values = leverValuesOf((k) => c.req.query(k));
    const scenario = scenarioOf(values, lineNames(pc.inputs.line), c.req.query('name') || undefined);
    const w = exportAttempt(() => whatIfPair(pc, scenario));
    return download(c, `whatif-${id}.json`, {
      kind: 'voidcast what-if',
      subject: { kind: 'pair', id },
      asOfMs,
      link: `/whatif/pair/${encodeURIComponent(id)}${leverQuery(values, hiddenOf(c))}`,
      scenario: w.scenario,
      applied: w.applied,
      asIs: sideOf(w.asIs),
      whatIf: sideOf(w.whatIf),
      delta: w.delta,
      callChanged: w.callChanged,
    });
  });

  app.get('/whatif/lot/:id/export', (c) => {
    const id = c.req.param('id');
    const asOfMs = asOfFrom(c, ctx);
    const lc = lotContext(ctx, id, asOfMs);
    if (!lc || 'problem' in lc)
      throw new BadParamError('lot', `names no lot that can be assessed: "${id}"`, 404);
    const values = leverValuesOf((k) => c.req.query(k));
    const scenario = scenarioOf(values, lineNames(lc.inputs.line), c.req.query('name') || undefined);
    const w = exportAttempt(() => whatIfLot(lc, scenario));
    return download(c, `whatif-${id}.json`, {
      kind: 'voidcast what-if',
      subject: { kind: 'lot', id },
      asOfMs,
      link: `/whatif/lot/${encodeURIComponent(id)}${leverQuery(values, hiddenOf(c))}`,
      scenario: w.scenario,
      applied: w.applied,
      asIs: { call: w.asIs.call, totals: w.asIs.totals },
      whatIf: { call: w.whatIf.call, totals: w.whatIf.totals },
      pairs: w.pairs,
      delta: w.delta,
      callChanged: w.callChanged,
    });
  });

  app.get('/whatif/waiting/export', (c) => {
    const asOfMs = asOfFrom(c, ctx);
    const values = leverValuesOf((k) => c.req.query(k));
    const scenario = scenarioOf(values, lineNames(...waitingOptions(ctx, asOfMs).lines));
    const w = exportAttempt(() => waitingWhatIf(ctx, scenario, asOfMs));
    return download(c, 'whatif-waiting.json', {
      kind: 'voidcast what-if',
      subject: { kind: 'waiting' },
      asOfMs,
      link: `/whatif/waiting${leverQuery(values, hiddenOf(c))}`,
      scenario: w.scenario,
      lots: w.lots.map((l) => ({
        lotId: l.lotId,
        asIsCall: l.asIs.call,
        whatIfCall: l.whatIf.call,
        pairs: l.pairs,
        delta: l.delta,
      })),
      skipped: w.skipped,
    });
  });
}

/** An export with a refused lever is a 400 naming it (JSON has no form to show it beside). */
function exportAttempt<T>(run: () => T): T {
  try {
    return run();
  } catch (e) {
    const m = leverError(e);
    if (m) throw new BadParamError('scenario', `cannot be computed: ${m}`);
    throw e;
  }
}

function sideOf(a: {
  call: string;
  reasons: unknown;
  figures: unknown;
  specChecks: unknown;
  inputsHash: string;
}) {
  return {
    call: a.call,
    reasons: a.reasons,
    figures: a.figures,
    specChecks: a.specChecks,
    inputsHash: a.inputsHash,
  };
}
