/**
 * Writes the audit trail from a request: the account (or, in open mode, the name the person gave),
 * the way it came (session, token, open), the time, the action and what it concerned.
 */
import type { Context } from 'hono';
import { appendAudit } from '../../store/audit.ts';
import type { AppContext } from '../context.ts';
import { actorOf } from './session.ts';

/** The name under which a request's changes are recorded. */
export function actorName(c: Context, openName?: string): string {
  const a = actorOf(c);
  if (a.kind === 'user') return a.user.username;
  const n = openName?.trim();
  return n ? `${n} (open mode)` : 'open mode';
}

export function audit(
  c: Context,
  ctx: AppContext,
  action: string,
  subject: string | null,
  detail: Record<string, unknown> = {},
  openName?: string,
): void {
  auditor(c, ctx, openName)(action, subject, detail);
}

/** A recorder bound to the request's actor, for work that finishes after the answer (an import job). */
export function auditor(
  c: Context,
  ctx: AppContext,
  openName?: string,
): (action: string, subject: string | null, detail?: Record<string, unknown>) => void {
  const a = actorOf(c);
  const actor = actorName(c, openName);
  const userId = a.kind === 'user' ? a.user.id : null;
  const via = a.kind === 'user' ? a.via : 'open';
  return (action, subject, detail = {}) =>
    appendAudit(ctx.db, { atMs: Date.now(), actor, userId, via, action, subject, detail });
}
