/**
 * The audit trail: every state change with who and when (migration 0030). Append-only — triggers
 * refuse any UPDATE or DELETE of a row, so an entry, once written, stays as written.
 */
import type { Db } from './db.ts';
import { writeTransaction } from './writer.ts';

export type AuditVia = 'session' | 'token' | 'open' | 'cli' | 'system';

export interface AuditEntry {
  id: number;
  atMs: number;
  actor: string;
  userId: number | null;
  via: AuditVia;
  action: string;
  subject: string | null;
  detail: Record<string, unknown>;
}

export interface NewAuditEntry {
  atMs: number;
  actor: string;
  userId: number | null;
  via: AuditVia;
  action: string;
  subject?: string | null;
  detail?: Record<string, unknown>;
}

export function appendAudit(db: Db, e: NewAuditEntry): number {
  return writeTransaction(db, () =>
    Number(
      db
        .prepare(
          'INSERT INTO audit_log (at_ms, actor, user_id, via, action, subject, detail_json) VALUES (?, ?, ?, ?, ?, ?, ?)',
        )
        .run(
          Math.round(e.atMs),
          e.actor,
          e.userId,
          e.via,
          e.action,
          e.subject ?? null,
          JSON.stringify(e.detail ?? {}),
        ).lastInsertRowid,
    ),
  );
}

/** The newest entries first, `limit` of them, before the entry id `before` when given. */
export function readAudit(db: Db, opts: { limit?: number; before?: number } = {}): AuditEntry[] {
  const limit = Math.max(1, Math.min(1000, opts.limit ?? 200));
  const rows = (
    opts.before !== undefined
      ? db.prepare('SELECT * FROM audit_log WHERE id < ? ORDER BY id DESC LIMIT ?').all(opts.before, limit)
      : db.prepare('SELECT * FROM audit_log ORDER BY id DESC LIMIT ?').all(limit)
  ) as {
    id: number;
    at_ms: number;
    actor: string;
    user_id: number | null;
    via: AuditVia;
    action: string;
    subject: string | null;
    detail_json: string;
  }[];
  return rows.map((r) => ({
    id: r.id,
    atMs: r.at_ms,
    actor: r.actor,
    userId: r.user_id,
    via: r.via,
    action: r.action,
    subject: r.subject,
    detail: JSON.parse(r.detail_json) as Record<string, unknown>,
  }));
}
