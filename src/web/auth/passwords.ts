/**
 * Password hashing with scrypt (RFC 7914) from node:crypto, and API tokens.
 *
 * A stored hash is `scrypt$N$r$p$<salt>$<hash>` (salt and hash in base64url): every hash carries
 * its own 16-byte random salt and the parameters it was made with, so the parameters can be raised
 * later without invalidating stored hashes. N = 2^15, r = 8, p = 1 (the OWASP Password Storage Cheat
 * Sheet's minimum for scrypt is N = 2^17 with r = 8, p = 1 at 128 MiB; 2^15 keeps a login near 50 ms
 * and 32 MiB on the small machines voidcast runs on — a choice of ours, recorded with each hash).
 * Comparison is constant-time (timingSafeEqual).
 *
 * API tokens are 32 random bytes (`vct_` + base64url); only their SHA-256 is stored, so a copy of
 * the database does not give anyone a usable token.
 */
import { createHash, randomBytes, scrypt as scryptCb, timingSafeEqual } from 'node:crypto';

export const SCRYPT = { N: 2 ** 15, r: 8, p: 1, keyLength: 32, saltLength: 16 } as const;
export const MIN_PASSWORD_LENGTH = 12;
export const MAX_PASSWORD_LENGTH = 1024;

function scrypt(
  password: string,
  salt: Buffer,
  N: number,
  r: number,
  p: number,
  len: number,
): Promise<Buffer> {
  return new Promise((resolve, reject) =>
    scryptCb(
      password.normalize('NFC'),
      salt,
      len,
      { N, r, p, maxmem: 256 * N * r + 1024 * 1024 },
      (e, key) => (e ? reject(e) : resolve(key)),
    ),
  );
}

/** The stored form of a password. */
export async function hashPassword(password: string): Promise<string> {
  const salt = randomBytes(SCRYPT.saltLength);
  const key = await scrypt(password, salt, SCRYPT.N, SCRYPT.r, SCRYPT.p, SCRYPT.keyLength);
  return `scrypt$${SCRYPT.N}$${SCRYPT.r}$${SCRYPT.p}$${salt.toString('base64url')}$${key.toString('base64url')}`;
}

/** True when `password` matches the stored hash; false for a wrong password or a malformed hash. */
export async function verifyPassword(password: string, stored: string): Promise<boolean> {
  const m = /^scrypt\$(\d+)\$(\d+)\$(\d+)\$([A-Za-z0-9_-]+)\$([A-Za-z0-9_-]+)$/.exec(stored);
  if (!m || password.length > MAX_PASSWORD_LENGTH) return false;
  const [N, r, p] = [Number(m[1]), Number(m[2]), Number(m[3])];
  // Parameters within what this build would make (a tampered row must not cost the server a minute).
  if (N < 2 ** 10 || N > 2 ** 20 || (N & (N - 1)) !== 0 || r < 1 || r > 32 || p < 1 || p > 16) return false;
  const salt = Buffer.from(m[4]!, 'base64url');
  const expected = Buffer.from(m[5]!, 'base64url');
  if (expected.length < 16) return false;
  const key = await scrypt(password, salt, N, r, p, expected.length);
  return timingSafeEqual(key, expected);
}

/** A stored hash that matches no password, to spend the same time on an unknown user. */
let dummy: Promise<string> | null = null;
export function dummyHash(): Promise<string> {
  dummy ??= hashPassword(randomBytes(24).toString('base64url'));
  return dummy;
}

/** What a password must be, or null when it is acceptable. */
export function passwordProblem(password: string, username = ''): string | null {
  if (password.length < MIN_PASSWORD_LENGTH)
    return `The password must have at least ${MIN_PASSWORD_LENGTH} characters.`;
  if (password.length > MAX_PASSWORD_LENGTH)
    return `The password must have at most ${MAX_PASSWORD_LENGTH} characters.`;
  if (username && password.toLowerCase().includes(username.toLowerCase()))
    return 'The password must not contain the user name.';
  return null;
}

/** A password to hand out once (first start, a reset): 18 random bytes, base64url (24 characters). */
export function oneTimePassword(): string {
  return randomBytes(18).toString('base64url');
}

export const TOKEN_PREFIX = 'vct_';

/** A new API token and the hash that is stored for it. */
export function newApiToken(): { token: string; sha256: string } {
  const token = `${TOKEN_PREFIX}${randomBytes(32).toString('base64url')}`;
  return { token, sha256: tokenSha256(token) };
}

export function tokenSha256(token: string): string {
  return createHash('sha256').update(token).digest('hex');
}
