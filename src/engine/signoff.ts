/**
 * Sign-off of a call (pure): checks a request against a fresh assessment and builds the record.
 *
 * A sign-off names the inputs' hash of the assessment the signer saw and its assessment time. The
 * caller re-runs the assessment at that time on the current data; when the data have changed since
 * (a new scan, new counter samples, a changed spec or tool level) the hash differs and the sign-off
 * is refused — the signer must look at the new figures first. A signer may record a call other than
 * the proposed one only with a comment saying why.
 */
import type { Call, LotAssessment, PairAssessment } from './types.ts';

export interface SignoffRequest {
  /** The inputs' hash of the assessment the signer saw (64 hex digits). */
  inputsHash: string;
  /** Assessment time of that assessment, UTC ms. */
  asOfMs: number;
  signedBy: string;
  /** The call being signed; default the proposed call. */
  call?: Call;
  comment?: string | null;
}

export interface SignoffRecord {
  subjectKind: 'pair' | 'lot';
  subjectId: string;
  call: Call;
  proposedCall: Call;
  inputsHash: string;
  modelVersion: string;
  specVersion: string;
  figures: unknown;
  reasons: unknown;
  signedBy: string;
  comment: string | null;
  signedAtMs: number;
  assessedAtMs: number;
}

export type SignoffOutcome =
  | { ok: true; record: SignoffRecord }
  | { ok: false; code: 'hash-changed' | 'invalid'; message: string; currentHash?: string };

const CALLS: readonly Call[] = ['bond', 're-clean', 'hold'];

/** Validates a request against the current assessment; returns the record to store or why not. */
export function prepareSignoff(
  current: PairAssessment | LotAssessment,
  req: SignoffRequest,
  nowMs: number,
): SignoffOutcome {
  const signedBy = typeof req.signedBy === 'string' ? req.signedBy.trim() : '';
  if (!signedBy)
    return { ok: false, code: 'invalid', message: 'signedBy: the name of the person signing is required.' };
  if (typeof req.inputsHash !== 'string' || !/^[0-9a-f]{64}$/.test(req.inputsHash))
    return {
      ok: false,
      code: 'invalid',
      message: 'inputsHash: 64 lower-case hex digits of the assessment signed are required.',
    };
  const call = req.call ?? current.call;
  if (!CALLS.includes(call))
    return { ok: false, code: 'invalid', message: `call: one of ${CALLS.join(', ')}.` };
  const comment = typeof req.comment === 'string' && req.comment.trim() ? req.comment.trim() : null;
  if (call !== current.call && !comment)
    return {
      ok: false,
      code: 'invalid',
      message: `comment: signing "${call}" instead of the proposed "${current.call}" needs a comment saying why.`,
    };
  if (req.inputsHash !== current.inputsHash)
    return {
      ok: false,
      code: 'hash-changed',
      message:
        'The inputs changed since this assessment (new or changed scans, counter samples, ledger, tools or spec): ' +
        'review the new assessment before signing.',
      currentHash: current.inputsHash,
    };
  const isPair = 'pairId' in current;
  return {
    ok: true,
    record: {
      subjectKind: isPair ? 'pair' : 'lot',
      subjectId: isPair ? current.pairId : current.lotId,
      call,
      proposedCall: current.call,
      inputsHash: current.inputsHash,
      modelVersion: current.modelVersion,
      specVersion: current.specVersion,
      figures: isPair ? current.figures : current.totals,
      reasons: current.reasons,
      signedBy,
      comment,
      signedAtMs: nowMs,
      assessedAtMs: current.asOfMs,
    },
  };
}
