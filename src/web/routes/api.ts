/**
 * The JSON API of the assessment engine.
 *
 *   GET  /api/lots                      lots with their product and pair count
 *   GET  /api/lots/:id/assessment       LotAssessment (pairs in summary detail; ?detail=full for all maps)
 *   GET  /api/pairs/:id/assessment      PairAssessment in full (void map, die grid, stacked spectrum) and
 *                                       assessmentRef, the server's signed reference to it
 *   POST /api/pairs/:id/signoff         sign a pair's call off: JSON {inputsHash, assessmentRef, signedBy, call?, comment?}
 *
 * The assessment a sign-off refers to is the server's: its time comes from `assessmentRef` as the
 * assessment GET returned it (src/web/assessment-ref.ts), never from a time the client sends.
 *
 * `?asOf=` (UTC ms or ISO 8601 with its zone, 1970 up to 2100; src/engine/as-of.ts) fixes the
 * assessment time; default the installation clock (settings clock.as_of), else now. Errors are JSON
 * {error, detail} with 400 (bad request), 404 (unknown id), 409 (inputs changed since the assessment
 * that is being signed); never a stack trace.
 */
import type { Context, Hono } from 'hono';
import { assessPairFromDb, listLotsForApi, signOffPairInDb } from '../../engine/loader.ts';
import { assessLotFromDbParallel } from '../../engine/parallel.ts';
import type { Call } from '../../engine/types.ts';
import type { Db } from '../../store/db.ts';
import { readPair } from '../../store/pairs.ts';
import { installationClockMs } from '../../store/settings.ts';
import { writeTransaction } from '../../store/writer.ts';
import { assessmentRef, readAssessmentRef } from '../assessment-ref.ts';
import { audit } from '../auth/audit.ts';
import { accountOf } from '../auth/session.ts';
import type { AppContext } from '../context.ts';
import { queryAsOf, queryChoice } from '../params.ts';

/** ?asOf=, else the installation clock (settings clock.as_of), else now; a bad value is a 400. */
function asOfFrom(c: Context, db: Db): number {
  return queryAsOf(c) ?? installationClockMs(db) ?? Date.now();
}

export function register(app: Hono, ctx: AppContext): void {
  app.get('/api/lots', (c) => c.json({ lots: listLotsForApi(ctx.db) }));

  app.get('/api/lots/:id/assessment', async (c) => {
    const asOf = asOfFrom(c, ctx.db);
    const detail = queryChoice(c, 'detail', ['summary', 'full'] as const) ?? 'summary';
    // on two threads when the database is a file (the result is the same as on one)
    const a = await assessLotFromDbParallel(ctx.db, c.req.param('id'), { asOfMs: asOf, detail });
    if (!a) return c.json({ error: 'not found', detail: `There is no lot "${c.req.param('id')}".` }, 404);
    return c.json(a);
  });

  app.get('/api/pairs/:id/assessment', (c) => {
    const asOf = asOfFrom(c, ctx.db);
    const a = assessPairFromDb(ctx.db, c.req.param('id'), { asOfMs: asOf, detail: 'full' });
    if (!a) return c.json({ error: 'not found', detail: `There is no pair "${c.req.param('id')}".` }, 404);
    return c.json({ ...a, assessmentRef: assessmentRef(ctx.db, 'pair', a.pairId, a.asOfMs) });
  });

  app.post('/api/pairs/:id/signoff', async (c) => {
    let body: unknown;
    try {
      body = await c.req.json();
    } catch {
      return c.json({ error: 'bad request', detail: 'The body must be JSON.' }, 400);
    }
    const b = (body !== null && typeof body === 'object' ? body : {}) as Record<string, unknown>;
    const account = accountOf(c);
    if (!readPair(ctx.db, c.req.param('id')))
      return c.json({ error: 'not found', detail: `There is no pair "${c.req.param('id')}".` }, 404);
    const asOfMs = readAssessmentRef(ctx.db, 'pair', c.req.param('id'), b.assessmentRef);
    if (asOfMs === null)
      return c.json(
        {
          error: 'bad request',
          detail:
            'assessmentRef: the reference this server returned with the assessment signed (GET /api/pairs/:id/assessment) is required.',
        },
        400,
      );
    // The sign-off and its audit-trail entry in one write transaction: both are stored or neither.
    const r = writeTransaction(ctx.db, () => {
      const out = signOffPairInDb(ctx.db, c.req.param('id'), {
        inputsHash: String(b.inputsHash ?? ''),
        asOfMs,
        // With accounts the signer is the account (token or session), never a name the body gives.
        signedBy: account
          ? `${account.user.displayName} [${account.user.username}]`
          : typeof b.signedBy === 'string'
            ? b.signedBy
            : '',
        call: b.call === undefined ? undefined : (String(b.call) as Call),
        comment: typeof b.comment === 'string' ? b.comment : null,
      });
      if (out?.ok)
        audit(
          c,
          ctx,
          'signoff',
          `pair ${c.req.param('id')}`,
          {
            dispositionId: out.id,
            call: out.record.call,
            proposedCall: out.record.proposedCall,
            inputsHash: out.record.inputsHash,
          },
          out.record.signedBy,
        );
      return out;
    });
    if (r === null)
      return c.json({ error: 'not found', detail: `There is no pair "${c.req.param('id')}".` }, 404);
    if (!r.ok)
      return c.json(
        {
          error: r.code === 'hash-changed' ? 'inputs changed' : 'bad request',
          detail: r.message,
          currentHash: r.currentHash ?? null,
          matchedAsOfMs: r.matchedAsOfMs ?? null,
          differences: r.differences ?? [],
        },
        r.code === 'hash-changed' ? 409 : 400,
      );
    return c.json({ id: r.id, record: r.record }, 201);
  });
}
