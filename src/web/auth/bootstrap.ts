/**
 * First start with accounts: when no account exists, one administrator `admin` is made — with the
 * password in VOIDCAST_ADMIN_PASSWORD when it is set (at least 12 characters), else with a one-time
 * password that the server prints once and that must be changed at the first sign-in.
 */
import { countUsers, insertUser } from '../../store/accounts.ts';
import { appendAudit } from '../../store/audit.ts';
import type { Db } from '../../store/db.ts';
import { hashPassword, oneTimePassword, passwordProblem } from './passwords.ts';

export const FIRST_ADMIN = 'admin';

export async function ensureFirstAdmin(
  db: Db,
  envPassword: string | undefined,
): Promise<{ created: false } | { created: true; username: string; oneTimePassword: string | null }> {
  if (countUsers(db) > 0) return { created: false };
  const given = envPassword !== undefined && envPassword !== '' ? envPassword : null;
  if (given !== null) {
    const problem = passwordProblem(given, FIRST_ADMIN);
    if (problem) throw new Error(`VOIDCAST_ADMIN_PASSWORD: ${problem}`);
  }
  const password = given ?? oneTimePassword();
  const now = Date.now();
  const id = insertUser(db, {
    username: FIRST_ADMIN,
    displayName: 'Administrator',
    role: 'admin',
    passwordHash: await hashPassword(password),
    mustChangePassword: given === null,
    atMs: now,
  });
  appendAudit(db, {
    atMs: now,
    actor: 'voidcast',
    userId: null,
    via: 'system',
    action: 'user.create',
    subject: FIRST_ADMIN,
    detail: {
      role: 'admin',
      userId: id,
      password: given === null ? 'one-time, printed once' : 'from VOIDCAST_ADMIN_PASSWORD',
    },
  });
  return { created: true, username: FIRST_ADMIN, oneTimePassword: given === null ? password : null };
}
