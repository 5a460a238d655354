/**
 * The audit trail from the command line: the CLI acts with the data directory's file rights, not an
 * account, so its entries name the operating-system user (and the name given with --as or --by).
 */
import { userInfo } from 'node:os';
import { appendAudit } from '../store/audit.ts';
import type { Db } from '../store/db.ts';

function osUser(): string {
  try {
    return userInfo().username || 'unknown';
  } catch {
    return 'unknown';
  }
}

export function cliAudit(
  db: Db,
  action: string,
  subject: string | null,
  detail: Record<string, unknown> = {},
  name?: string,
): void {
  const who = osUser();
  appendAudit(db, {
    atMs: Date.now(),
    actor: name?.trim() ? `${name.trim()} (command line, ${who})` : `command line (${who})`,
    userId: null,
    via: 'cli',
    action,
    subject,
    detail,
  });
}
