/**
 * Tools & cleans: adders per wafer pass per tool and chamber (src/store/tools.ts), and each
 * clean's removal efficiency PRE(d) from the model library (src/model/clean.ts). A clean stated
 * by its logistic parameters is drawn from them; a clean stated by measured size bands shows the
 * bands (PRE = 1 − after/before) and the logistic fitted to them by binomial maximum likelihood
 * (fitRemovalCurve), when three or more bands can be used.
 *
 * The tools file writes the logistic in log10 d with a width w in decades,
 * PRE = E/(1 + exp(−(log10 d − log10 d50)/w)); the model writes it in ln d with a steepness k,
 * PRE = E/(1 + (d50/d)^k). They are the same curve with k = 1/(w · ln 10).
 *
 * The learned section (?learn=1, or /tools/learned for htmx) shows the fits from the line's scans
 * and a form that proposes every fit of the line as one parameter set (POST /tools/propose →
 * 303 to the set on the Parameters page; src/engine/learn/propose.ts).
 */
import type { Context, Hono } from 'hono';
import { type CleanView, type ToolRow, ToolsPage } from '../../../views/pages/tools.tsx';
import { LearnedSection, type LearnedView } from '../../../views/partials/learned-tools.tsx';
import { lineLabel, proposeLineParameters } from '../../engine/learn/propose.ts';
import { EngineInputError } from '../../engine/pair.ts';
import type { ProposeOutcome } from '../../engine/parameter-sets.ts';
import { onViewThread } from '../../engine/view-thread.ts';
import { fitRemovalCurve, type RemovalCurveParams, removalEfficiency } from '../../model/clean.ts';
import { ModelInputError } from '../../model/errors.ts';
import { SPECTRUM_CENTRES_M } from '../../model/spectrum.ts';
import { listTools, readCleans, type StoredClean, toolKey } from '../../store/tools.ts';
import { ledgerPassesByTool } from '../../store/views-tools.ts';
import { listInspectedLots } from '../../store/voids.ts';
import { audit } from '../auth/audit.ts';
import { accountOf } from '../auth/session.ts';
import type { AppContext } from '../context.ts';
import { csrfToken } from '../csrf.ts';
import { isFragmentRequest, renderFragment, renderPage } from '../render.ts';

/** Reference sizes for the table under each curve: a scan threshold, 100 nm, 300 nm. */
const REFERENCE_SIZES_M = [45e-9, 100e-9, 300e-9];

/** The model's parameters of a logistic stated with a width in decades of log10 d. */
export function paramsFromWidth(
  maxEfficiency: number,
  halfSizeM: number,
  widthDecades: number,
): RemovalCurveParams {
  return { d50M: halfSizeM, maxEfficiency, steepness: 1 / (widthDecades * Math.LN10) };
}

function curveOf(p: RemovalCurveParams) {
  const pre = (d: number) => removalEfficiency(d, p);
  return {
    curve: Array.from(SPECTRUM_CENTRES_M)
      .filter((d) => d <= 10e-6)
      .map((d) => ({ diameterM: d, efficiency: pre(d) })),
    at: REFERENCE_SIZES_M.map((d) => ({ diameterM: d, efficiency: pre(d) })),
  };
}

export function cleanView(c: StoredClean): CleanView {
  const r = c.removal;
  const base = { cleanId: c.cleanId, name: c.name, toolId: c.toolId, recipe: c.recipe, curveKind: r.model };
  if (r.model === 'logistic-log-d') {
    const p = paramsFromWidth(r.maxEfficiency, r.halfSizeM, r.widthDecades);
    return {
      ...base,
      params: { maxEfficiency: r.maxEfficiency, halfSizeM: r.halfSizeM, widthDecades: r.widthDecades },
      fitted: false,
      measured: [],
      ...curveOf(p),
    };
  }
  const measured = r.bands
    .filter((b) => b.before > 0)
    .map((b) => ({ fromM: b.fromM, toM: b.toM, efficiency: 1 - b.after / b.before, n: b.before }));
  try {
    const fit = fitRemovalCurve(
      r.bands.map((b) => ({ lowerM: b.fromM, upperM: b.toM, before: b.before, after: b.after })),
    );
    const p = fit.params;
    return {
      ...base,
      params: {
        maxEfficiency: p.maxEfficiency,
        halfSizeM: p.d50M,
        widthDecades: 1 / (p.steepness * Math.LN10),
      },
      fitted: true,
      measured,
      ...curveOf(p),
    };
  } catch (e) {
    // Fewer than three usable bands: show the bands alone.
    if (!(e instanceof ModelInputError)) throw e;
    return { ...base, params: null, fitted: false, measured, curve: [], at: [] };
  }
}

/**
 * The fits learned from the line's scans, made on request through the engine (src/engine/learn):
 * adders per pass per tool and chamber, removal curves per clean, each with the typed values beside.
 */
export async function learnedView(
  ctx: AppContext,
  csrf: string,
  propose: { error?: string; name?: string; label?: string } = {},
): Promise<LearnedView> {
  // on the pages' thread (src/engine/view-thread.ts), kept until the data change
  const { adders, removal, cleans } = await onViewThread(ctx.db, 'learned', {});
  return {
    adders,
    removal,
    csrfToken: csrf,
    proposeLabel: propose.label ?? lineLabel(listInspectedLots(ctx.db)),
    ...(propose.error ? { proposeError: propose.error } : {}),
    ...(propose.name ? { proposeName: propose.name } : {}),
    cleans: removal.results.map((learning) => {
      const stored = cleans[learning.cleanId];
      const t = learning.typed;
      const sizes = learning.curve.length
        ? learning.curve.map((p) => p.diameterM)
        : Array.from(SPECTRUM_CENTRES_M).filter((d) => d <= 10e-6);
      return {
        learning,
        typedCurve:
          t && stored
            ? sizes.map((d) => ({
                diameterM: d,
                efficiency: removalEfficiency(
                  d,
                  paramsFromWidth(t.maxEfficiency, t.halfSizeM, t.widthDecades),
                ),
              }))
            : [],
      };
    }),
  };
}

function token(c: Context): string {
  try {
    return csrfToken(c);
  } catch {
    return '';
  }
}

function toolsPage(
  c: Context,
  ctx: AppContext,
  learned: LearnedView | null,
  status: 200 | 422 = 200,
): Response {
  const passes = ledgerPassesByTool(ctx.db);
  const tools: ToolRow[] = listTools(ctx.db).map((t) => {
    const a = t.adders;
    let adders: ToolRow['adders'] = null;
    if (a?.model === 'power-law')
      adders = { countAbove: a.countAbove, atDiameterM: a.atDiameterM, slope: a.slope, model: a.model };
    else if (a?.model === 'bands' && a.bands.length > 0) {
      const lowest = Math.min(...a.bands.map((b) => b.fromM));
      adders = {
        countAbove: a.bands.reduce((s, b) => s + b.count, 0),
        atDiameterM: lowest,
        slope: null,
        model: a.model,
      };
    }
    return {
      toolId: t.toolId,
      chamber: t.chamber,
      name: t.name,
      kind: t.toolKind,
      adders,
      uncertaintyFactor: t.adderUncertaintyFactor,
      passes: passes.get(toolKey(t.toolId, t.chamber)) ?? 0,
    };
  });
  const cleans = Object.values(readCleans(ctx.db))
    .sort((a, b) => a.cleanId.localeCompare(b.cleanId))
    .map(cleanView);
  return renderPage(
    c,
    ctx,
    { title: 'Tools & cleans', active: '/tools', body: ToolsPage({ tools, cleans, learned }) },
    status,
  );
}

export function register(app: Hono, ctx: AppContext): void {
  // The learned section alone (htmx); without script the form asks for /tools?learn=1.
  app.get('/tools/learned', async (c) => {
    if (isFragmentRequest(c))
      return renderFragment(c, LearnedSection({ learned: await learnedView(ctx, token(c)) }));
    return c.redirect('/tools?learn=1#vc-learned', 303);
  });
  app.get('/tools', async (c) =>
    toolsPage(c, ctx, c.req.query('learn') === '1' ? await learnedView(ctx, token(c)) : null),
  );

  // Every fit of the line as one proposed parameter set (src/engine/learn/propose.ts) → 303 to it on
  // the Parameters page; refused: the page again with the fits and the reason (422; 200 for htmx).
  app.post('/tools/propose', async (c) => {
    const body = await c.req.parseBody();
    const str = (k: string) => (typeof body[k] === 'string' ? (body[k] as string).trim() : '');
    // Signed in, the proposer is the account (so that its holder cannot adopt it: parameters.tsx).
    const account = accountOf(c);
    const name = account ? account.user.username : str('name').slice(0, 120);
    const label = str('label').slice(0, 200);
    const refused = c.req.header('HX-Request') === 'true' ? 200 : 422;
    const again = async (error: string) =>
      toolsPage(c, ctx, await learnedView(ctx, token(c), { error, name, label }), refused as 200 | 422);
    if (!name) return again('Your name: the name of the person proposing the set is required.');
    if (!label) return again('Label: a label for the set is required.');
    let out: ProposeOutcome;
    try {
      out = proposeLineParameters(ctx.db, name, label).outcome;
    } catch (e) {
      if (e instanceof EngineInputError) return again(e.message);
      throw e;
    }
    if (!out.ok) return again(out.message);
    audit(c, ctx, 'parameters.propose', `parameter set ${out.set.id}`, { setId: out.set.id, label }, name);
    return c.redirect(`/parameters/${out.set.id}`, 303);
  });
}
