/**
 * Accounts, sessions and API tokens (migration 0030). Only hashes are stored: the password's scrypt
 * hash with its salt and parameters, the API token's SHA-256. The hashing itself is the caller's
 * (src/web/auth/passwords.ts); this module only reads and writes rows.
 */
import type { Db } from './db.ts';
import { writeTransaction } from './writer.ts';

export const ROLES = ['viewer', 'engineer', 'approver', 'admin'] as const;
export type Role = (typeof ROLES)[number];

export const TOKEN_SCOPES = ['read', 'import', 'signoff'] as const;
export type TokenScope = (typeof TOKEN_SCOPES)[number];

export interface User {
  id: number;
  username: string;
  displayName: string;
  role: Role;
  passwordHash: string;
  mustChangePassword: boolean;
  disabled: boolean;
  createdAtMs: number;
}

interface UserRow {
  id: number;
  username: string;
  display_name: string;
  role: Role;
  password_hash: string;
  must_change_password: number;
  disabled: number;
  created_at_ms: number;
}

function user(r: UserRow): User {
  return {
    id: r.id,
    username: r.username,
    displayName: r.display_name,
    role: r.role,
    passwordHash: r.password_hash,
    mustChangePassword: r.must_change_password === 1,
    disabled: r.disabled === 1,
    createdAtMs: r.created_at_ms,
  };
}

export function countUsers(db: Db): number {
  return (db.prepare('SELECT COUNT(*) AS n FROM users').get() as { n: number }).n;
}

export function listUsers(db: Db): User[] {
  return (db.prepare('SELECT * FROM users ORDER BY username').all() as UserRow[]).map(user);
}

export function findUserByName(db: Db, username: string): User | null {
  const r = db.prepare('SELECT * FROM users WHERE username = ?').get(username) as UserRow | undefined;
  return r ? user(r) : null;
}

export function findUserById(db: Db, id: number): User | null {
  const r = db.prepare('SELECT * FROM users WHERE id = ?').get(id) as UserRow | undefined;
  return r ? user(r) : null;
}

export function insertUser(
  db: Db,
  u: {
    username: string;
    displayName: string;
    role: Role;
    passwordHash: string;
    mustChangePassword: boolean;
    atMs: number;
  },
): number {
  return writeTransaction(db, () =>
    Number(
      db
        .prepare(
          `INSERT INTO users (username, display_name, role, password_hash, must_change_password, created_at_ms)
           VALUES (?, ?, ?, ?, ?, ?)`,
        )
        .run(
          u.username,
          u.displayName,
          u.role,
          u.passwordHash,
          u.mustChangePassword ? 1 : 0,
          Math.round(u.atMs),
        ).lastInsertRowid,
    ),
  );
}

/** Changes what is given; a disabled account, or a new password, ends the account's sessions. */
export function updateUser(
  db: Db,
  id: number,
  change: {
    role?: Role;
    disabled?: boolean;
    passwordHash?: string;
    mustChangePassword?: boolean;
    displayName?: string;
  },
): void {
  writeTransaction(db, () => {
    if (change.role !== undefined) db.prepare('UPDATE users SET role = ? WHERE id = ?').run(change.role, id);
    if (change.displayName !== undefined)
      db.prepare('UPDATE users SET display_name = ? WHERE id = ?').run(change.displayName, id);
    if (change.disabled !== undefined)
      db.prepare('UPDATE users SET disabled = ? WHERE id = ?').run(change.disabled ? 1 : 0, id);
    if (change.passwordHash !== undefined)
      db.prepare('UPDATE users SET password_hash = ? WHERE id = ?').run(change.passwordHash, id);
    if (change.mustChangePassword !== undefined)
      db.prepare('UPDATE users SET must_change_password = ? WHERE id = ?').run(
        change.mustChangePassword ? 1 : 0,
        id,
      );
    if (change.disabled === true || change.passwordHash !== undefined) {
      db.prepare('DELETE FROM sessions WHERE user_id = ?').run(id);
      if (change.disabled === true)
        db.prepare('UPDATE api_tokens SET revoked_at_ms = ? WHERE user_id = ? AND revoked_at_ms IS NULL').run(
          Date.now(),
          id,
        );
    }
  });
}

// ── sessions ────────────────────────────────────────────────────────────────────────────────────

export interface Session {
  id: string;
  userId: number;
  createdAtMs: number;
  expiresAtMs: number;
}

export function insertSession(db: Db, s: Session): void {
  writeTransaction(db, () => {
    // Expired sessions go whenever a new one is made.
    db.prepare('DELETE FROM sessions WHERE expires_at_ms <= ?').run(Math.round(s.createdAtMs));
    db.prepare('INSERT INTO sessions (id, user_id, created_at_ms, expires_at_ms) VALUES (?, ?, ?, ?)').run(
      s.id,
      s.userId,
      Math.round(s.createdAtMs),
      Math.round(s.expiresAtMs),
    );
  });
}

export function findSession(db: Db, id: string): Session | null {
  const r = db.prepare('SELECT * FROM sessions WHERE id = ?').get(id) as
    | { id: string; user_id: number; created_at_ms: number; expires_at_ms: number }
    | undefined;
  return r
    ? { id: r.id, userId: r.user_id, createdAtMs: r.created_at_ms, expiresAtMs: r.expires_at_ms }
    : null;
}

export function deleteSession(db: Db, id: string): void {
  writeTransaction(db, () => db.prepare('DELETE FROM sessions WHERE id = ?').run(id));
}

// ── API tokens ──────────────────────────────────────────────────────────────────────────────────

export interface ApiToken {
  id: number;
  userId: number;
  name: string;
  scope: TokenScope;
  createdAtMs: number;
  revokedAtMs: number | null;
  lastUsedAtMs: number | null;
}

interface TokenRow {
  id: number;
  user_id: number;
  name: string;
  scope: TokenScope;
  created_at_ms: number;
  revoked_at_ms: number | null;
  last_used_at_ms: number | null;
}

function token(r: TokenRow): ApiToken {
  return {
    id: r.id,
    userId: r.user_id,
    name: r.name,
    scope: r.scope,
    createdAtMs: r.created_at_ms,
    revokedAtMs: r.revoked_at_ms,
    lastUsedAtMs: r.last_used_at_ms,
  };
}

export function insertApiToken(
  db: Db,
  t: { userId: number; name: string; scope: TokenScope; sha256: string; atMs: number },
): number {
  return writeTransaction(db, () =>
    Number(
      db
        .prepare(
          'INSERT INTO api_tokens (user_id, name, scope, token_sha256, created_at_ms) VALUES (?, ?, ?, ?, ?)',
        )
        .run(t.userId, t.name, t.scope, t.sha256, Math.round(t.atMs)).lastInsertRowid,
    ),
  );
}

/** The live (not revoked) token with this hash. */
export function findApiToken(db: Db, sha256: string): ApiToken | null {
  const r = db
    .prepare('SELECT * FROM api_tokens WHERE token_sha256 = ? AND revoked_at_ms IS NULL')
    .get(sha256) as TokenRow | undefined;
  return r ? token(r) : null;
}

export function listApiTokens(db: Db, userId: number): ApiToken[] {
  return (
    db.prepare('SELECT * FROM api_tokens WHERE user_id = ? ORDER BY id DESC').all(userId) as TokenRow[]
  ).map(token);
}

/** Revokes a token of this user; false when there is no such live token. */
export function revokeApiToken(db: Db, userId: number, id: number, atMs: number): boolean {
  return writeTransaction(
    db,
    () =>
      db
        .prepare(
          'UPDATE api_tokens SET revoked_at_ms = ? WHERE id = ? AND user_id = ? AND revoked_at_ms IS NULL',
        )
        .run(Math.round(atMs), id, userId).changes === 1,
  );
}

export function touchApiToken(db: Db, id: number, atMs: number): void {
  // bookkeeping: a script polling with its token must not drop every kept page once a minute
  writeTransaction(
    db,
    () => db.prepare('UPDATE api_tokens SET last_used_at_ms = ? WHERE id = ?').run(Math.round(atMs), id),
    { bookkeeping: true },
  );
}
