/**
 * Parameters: the list of parameter sets (/parameters), one set beside the typed values it replaces
 * (/parameters/:id), adopting a set (POST /parameters/:id/adopt) and going back to the typed values
 * (POST /parameters/revert). Thin: the engine checks, stores and applies (src/engine/parameter-sets.ts).
 *
 * Both actions are forms with a name and the CSRF field that work without script (303 to the page
 * that shows the result); htmx boosts them. A refusal (no name) redraws the page with the reason:
 * 422 to a plain form, 200 to htmx (which swaps only successful answers).
 */
import type { Context, Hono } from 'hono';
import { ParameterSetPage, ParametersPage } from '../../../views/pages/parameters.tsx';
import { typedCounterparts } from '../../engine/loader.ts';
import { EngineInputError } from '../../engine/pair.ts';
import { parameterEntries } from '../../engine/parameter-entries.ts';
import {
  adoptParameterSetInDb,
  readParameterSet,
  readParameterSets,
  revertToTypedValuesInDb,
} from '../../engine/parameter-sets.ts';
import { audit } from '../auth/audit.ts';
import { accountOf } from '../auth/session.ts';
import type { AppContext } from '../context.ts';
import { csrfToken } from '../csrf.ts';
import { renderPage } from '../render.ts';
import { notFound } from './lots.tsx';

function token(c: Context): string {
  try {
    return csrfToken(c);
  } catch {
    return '';
  }
}

/** A set id from the path: a whole number ≥ 1, else null. */
function idOf(raw: string): number | null {
  return /^\d{1,12}$/.test(raw) && Number(raw) >= 1 ? Number(raw) : null;
}

function refusedStatus(c: Context): 200 | 422 {
  return c.req.header('HX-Request') === 'true' ? 200 : 422;
}

/** Who acts: the signed-in account, else (open mode) the name typed in the form. */
async function nameOf(c: Context): Promise<string> {
  const account = accountOf(c);
  if (account) return account.user.username;
  const body = await c.req.parseBody();
  return typeof body.name === 'string' ? body.name.trim().slice(0, 120) : '';
}

function listPage(
  c: Context,
  ctx: AppContext,
  extra: { error?: string; name?: string } = {},
  status: 200 | 422 = 200,
) {
  return renderPage(
    c,
    ctx,
    {
      title: 'Parameters',
      active: '/parameters',
      body: ParametersPage({ sets: readParameterSets(ctx.db), csrfToken: token(c), ...extra }),
    },
    status,
  );
}

function setPage(
  c: Context,
  ctx: AppContext,
  id: number,
  extra: { error?: string; name?: string } = {},
  status: 200 | 422 = 200,
): Response {
  const set = readParameterSet(ctx.db, id);
  if (!set) return notFound(c, ctx, `There is no parameter set ${id}.`);
  const sets = readParameterSets(ctx.db);
  return renderPage(
    c,
    ctx,
    {
      title: `Parameter set ${set.version}`,
      active: '/parameters',
      body: ParameterSetPage({
        set,
        entries: parameterEntries(set.values, typedCounterparts(ctx.db, set.values)),
        adopted: sets.find((s) => s.state === 'adopted') ?? null,
        csrfToken: token(c),
        ...extra,
      }),
    },
    status,
  );
}

function badId(c: Context, ctx: AppContext, raw: string): Response {
  return renderPage(
    c,
    ctx,
    {
      title: 'Bad request',
      active: '/parameters',
      body: ParametersPage({
        sets: readParameterSets(ctx.db),
        csrfToken: token(c),
        error: `"${raw}" is not a parameter set id (a whole number ≥ 1).`,
      }),
    },
    400,
  );
}

export function register(app: Hono, ctx: AppContext): void {
  app.get('/parameters', (c) => listPage(c, ctx));

  app.get('/parameters/:id', (c) => {
    const raw = c.req.param('id');
    const id = idOf(raw);
    if (id === null) return badId(c, ctx, raw);
    return setPage(c, ctx, id);
  });

  app.post('/parameters/:id/adopt', async (c) => {
    const raw = c.req.param('id');
    const id = idOf(raw);
    if (id === null) return badId(c, ctx, raw);
    const name = await nameOf(c);
    if (!name)
      return setPage(
        c,
        ctx,
        id,
        { error: 'Your name: the name of the person adopting the set is required.' },
        refusedStatus(c),
      );
    // An approver does not adopt what they proposed (under their username or display name): a
    // second person looks at every set; adoptParameterSetInDb refuses it.
    const account = accountOf(c);
    const names = account ? [account.user.username, account.user.displayName] : [];
    try {
      const r = adoptParameterSetInDb(ctx.db, id, name, Date.now(), names);
      if (!r) return notFound(c, ctx, `There is no parameter set ${id}.`);
      audit(c, ctx, 'parameters.adopt', `parameter set ${id}`, { setId: id }, name);
    } catch (e) {
      if (!(e instanceof EngineInputError)) throw e;
      return setPage(c, ctx, id, { error: e.message, name }, refusedStatus(c));
    }
    return c.redirect(`/parameters/${id}`, 303);
  });

  app.post('/parameters/revert', async (c) => {
    const name = await nameOf(c);
    if (!name)
      return listPage(
        c,
        ctx,
        { error: 'Your name: the name of the person going back to the typed values is required.' },
        refusedStatus(c),
      );
    revertToTypedValuesInDb(ctx.db, name);
    audit(c, ctx, 'parameters.revert', 'typed values', {}, name);
    return c.redirect('/parameters', 303);
  });
}
