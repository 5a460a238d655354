/**
 * Calibration: the page (/calibration, ?pair= picks the map), its map swap (/calibration/map?pair=)
 * and proposing every fit of the line as one parameter set (POST /calibration/propose: the scans'
 * adders and removal curves and the calibration with them applied, src/engine/learn/propose.ts →
 * 303 to the set on the Parameters page, where a person adopts it). Thin: the engine loads, assesses, matches, fits
 * and backtests (src/engine/learn/), memoised per data version (imports and parameter sets).
 */
import type { Context, Hono } from 'hono';
import { CalibrationPage } from '../../../views/pages/calibration.tsx';
import { VoidOverlayPanel } from '../../../views/partials/void-overlay-panel.tsx';
import type { CalibrationReport, PairCalibration } from '../../engine/learn/calibration-types.ts';
import type { CalibrationView } from '../../engine/learn/calibration-view.ts';
import { proposeLineParameters } from '../../engine/learn/propose.ts';
import { EngineInputError } from '../../engine/pair.ts';
import type { ProposeOutcome } from '../../engine/parameter-sets.ts';
import { onViewThread } from '../../engine/view-thread.ts';
import { audit } from '../auth/audit.ts';
import { accountOf } from '../auth/session.ts';
import type { AppContext } from '../context.ts';
import { csrfToken } from '../csrf.ts';
import { isFragmentRequest, renderFragment, renderPage } from '../render.ts';

/** The calibration for the pages, on the pages' thread (src/engine/view-thread.ts), kept until the data change. */
function calibrated(ctx: AppContext): Promise<CalibrationView | { problem: string }> {
  return onViewThread(ctx.db, 'calibration', {});
}

function token(c: Context): string {
  try {
    return csrfToken(c);
  } catch {
    return '';
  }
}

/** The pair to map: the one asked for, else the pair with the most explained voids. */
function pickPair(r: CalibrationReport, asked: string | undefined): PairCalibration | null {
  if (asked) return r.pairs.find((p) => p.pairId === asked) ?? null;
  let best: PairCalibration | null = null;
  for (const p of r.pairs) if (!best || p.matching.explained > best.matching.explained) best = p;
  return best;
}

async function page(
  c: Context,
  ctx: AppContext,
  extra: { error?: string; name?: string; label?: string } = {},
  status: 200 | 400 | 422 = 200,
): Promise<Response> {
  const r = await calibrated(ctx);
  if ('problem' in r)
    return renderPage(
      c,
      ctx,
      {
        title: 'Calibration',
        active: '/calibration',
        body: (
          <section>
            <h1>Calibration from void inspections</h1>
            <p class="vc-error">The inspected pairs cannot be assessed: {r.problem}</p>
          </section>
        ),
      },
      200,
    );
  const asked = c.req.query('pair');
  const pair = pickPair(r.calibration, asked);
  const missing = asked !== undefined && pair === null;
  return renderPage(
    c,
    ctx,
    {
      title: 'Calibration',
      active: '/calibration',
      body: CalibrationPage({
        calibration: r.calibration,
        backtest: r.backtest,
        pair: missing ? pickPair(r.calibration, undefined) : pair,
        waferDiameterM: r.waferDiameterM,
        edgeExclusionM: r.edgeExclusionM,
        csrfToken: token(c),
        ...(missing ? { error: `There is no inspected pair "${asked}"; the map shows another.` } : {}),
        ...extra,
      }),
    },
    missing ? 400 : status,
  );
}

export function register(app: Hono, ctx: AppContext): void {
  app.get('/calibration', (c) => page(c, ctx));

  app.get('/calibration/map', async (c) => {
    const id = c.req.query('pair') ?? '';
    if (!isFragmentRequest(c))
      return c.redirect(`/calibration?pair=${encodeURIComponent(id)}#calibration-map`, 303);
    const r = await calibrated(ctx);
    const pair = 'problem' in r ? null : r.calibration.pairs.find((p) => p.pairId === id);
    if (!pair || 'problem' in r)
      return c.html(`<p class="vc-error">There is no inspected pair with that id.</p>`, 404);
    return renderFragment(
      c,
      VoidOverlayPanel({
        id: 'calibration-map-panel',
        pairId: pair.pairId,
        matching: pair.matching,
        otherInspections: pair.otherInspections,
        waferDiameterM: r.waferDiameterM,
        edgeExclusionM: r.edgeExclusionM,
      }),
    );
  });

  app.post('/calibration/propose', async (c) => {
    const body = await c.req.parseBody();
    const str = (k: string) => (typeof body[k] === 'string' ? (body[k] as string).trim() : '');
    // Signed in, the proposer is the account (so that its holder cannot adopt it: parameters.tsx).
    const account = accountOf(c);
    const name = account ? account.user.username : str('name').slice(0, 120);
    const label = str('label').slice(0, 200);
    const refused = c.req.header('HX-Request') === 'true' ? 200 : 422;
    if (!name)
      return page(
        c,
        ctx,
        { error: 'Your name: the name of the person proposing the set is required.', label },
        refused,
      );
    if (!label) return page(c, ctx, { error: 'Label: a label for the set is required.', name }, refused);
    let out: ProposeOutcome;
    try {
      out = proposeLineParameters(ctx.db, name, label).outcome;
    } catch (e) {
      if (e instanceof EngineInputError) return page(c, ctx, { error: e.message, name, label }, refused);
      throw e;
    }
    if (!out.ok) return page(c, ctx, { error: out.message, name, label }, refused);
    audit(c, ctx, 'parameters.propose', `parameter set ${out.set.id}`, { setId: out.set.id, label }, name);
    return c.redirect(`/parameters/${out.set.id}`, 303);
  });
}
