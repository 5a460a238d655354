/**
 * Pairs: one pair's page (/pairs/:id), its swaps (Pareto grouping, spectrum mode) and its sign-off
 * (POST /pairs/:id/signoff). Thin: load and assess through the engine, render; the sign-off check
 * (inputs unchanged, a comment for an overridden call) is the engine's.
 */
import type { Context, Hono } from 'hono';
import { MessagePage } from '../../../views/pages/message.tsx';
import { PairPage, SpectrumPanel, type WaferScanView } from '../../../views/pages/pair.tsx';
import type { CallName } from '../../../views/partials/call.tsx';
import { ParetoPanel } from '../../../views/partials/pareto-panel.tsx';
import {
  SIGNOFF_ROLES,
  SignoffPanel,
  type SignoffRecordLike,
  type SignoffValues,
} from '../../../views/partials/signoff.tsx';
import {
  calibrationInspection,
  DEFAULT_INSPECTION_SIGMA_M,
  DEFAULT_SCANNER_SIGMA_M,
  matchPairVoids,
} from '../../engine/learn/calibration-match.ts';
import type { PairMatching } from '../../engine/learn/calibration-types.ts';
import { loadPairInspections } from '../../engine/learn/loader.ts';
import { loadPair, signOffPairInDb } from '../../engine/loader.ts';
import { assessPairInSession, createSession, EngineInputError } from '../../engine/pair.ts';
import type { PairAssessment, PairInput, WaferInput } from '../../engine/types.ts';
import { readDispositions } from '../../store/dispositions.ts';
import { writeTransaction } from '../../store/writer.ts';
import { assessmentRef, readAssessmentRef } from '../assessment-ref.ts';
import { audit } from '../auth/audit.ts';
import { accountOf } from '../auth/session.ts';
import type { AppContext } from '../context.ts';
import { csrfToken } from '../csrf.ts';
import { queryChoice, queryParetoBy } from '../params.ts';
import { isFragmentRequest, renderFragment, renderPage } from '../render.ts';
import { asOfFrom, memoised, notFound } from './lots.tsx';

interface Loaded {
  a: PairAssessment;
  pair: PairInput;
  waferDiameterM: number;
  edgeExclusionM: number;
  inspection: { matching: PairMatching; otherInspections: string[] } | null;
}

function assess(ctx: AppContext, id: string, asOfMs: number): Loaded | { problem: string } | null {
  return memoised(ctx, `pair|${id}|${asOfMs}`, () => assessUncached(ctx, id, asOfMs));
}

function assessUncached(ctx: AppContext, id: string, asOfMs: number): Loaded | { problem: string } | null {
  const loaded = loadPair(ctx.db, id, asOfMs);
  if (!loaded) return null;
  try {
    const a = assessPairInSession(loaded.pair, createSession(loaded.line), { asOfMs, detail: 'full' });
    const product = loaded.line.products[loaded.pair.productId];
    const waferDiameterM = product?.waferDiameterM ?? 0.3;
    const edgeExclusionM = product?.edgeExclusionM ?? 0;
    return {
      a,
      pair: loaded.pair,
      waferDiameterM,
      edgeExclusionM,
      inspection: inspectionOf(ctx, loaded.pair, a, waferDiameterM / 2 - edgeExclusionM),
    };
  } catch (e) {
    if (e instanceof EngineInputError) return { problem: e.message };
    throw e;
  }
}

/**
 * A bonded pair's void inspection (the one reporting the smallest voids) matched to the predicted
 * discs of this assessment, as calibration matches it; null before bonding or without inspections.
 */
function inspectionOf(
  ctx: AppContext,
  pair: PairInput,
  a: PairAssessment,
  bondedRadiusM: number,
): Loaded['inspection'] {
  if (pair.bondTimeMs === null || !a.voidMap) return null;
  const list = loadPairInspections(ctx.db, pair.pairId);
  const insp = calibrationInspection(list);
  if (!insp) return null;
  return {
    matching: matchPairVoids({
      inspection: insp,
      discs: a.voidMap.discs,
      bondedRadiusM,
      inspectionSigmaM: DEFAULT_INSPECTION_SIGMA_M,
      scannerSigmaM: DEFAULT_SCANNER_SIGMA_M,
    }),
    otherInspections: list.filter((x) => x !== insp).map((x) => x.inspectionId),
  };
}

function scanView(w: WaferInput): WaferScanView {
  const s = w.latestScan;
  return {
    waferId: w.waferId,
    scan: s
      ? {
          scanId: s.scanId,
          timeMs: s.timeMs,
          thresholdM: s.thresholdM,
          toolId: s.toolId,
          xM: s.particles.xM,
          yM: s.particles.yM,
          diameterM: s.particles.diameterM,
        }
      : null,
  };
}

function records(ctx: AppContext, pairId: string): SignoffRecordLike[] {
  return readDispositions(ctx.db, 'pair', pairId).map((d) => ({
    id: d.id,
    call: d.call,
    proposedCall: d.proposedCall,
    signedBy: d.signedBy,
    comment: d.comment,
    signedAtMs: d.signedAtMs,
    inputsHash: d.inputsHash,
    modelVersion: d.modelVersion,
    specVersion: d.specVersion,
  }));
}

function accountName(c: Context): string | undefined {
  const a = accountOf(c);
  return a ? `${a.user.displayName} [${a.user.username}]` : undefined;
}

/** The server's reference to the assessment a page shows; a sign-off must return it. */
function ref(ctx: AppContext, a: PairAssessment): string {
  return assessmentRef(ctx.db, 'pair', a.pairId, a.asOfMs);
}

function token(c: Context): string {
  try {
    return csrfToken(c);
  } catch {
    return '';
  }
}

function page(
  c: Context,
  ctx: AppContext,
  l: Loaded,
  signoff: { error?: string | null; stored?: SignoffRecordLike | null; values?: Partial<SignoffValues> } = {},
  status: 200 | 409 | 422 = 200,
): Response {
  return renderPage(
    c,
    ctx,
    {
      title: `Pair ${l.a.pairId}`,
      active: '/lots',
      body: PairPage({
        a: l.a,
        top: scanView(l.pair.top),
        bottom: scanView(l.pair.bottom),
        flipAxis: l.pair.flipAxis,
        waferDiameterM: l.waferDiameterM,
        edgeExclusionM: l.edgeExclusionM,
        paretoBy: queryParetoBy(c, 'pareto'),
        spectrumMode: queryChoice(c, 'spectrum', SPECTRUM_MODES) ?? 'per-bin',
        signoff: {
          csrfToken: token(c),
          records: records(ctx, l.a.pairId),
          assessmentRef: ref(ctx, l.a),
          ...signoff,
          // Signed in, the name is the account's (the server uses it whatever the field holds).
          values: { name: accountName(c), ...signoff.values },
        },
        inspection: l.inspection,
      }),
    },
    status,
  );
}

function cannotAssess(c: Context, ctx: AppContext, id: string, problem: string): Response {
  return renderPage(c, ctx, {
    title: `Pair ${id}`,
    active: '/lots',
    body: MessagePage({ heading: `Pair ${id} cannot be assessed`, detail: problem }),
  });
}

const SPECTRUM_MODES = ['per-bin', 'cumulative'] as const;

export function register(app: Hono, ctx: AppContext): void {
  app.get('/pairs/:id', (c) => {
    const id = c.req.param('id');
    const l = assess(ctx, id, asOfFrom(c, ctx));
    if (!l) return notFound(c, ctx, `There is no pair ${id}.`);
    if ('problem' in l) return cannotAssess(c, ctx, id, l.problem);
    return page(c, ctx, l);
  });

  app.get('/pairs/:id/pareto', (c) => {
    const id = c.req.param('id');
    const by = queryParetoBy(c, 'by');
    if (!isFragmentRequest(c))
      return c.redirect(`/pairs/${encodeURIComponent(id)}?pareto=${by}#pareto-panel`, 303);
    const l = assess(ctx, id, asOfFrom(c, ctx));
    if (!l || 'problem' in l) return c.html('<p class="vc-error">This pair cannot be assessed.</p>', 404);
    return renderFragment(
      c,
      ParetoPanel({
        pareto: l.a.pareto,
        by,
        base: `/pairs/${encodeURIComponent(id)}`,
        subject: `Pair ${id}`,
        asOfMs: l.a.asOfMs,
      }),
    );
  });

  app.get('/pairs/:id/spectrum', (c) => {
    const id = c.req.param('id');
    const mode = queryChoice(c, 'mode', SPECTRUM_MODES) ?? 'per-bin';
    if (!isFragmentRequest(c))
      return c.redirect(`/pairs/${encodeURIComponent(id)}?spectrum=${mode}#spectrum-panel`, 303);
    const l = assess(ctx, id, asOfFrom(c, ctx));
    if (!l || 'problem' in l) return c.html('<p class="vc-error">This pair cannot be assessed.</p>', 404);
    return renderFragment(c, SpectrumPanel({ a: l.a, mode }));
  });

  app.post('/pairs/:id/signoff', async (c) => {
    const id = c.req.param('id');
    const body = await c.req.parseBody();
    const str = (k: string) => (typeof body[k] === 'string' ? (body[k] as string) : '');
    // Signed in, the signer is the account (whatever the name field says); open mode, the name typed.
    const account = accountOf(c);
    const values: Partial<SignoffValues> = {
      name: account ? `${account.user.displayName} [${account.user.username}]` : str('name').trim(),
      role: str('role'),
      call: (['bond', 're-clean', 'hold'] as const).find((x) => x === str('call')),
      comment: str('comment'),
    };
    const shownHash = str('inputsHash');
    // The assessment time is the one the server put in the page's signed reference, never the
    // client's own; a form without a valid reference is refused after the current assessment.
    const asOfMs = readAssessmentRef(ctx.db, 'pair', id, str('assessmentRef'));
    const fragment = isFragmentRequest(c);
    const l = assess(ctx, id, asOfMs ?? asOfFrom(c, ctx));
    if (!l) return notFound(c, ctx, `There is no pair ${id}.`);
    if ('problem' in l) return cannotAssess(c, ctx, id, l.problem);

    const refuse = (error: string, status: 409 | 422) => {
      if (fragment)
        // 200 so htmx swaps the refusal in place (htmx 2 does not swap 4xx by default); the form
        // keeps the hash the signer saw, so a re-send is refused until the page is reloaded.
        return renderFragment(
          c,
          SignoffPanel({
            pairId: id,
            inputsHash: /^[0-9a-f]{64}$/.test(shownHash) ? shownHash : l.a.inputsHash,
            asOfMs: l.a.asOfMs,
            proposedCall: l.a.call as CallName,
            csrfToken: token(c),
            assessmentRef: ref(ctx, l.a),
            records: records(ctx, id),
            error,
            values,
          }),
        );
      return page(c, ctx, l, { error, values }, status);
    };
    if (!values.name) return refuse('Name: the name of the person signing is required.', 422);
    if (!SIGNOFF_ROLES.includes(values.role as (typeof SIGNOFF_ROLES)[number]))
      return refuse(`Role: one of ${SIGNOFF_ROLES.join(', ')}.`, 422);
    if (str('call') && !values.call) return refuse('Call: one of bond, re-clean, hold.', 422);
    if (asOfMs === null)
      return refuse(
        'The form does not carry a reference to an assessment this server showed. Reload the page and sign again.',
        422,
      );

    // The sign-off and its audit-trail entry in one write transaction: both are stored or neither.
    const out = writeTransaction(ctx.db, () => {
      const r = signOffPairInDb(ctx.db, id, {
        inputsHash: shownHash,
        asOfMs: l.a.asOfMs,
        signedBy: `${values.name} (${values.role})`,
        call: values.call,
        comment: values.comment || null,
      });
      if (r?.ok)
        audit(
          c,
          ctx,
          'signoff',
          `pair ${id}`,
          {
            dispositionId: r.id,
            call: r.record.call,
            proposedCall: r.record.proposedCall,
            inputsHash: r.record.inputsHash,
            assessedAtMs: r.record.assessedAtMs,
          },
          values.name,
        );
      return r;
    });
    if (!out) return notFound(c, ctx, `There is no pair ${id}.`);
    if (!out.ok)
      return refuse(
        out.code === 'hash-changed'
          ? `${out.message} Reload the page to see the current figures.`
          : out.message,
        out.code === 'hash-changed' ? 409 : 422,
      );
    const all = records(ctx, id);
    const stored = all.find((r) => r.id === out.id) ?? null;
    if (!fragment) return c.redirect(`/pairs/${encodeURIComponent(id)}?asOf=${l.a.asOfMs}#signoff`, 303);
    return renderFragment(
      c,
      SignoffPanel({
        pairId: id,
        inputsHash: l.a.inputsHash,
        asOfMs: l.a.asOfMs,
        proposedCall: l.a.call as CallName,
        csrfToken: token(c),
        assessmentRef: ref(ctx, l.a),
        records: all,
        stored,
      }),
    );
  });
}
