/**
 * The key that signs session cookies, kept in the data directory (`session.key`, readable by the
 * owner only), created on first start. Deleting it ends every session.
 */
import { randomBytes } from 'node:crypto';
import { chmodSync, readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';

export const SESSION_KEY_FILE = 'session.key';

export function sessionSecret(dataDir: string): string {
  const file = join(dataDir, SESSION_KEY_FILE);
  try {
    const existing = readFileSync(file, 'utf8').trim();
    if (existing.length >= 43) return existing;
  } catch {
    // absent: made below
  }
  const fresh = randomBytes(32).toString('base64url');
  try {
    writeFileSync(file, `${fresh}\n`, { mode: 0o600, flag: 'wx' });
  } catch {
    // Another process made it first: use theirs.
    return readFileSync(file, 'utf8').trim();
  }
  chmodSync(file, 0o600);
  return fresh;
}
