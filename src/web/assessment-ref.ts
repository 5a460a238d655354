/**
 * The assessment a sign-off refers to is fixed by the server, not by the client.
 *
 * A page (or the JSON API) that shows an assessment hands out a reference to it: the assessment
 * time and an HMAC-SHA256 over (subject kind, subject id, assessment time), keyed with this
 * installation's secret. A sign-off must return that reference; the server re-assesses at the time
 * the reference names and then compares the inputs' hash the signer saw (src/engine/signoff.ts).
 * A client can therefore neither pick an assessment time of its own (a time such as 1e300 used to
 * be accepted) nor move a reference from one subject to another.
 */
import { createHmac } from 'node:crypto';
import type { Db } from '../store/db.ts';
import { csrfSecret, tokensEqual } from './csrf.ts';

function mac(secret: string, kind: string, id: string, asOfMs: number): string {
  return createHmac('sha256', secret)
    .update(`voidcast assessment reference\n${kind}\n${id}\n${asOfMs}`)
    .digest('base64url');
}

/** `<asOfMs>.<mac>`: the reference to one assessment of one subject. */
export function assessmentRef(db: Db, kind: 'pair' | 'lot', id: string, asOfMs: number): string {
  return `${asOfMs}.${mac(csrfSecret(db), kind, id, asOfMs)}`;
}

/**
 * The assessment time a reference names, when this server issued it for this subject; else null
 * (absent, malformed, forged, or made for another subject).
 */
export function readAssessmentRef(db: Db, kind: 'pair' | 'lot', id: string, ref: unknown): number | null {
  if (typeof ref !== 'string' || ref.length > 200) return null;
  const m = /^(\d{1,16})\.([A-Za-z0-9_-]{43})$/.exec(ref);
  if (!m) return null;
  const asOfMs = Number(m[1]);
  if (!Number.isSafeInteger(asOfMs)) return null;
  return tokensEqual(m[2]!, mac(csrfSecret(db), kind, id, asOfMs)) ? asOfMs : null;
}
