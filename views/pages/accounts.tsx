/**
 * The account pages: sign-in, one's own account (password, API tokens), the administrators' list
 * of accounts, and the audit trail. Plain forms with the CSRF field; nothing needs script.
 */
import { fmtUtc } from '../partials/format.ts';

const ROLE_WORDS: Record<string, string> = {
  viewer: 'reads every page',
  engineer: 'also imports files',
  approver: 'also signs calls off and adopts parameter sets',
  admin: 'also manages accounts',
};
const SCOPE_WORDS: Record<string, string> = {
  read: 'read (pages and JSON API)',
  import: 'import (read, and import files)',
  signoff: 'signoff (read, import, sign calls off)',
};

function Csrf(props: { token: string }) {
  return <input type="hidden" name="_csrf" value={props.token} />;
}

export function LoginPage(props: {
  csrfToken: string;
  next: string;
  error?: string | null;
  username?: string;
}) {
  return (
    <section class="vc-login">
      <h1>Sign in</h1>
      {props.error ? (
        <p class="vc-error" role="alert">
          {props.error}
        </p>
      ) : null}
      <form class="vc-form" method="post" action="/login" hx-boost="false">
        <Csrf token={props.csrfToken} />
        <input type="hidden" name="next" value={props.next} />
        <label for="login-username">User name</label>
        <input
          id="login-username"
          name="username"
          required
          autocomplete="username"
          value={props.username ?? ''}
        />
        <label for="login-password">Password</label>
        <input id="login-password" name="password" type="password" required autocomplete="current-password" />
        <span />
        <div class="vc-form-actions">
          <button type="submit">Sign in</button>
        </div>
      </form>
      <p class="vc-small">
        Accounts are made by an administrator. The first administrator, <code>admin</code>, signs in with the
        one-time password the server printed at its first start (or the one set in VOIDCAST_ADMIN_PASSWORD).
      </p>
    </section>
  );
}

export interface TokenView {
  id: number;
  name: string;
  scope: string;
  createdAtMs: number;
  revokedAtMs: number | null;
  lastUsedAtMs: number | null;
}

export function AccountPage(props: {
  csrfToken: string;
  username: string;
  displayName: string;
  role: string;
  mustChange: boolean;
  tokens: TokenView[];
  scopes: string[];
  message?: string | null;
  error?: string | null;
  newToken?: string | null;
}) {
  return (
    <section class="vc-account">
      <h1>Your account</h1>
      <p>
        <strong>{props.displayName}</strong> (<code>{props.username}</code>), role{' '}
        <strong>{props.role}</strong>: {ROLE_WORDS[props.role] ?? ''}.
      </p>
      {props.mustChange ? (
        <p class="vc-note" role="status">
          Choose your own password before you go on: the one you signed in with was for one use.
        </p>
      ) : null}
      {props.message ? (
        <p class="vc-success" role="status">
          {props.message}
        </p>
      ) : null}
      {props.error ? (
        <p class="vc-error" role="alert">
          {props.error}
        </p>
      ) : null}
      {props.newToken ? (
        <div class="vc-note" role="status">
          <p>
            The new API token, shown only now (only its hash is kept): send it as{' '}
            <code>Authorization: Bearer …</code>
          </p>
          <p>
            <code class="vc-token">{props.newToken}</code>
          </p>
        </div>
      ) : null}
      <h2>Password</h2>
      <form class="vc-form" method="post" action="/account/password">
        <Csrf token={props.csrfToken} />
        <label for="pw-current">Current password</label>
        <input id="pw-current" name="current" type="password" required autocomplete="current-password" />
        <label for="pw-new">New password (12 characters or more)</label>
        <input
          id="pw-new"
          name="password"
          type="password"
          required
          minlength={12}
          autocomplete="new-password"
        />
        <label for="pw-repeat">New password again</label>
        <input
          id="pw-repeat"
          name="repeat"
          type="password"
          required
          minlength={12}
          autocomplete="new-password"
        />
        <span />
        <div class="vc-form-actions">
          <button type="submit">Change the password</button>
        </div>
      </form>
      <h2>API tokens</h2>
      <p class="vc-small">
        For scripts: a token acts for you with at most the role its scope allows, and can be revoked at any
        time.
      </p>
      {props.tokens.length ? (
        <table class="vc-table vc-table-compact vc-tokens">
          <thead>
            <tr>
              <th>Name</th>
              <th>Scope</th>
              <th>Made</th>
              <th>Last used</th>
              <th>State</th>
              <th />
            </tr>
          </thead>
          <tbody>
            {props.tokens.map((t) => (
              <tr data-token={String(t.id)}>
                <td>{t.name}</td>
                <td>{t.scope}</td>
                <td>{fmtUtc(t.createdAtMs)}</td>
                <td>{t.lastUsedAtMs === null ? '—' : fmtUtc(t.lastUsedAtMs)}</td>
                <td>{t.revokedAtMs === null ? 'live' : `revoked ${fmtUtc(t.revokedAtMs)}`}</td>
                <td>
                  {t.revokedAtMs === null ? (
                    <form method="post" action={`/account/tokens/${t.id}/revoke`}>
                      <Csrf token={props.csrfToken} />
                      <button type="submit">Revoke</button>
                    </form>
                  ) : null}
                </td>
              </tr>
            ))}
          </tbody>
        </table>
      ) : (
        <p class="vc-small">No tokens.</p>
      )}
      <form class="vc-form" method="post" action="/account/tokens">
        <Csrf token={props.csrfToken} />
        <label for="token-name">Name (what it is for)</label>
        <input id="token-name" name="name" required maxlength={80} />
        <label for="token-scope">Scope</label>
        <select id="token-scope" name="scope">
          {props.scopes.map((s) => (
            <option value={s}>{SCOPE_WORDS[s] ?? s}</option>
          ))}
        </select>
        <span />
        <div class="vc-form-actions">
          <button type="submit">Make a token</button>
        </div>
      </form>
    </section>
  );
}

export interface UserView {
  id: number;
  username: string;
  displayName: string;
  role: string;
  disabled: boolean;
  mustChangePassword: boolean;
  createdAtMs: number;
}

export function UsersPage(props: {
  csrfToken: string;
  users: UserView[];
  roles: readonly string[];
  selfId: number;
  message?: string | null;
  error?: string | null;
  oneTime?: { username: string; password: string } | null;
}) {
  return (
    <section class="vc-users">
      <h1>Accounts</h1>
      {props.message ? (
        <p class="vc-success" role="status">
          {props.message}
        </p>
      ) : null}
      {props.error ? (
        <p class="vc-error" role="alert">
          {props.error}
        </p>
      ) : null}
      {props.oneTime ? (
        <div class="vc-note" role="status">
          <p>
            One-time password for <code>{props.oneTime.username}</code>, shown only now: hand it over in
            person. It must be changed at the first sign-in.
          </p>
          <p>
            <code class="vc-token">{props.oneTime.password}</code>
          </p>
        </div>
      ) : null}
      <table class="vc-table vc-table-compact">
        <thead>
          <tr>
            <th>User name</th>
            <th>Name</th>
            <th>Role</th>
            <th>State</th>
            <th>Made</th>
            <th />
          </tr>
        </thead>
        <tbody>
          {props.users.map((u) => (
            <tr data-user={u.username}>
              <td>
                <code>{u.username}</code>
              </td>
              <td>{u.displayName}</td>
              <td>
                <form method="post" action={`/admin/users/${u.id}/role`} class="vc-inline-form">
                  <Csrf token={props.csrfToken} />
                  <select name="role" aria-label={`Role of ${u.username}`} disabled={u.id === props.selfId}>
                    {props.roles.map((r) => (
                      <option value={r} selected={r === u.role}>
                        {r}
                      </option>
                    ))}
                  </select>
                  {u.id === props.selfId ? null : <button type="submit">Set</button>}
                </form>
              </td>
              <td>
                {u.disabled ? 'disabled' : u.mustChangePassword ? 'active (password to change)' : 'active'}
              </td>
              <td>{fmtUtc(u.createdAtMs)}</td>
              <td>
                {u.id === props.selfId ? (
                  <span class="vc-small">you</span>
                ) : (
                  <>
                    <form
                      method="post"
                      action={`/admin/users/${u.id}/${u.disabled ? 'enable' : 'disable'}`}
                      class="vc-inline-form"
                    >
                      <Csrf token={props.csrfToken} />
                      <button type="submit">{u.disabled ? 'Enable' : 'Disable'}</button>
                    </form>{' '}
                    <form method="post" action={`/admin/users/${u.id}/reset`} class="vc-inline-form">
                      <Csrf token={props.csrfToken} />
                      <button type="submit">New one-time password</button>
                    </form>
                  </>
                )}
              </td>
            </tr>
          ))}
        </tbody>
      </table>
      <h2>New account</h2>
      <form class="vc-form" method="post" action="/admin/users">
        <Csrf token={props.csrfToken} />
        <label for="user-name">User name</label>
        <input id="user-name" name="username" required maxlength={40} pattern="[A-Za-z0-9._-]+" />
        <label for="user-display">Name as shown</label>
        <input id="user-display" name="displayName" required maxlength={120} />
        <label for="user-role">Role</label>
        <select id="user-role" name="role">
          {props.roles.map((r) => (
            <option value={r}>
              {r} — {ROLE_WORDS[r] ?? ''}
            </option>
          ))}
        </select>
        <span />
        <div class="vc-form-actions">
          <button type="submit">Make the account</button>
          <span class="vc-small">It gets a one-time password, shown once.</span>
        </div>
      </form>
    </section>
  );
}

export interface AuditView {
  id: number;
  atMs: number;
  actor: string;
  via: string;
  action: string;
  subject: string | null;
  detail: Record<string, unknown>;
}

export function AuditPage(props: { entries: AuditView[]; olderHref: string | null }) {
  return (
    <section class="vc-audit">
      <h1>Audit trail</h1>
      <p class="vc-lede">
        Every change of state — sign-offs, parameter sets adopted or retired, imports, accounts and tokens —
        with who made it and when. Entries are only ever added: the database refuses to change or remove one.
      </p>
      {props.entries.length ? (
        <table class="vc-table vc-table-compact">
          <thead>
            <tr>
              <th class="num">#</th>
              <th>When (UTC)</th>
              <th>Who</th>
              <th>How</th>
              <th>What</th>
              <th>On</th>
              <th>Details</th>
            </tr>
          </thead>
          <tbody>
            {props.entries.map((e) => (
              <tr data-action={e.action}>
                <td class="num">{e.id}</td>
                <td>{fmtUtc(e.atMs)}</td>
                <td>{e.actor}</td>
                <td>{e.via}</td>
                <td>{e.action}</td>
                <td>{e.subject ?? '—'}</td>
                <td>
                  <code class="vc-small">{JSON.stringify(e.detail)}</code>
                </td>
              </tr>
            ))}
          </tbody>
        </table>
      ) : (
        <p class="vc-small">Nothing recorded yet.</p>
      )}
      {props.olderHref ? (
        <p>
          <a href={props.olderHref}>Older entries</a>
        </p>
      ) : null}
    </section>
  );
}
