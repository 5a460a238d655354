/**
 * Who may do what. Roles are ordered — viewer < engineer < approver < admin — and each includes the
 * ones before it:
 *
 *   viewer    reads every page and the JSON API
 *   engineer  + imports files, saves what-if scenarios, proposes parameter sets and acknowledges
 *               excursions
 *   approver  + signs calls off, adopts parameter sets and goes back to the typed values, derives
 *               an area's alert and action levels
 *   admin     + manages accounts
 *
 * An API token acts for its account with at most the role of its scope (read → viewer,
 * import → engineer, signoff → approver), and never on account pages.
 *
 * A state-changing route not listed here needs admin, so that a new route is closed until its author
 * says who may use it: add it to RULES.
 */
import type { Role, TokenScope } from '../../store/accounts.ts';

export const ROLE_RANK: Record<Role, number> = { viewer: 0, engineer: 1, approver: 2, admin: 3 };
export const SCOPE_ROLE: Record<TokenScope, Role> = {
  read: 'viewer',
  import: 'engineer',
  signoff: 'approver',
};

export function atLeast(role: Role, needed: Role): boolean {
  return ROLE_RANK[role] >= ROLE_RANK[needed];
}

export function lowerOf(a: Role, b: Role): Role {
  return ROLE_RANK[a] <= ROLE_RANK[b] ? a : b;
}

/** Paths anyone may use, signed in or not. */
export function isPublic(method: string, path: string): boolean {
  if (path.startsWith('/assets/') || path === '/healthz') return true;
  return path === '/login' && (method === 'GET' || method === 'HEAD' || method === 'POST');
}

/** Rules for state-changing requests: the first match decides. */
export const RULES: { method: string; path: RegExp; role: Role; what: string }[] = [
  { method: 'POST', path: /^\/imports$/, role: 'engineer', what: 'import files' },
  { method: 'POST', path: /^\/api\/feed\/counter-samples$/, role: 'engineer', what: 'push counter samples' },
  { method: 'POST', path: /^\/pairs\/[^/]+\/signoff$/, role: 'approver', what: 'sign a call off' },
  { method: 'POST', path: /^\/api\/pairs\/[^/]+\/signoff$/, role: 'approver', what: 'sign a call off' },
  {
    method: 'POST',
    path: /^\/(calibration|tools)\/propose$/,
    role: 'engineer',
    what: 'propose a parameter set',
  },
  { method: 'POST', path: /^\/parameters\/[^/]+\/adopt$/, role: 'approver', what: 'adopt a parameter set' },
  { method: 'POST', path: /^\/parameters\/revert$/, role: 'approver', what: 'go back to the typed values' },
  { method: 'POST', path: /^\/whatif\/scenarios$/, role: 'engineer', what: 'save a what-if scenario' },
  {
    method: 'POST',
    path: /^\/areas\/[^/]+\/audit\/levels$/,
    role: 'approver',
    what: 'derive and store alert and action levels',
  },
  {
    method: 'POST',
    path: /^\/areas\/[^/]+\/audit\/acknowledge$/,
    role: 'engineer',
    what: 'acknowledge an excursion',
  },
  { method: 'POST', path: /^\/logout$/, role: 'viewer', what: 'sign out' },
  { method: 'POST', path: /^\/account(\/|$)/, role: 'viewer', what: 'change your own account' },
  { method: '*', path: /^\/admin(\/|$)/, role: 'admin', what: 'manage accounts' },
];

const SAFE = new Set(['GET', 'HEAD', 'OPTIONS']);

/** The role a request needs, and what it does in words (for a refusal). */
export function requiredRole(method: string, path: string): { role: Role; what: string } {
  for (const r of RULES)
    if ((r.method === '*' || r.method === method) && r.path.test(path)) return { role: r.role, what: r.what };
  if (SAFE.has(method)) return { role: 'viewer', what: 'read this page' };
  return { role: 'admin', what: 'make this change' };
}
