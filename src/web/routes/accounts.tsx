/**
 * Sign-in and sign-out, one's own account (password, API tokens), the administrators' accounts page
 * and the audit trail. With accounts off (open mode) the account pages say so; the audit trail is
 * there in both modes.
 */
import type { Context, Hono } from 'hono';
import { AccountPage, AuditPage, LoginPage, UsersPage } from '../../../views/pages/accounts.tsx';
import { MessagePage } from '../../../views/pages/message.tsx';
import {
  findUserById,
  findUserByName,
  insertApiToken,
  insertUser,
  listApiTokens,
  listUsers,
  ROLES,
  type Role,
  revokeApiToken,
  TOKEN_SCOPES,
  type TokenScope,
  updateUser,
} from '../../store/accounts.ts';
import { readAudit } from '../../store/audit.ts';
import { audit } from '../auth/audit.ts';
import {
  dummyHash,
  hashPassword,
  newApiToken,
  oneTimePassword,
  passwordProblem,
  verifyPassword,
} from '../auth/passwords.ts';
import { atLeast, SCOPE_ROLE } from '../auth/permissions.ts';
import { accountOf, accountsOn, endSession, startSession } from '../auth/session.ts';
import { LoginThrottle } from '../auth/throttle.ts';
import type { AppContext } from '../context.ts';
import { csrfToken } from '../csrf.ts';
import { renderPage } from '../render.ts';

type Status = 200 | 400 | 404 | 409 | 422;

function str(body: Record<string, unknown>, k: string): string {
  return typeof body[k] === 'string' ? (body[k] as string) : '';
}

/** A same-site path to go back to after signing in (never another site). */
function safeNext(v: string): string {
  return /^\/(?!\/)[^\s\\]*$/.test(v) && !v.startsWith('/login') ? v : '/';
}

function address(c: Context): string {
  const env = c.env as { incoming?: { socket?: { remoteAddress?: string } } } | undefined;
  return env?.incoming?.socket?.remoteAddress ?? 'local';
}

function openModePage(c: Context, ctx: AppContext): Response {
  return renderPage(c, ctx, {
    title: 'Accounts',
    body: MessagePage({
      heading: 'Accounts are off',
      detail:
        'This server runs in open mode (this machine only): nobody signs in. Start it without --open to use accounts.',
    }),
  });
}

export function register(app: Hono, ctx: AppContext): void {
  const throttle = new LoginThrottle();

  const loginPage = (
    c: Context,
    opts: { error?: string; username?: string; next?: string } = {},
    status = 200,
  ) =>
    renderPage(
      c,
      ctx,
      {
        title: 'Sign in',
        body: LoginPage({
          csrfToken: csrfToken(c),
          next: safeNext(opts.next ?? c.req.query('next') ?? '/'),
          error: opts.error,
          username: opts.username,
        }),
      },
      status as Status,
    );

  app.get('/login', (c) => {
    if (!accountsOn(ctx)) return c.redirect('/', 303);
    if (accountOf(c)) return c.redirect(safeNext(c.req.query('next') ?? '/'), 303);
    return loginPage(c);
  });

  app.post('/login', async (c) => {
    if (!accountsOn(ctx)) return c.redirect('/', 303);
    const body = await c.req.parseBody();
    const username = str(body, 'username').trim().slice(0, 100);
    const password = str(body, 'password');
    const next = safeNext(str(body, 'next'));
    const wait = throttle.waitMs(username, address(c));
    if (wait > 0) {
      const minutes = Math.ceil(wait / 60_000);
      const page = loginPage(c, {
        error: `Too many failed sign-ins. Try again in ${minutes} minute${minutes === 1 ? '' : 's'}.`,
        username,
        next,
      });
      return new Response(page.body, { status: 429, headers: page.headers });
    }
    const user = username ? findUserByName(ctx.db, username) : null;
    // The same work whether or not the user exists (no telling which names are accounts).
    const ok = await verifyPassword(password, user?.passwordHash ?? (await dummyHash()));
    if (!user || !ok || user.disabled) {
      throttle.fail(username, address(c));
      ctx.log(`SIGN-IN REFUSED for ${JSON.stringify(username)} from ${address(c)}`);
      return loginPage(
        c,
        { error: 'The user name or the password is wrong, or the account is disabled.', username, next },
        422,
      );
    }
    throttle.succeed(username);
    await startSession(c, ctx, user);
    return c.redirect(user.mustChangePassword ? '/account?first=1' : next, 303);
  });

  app.post('/logout', (c) => {
    if (accountsOn(ctx)) endSession(c, ctx);
    return c.redirect(accountsOn(ctx) ? '/login' : '/', 303);
  });

  // ── own account ──────────────────────────────────────────────────────────────────────────────

  const accountPage = (
    c: Context,
    extra: { message?: string; error?: string; newToken?: string } = {},
    status: Status = 200,
  ) => {
    const a = accountOf(c)!;
    const user = findUserById(ctx.db, a.user.id)!;
    return renderPage(
      c,
      ctx,
      {
        title: 'Your account',
        body: AccountPage({
          csrfToken: csrfToken(c),
          username: user.username,
          displayName: user.displayName,
          role: user.role,
          mustChange: user.mustChangePassword,
          tokens: listApiTokens(ctx.db, user.id),
          scopes: TOKEN_SCOPES.filter((s) => atLeast(user.role, SCOPE_ROLE[s])),
          ...extra,
        }),
      },
      status,
    );
  };

  app.get('/account', (c) => {
    if (!accountOf(c)) return openModePage(c, ctx);
    const q = c.req.query();
    return accountPage(c, {
      message: q.changed ? 'Your password is changed.' : q.revoked ? 'The token is revoked.' : undefined,
    });
  });

  app.post('/account/password', async (c) => {
    const a = accountOf(c);
    if (!a) return openModePage(c, ctx);
    const body = await c.req.parseBody();
    const user = findUserById(ctx.db, a.user.id)!;
    if (!(await verifyPassword(str(body, 'current'), user.passwordHash)))
      return accountPage(c, { error: 'The current password is wrong.' }, 422);
    const pw = str(body, 'password');
    if (pw !== str(body, 'repeat')) return accountPage(c, { error: 'The two new passwords differ.' }, 422);
    const problem = passwordProblem(pw, user.username);
    if (problem) return accountPage(c, { error: problem }, 422);
    if (await verifyPassword(pw, user.passwordHash))
      return accountPage(c, { error: 'The new password must differ from the current one.' }, 422);
    // A new password ends every session of the account; this one starts afresh.
    updateUser(ctx.db, user.id, { passwordHash: await hashPassword(pw), mustChangePassword: false });
    audit(c, ctx, 'user.password', user.username, { by: 'self' });
    await startSession(c, ctx, findUserById(ctx.db, user.id)!);
    return c.redirect('/account?changed=1', 303);
  });

  app.post('/account/tokens', async (c) => {
    const a = accountOf(c);
    if (!a) return openModePage(c, ctx);
    const body = await c.req.parseBody();
    const name = str(body, 'name').trim();
    const scope = str(body, 'scope') as TokenScope;
    if (!name || name.length > 80)
      return accountPage(c, { error: 'Name: 1 to 80 characters saying what the token is for.' }, 422);
    if (!TOKEN_SCOPES.includes(scope) || !atLeast(a.user.role, SCOPE_ROLE[scope]))
      return accountPage(
        c,
        {
          error: `Scope: one of ${TOKEN_SCOPES.filter((s) => atLeast(a.user.role, SCOPE_ROLE[s])).join(', ')}.`,
        },
        422,
      );
    const t = newApiToken();
    const id = insertApiToken(ctx.db, { userId: a.user.id, name, scope, sha256: t.sha256, atMs: Date.now() });
    audit(c, ctx, 'token.create', a.user.username, { tokenId: id, name, scope });
    // Shown once, on this answer only (not a redirect: the token must not land in a URL or history).
    return accountPage(c, { newToken: t.token, message: `Token "${name}" made.` });
  });

  app.post('/account/tokens/:id/revoke', (c) => {
    const a = accountOf(c);
    if (!a) return openModePage(c, ctx);
    const id = Number(c.req.param('id'));
    if (!Number.isSafeInteger(id) || !revokeApiToken(ctx.db, a.user.id, id, Date.now()))
      return accountPage(c, { error: 'There is no live token of yours with that number.' }, 404);
    audit(c, ctx, 'token.revoke', a.user.username, { tokenId: id });
    return c.redirect('/account?revoked=1', 303);
  });

  // ── accounts (admin) ─────────────────────────────────────────────────────────────────────────

  const usersPage = (
    c: Context,
    extra: { message?: string; error?: string; oneTime?: { username: string; password: string } } = {},
    status: Status = 200,
  ) =>
    renderPage(
      c,
      ctx,
      {
        title: 'Accounts',
        active: '/admin/users',
        body: UsersPage({
          csrfToken: csrfToken(c),
          users: listUsers(ctx.db),
          roles: ROLES,
          selfId: accountOf(c)?.user.id ?? 0,
          ...extra,
        }),
      },
      status,
    );

  app.get('/admin/users', (c) => (accountOf(c) ? usersPage(c) : openModePage(c, ctx)));

  app.post('/admin/users', async (c) => {
    if (!accountOf(c)) return openModePage(c, ctx);
    const body = await c.req.parseBody();
    const username = str(body, 'username').trim();
    const displayName = str(body, 'displayName').trim();
    const role = str(body, 'role') as Role;
    if (!/^[A-Za-z0-9._-]{1,40}$/.test(username))
      return usersPage(c, { error: 'User name: 1 to 40 letters, digits, dots, dashes or underscores.' }, 422);
    if (!displayName || displayName.length > 120)
      return usersPage(c, { error: 'Name as shown: 1 to 120 characters.' }, 422);
    if (!ROLES.includes(role)) return usersPage(c, { error: `Role: one of ${ROLES.join(', ')}.` }, 422);
    if (findUserByName(ctx.db, username))
      return usersPage(c, { error: `There is an account "${username}" already.` }, 409);
    const password = oneTimePassword();
    const id = insertUser(ctx.db, {
      username,
      displayName,
      role,
      passwordHash: await hashPassword(password),
      mustChangePassword: true,
      atMs: Date.now(),
    });
    audit(c, ctx, 'user.create', username, { userId: id, role, displayName });
    return usersPage(c, { message: `Account "${username}" made.`, oneTime: { username, password } });
  });

  const target = (c: Context) => {
    const id = Number(c.req.param('id'));
    const u = Number.isSafeInteger(id) ? findUserById(ctx.db, id) : null;
    return u;
  };

  app.post('/admin/users/:id/role', async (c) => {
    const a = accountOf(c);
    if (!a) return openModePage(c, ctx);
    const u = target(c);
    if (!u) return usersPage(c, { error: 'There is no such account.' }, 404);
    if (u.id === a.user.id)
      return usersPage(c, { error: 'Your own role is changed by another administrator.' }, 422);
    const role = str(await c.req.parseBody(), 'role') as Role;
    if (!ROLES.includes(role)) return usersPage(c, { error: `Role: one of ${ROLES.join(', ')}.` }, 422);
    updateUser(ctx.db, u.id, { role });
    audit(c, ctx, 'user.role', u.username, { from: u.role, to: role });
    return c.redirect('/admin/users', 303);
  });

  for (const [action, disabled] of [
    ['disable', true],
    ['enable', false],
  ] as const)
    app.post(`/admin/users/:id/${action}`, (c) => {
      const a = accountOf(c);
      if (!a) return openModePage(c, ctx);
      const u = target(c);
      if (!u) return usersPage(c, { error: 'There is no such account.' }, 404);
      if (u.id === a.user.id) return usersPage(c, { error: 'You cannot disable your own account.' }, 422);
      updateUser(ctx.db, u.id, { disabled });
      audit(c, ctx, `user.${action}`, u.username, {});
      return c.redirect('/admin/users', 303);
    });

  app.post('/admin/users/:id/reset', async (c) => {
    const a = accountOf(c);
    if (!a) return openModePage(c, ctx);
    const u = target(c);
    if (!u) return usersPage(c, { error: 'There is no such account.' }, 404);
    if (u.id === a.user.id)
      return usersPage(c, { error: 'Change your own password on your account page.' }, 422);
    const password = oneTimePassword();
    updateUser(ctx.db, u.id, { passwordHash: await hashPassword(password), mustChangePassword: true });
    audit(c, ctx, 'user.password', u.username, { by: 'administrator', oneTime: true });
    return usersPage(c, {
      message: `New one-time password for "${u.username}".`,
      oneTime: { username: u.username, password },
    });
  });

  // ── audit trail ──────────────────────────────────────────────────────────────────────────────

  app.get('/audit', (c) => {
    const raw = c.req.query('before');
    const before = raw !== undefined && /^\d{1,15}$/.test(raw) ? Number(raw) : undefined;
    if (raw !== undefined && before === undefined)
      return renderPage(
        c,
        ctx,
        {
          title: 'Audit trail',
          body: MessagePage({
            code: '400',
            heading: 'Bad request',
            detail: `"before" must be an entry number, got "${raw.slice(0, 40)}".`,
          }),
        },
        400,
      );
    const entries = readAudit(ctx.db, { limit: 200, before });
    const last = entries.at(-1);
    return renderPage(c, ctx, {
      title: 'Audit trail',
      active: '/audit',
      body: AuditPage({
        entries,
        olderHref: entries.length === 200 && last ? `/audit?before=${last.id}` : null,
      }),
    });
  });
}
