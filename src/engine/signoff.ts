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
  | {
      ok: false;
      code: 'hash-changed' | 'invalid';
      message: string;
      currentHash?: string;
      /**
       * For 'hash-changed': the assessment time whose assessment of the current data has the hash
       * given, when one of the times tried has it (see explainHashChange), else null.
       */
      matchedAsOfMs?: number | null;
      /** For 'hash-changed': what differs, one line each (src/engine/inputs-diff.ts). */
      differences?: string[];
    };

const isoTime = (ms: number) => new Date(ms).toISOString();

/**
 * The refusal of a sign-off whose hash is not that of the assessment at the time given, in words:
 * when another time's assessment of the same data has that hash, the times differ and `differences`
 * says what that changes; when none does, the data changed since (or the assessment was made at a
 * time not tried), and the refusal says so without guessing which.
 *
 * @param tried the other assessment times tried, with a word for each ("the installation clock")
 */
export function hashChangedMessage(
  givenAsOfMs: number,
  currentHash: string,
  matched: { asOfMs: number; differences: string[] } | null,
  tried: { asOfMs: number; what: string }[],
): string {
  if (matched) {
    const diffs = matched.differences.filter((d) => !d.startsWith('the assessment time:'));
    return (
      `The inputs' hash given is that of the assessment as of ${isoTime(matched.asOfMs)}, not of the one as of ` +
      `${isoTime(givenAsOfMs)} (the time given; its hash is ${currentHash}). The data are the same; between the two times ` +
      `${diffs.length ? `these differ: ${diffs.join('; ')}` : 'the assessment time alone differs'}. ` +
      `Sign with the assessment time ${isoTime(matched.asOfMs)}, or review the assessment as of ${isoTime(givenAsOfMs)} and sign its hash.`
    );
  }
  const others = tried.filter((t) => t.asOfMs !== givenAsOfMs);
  return (
    `The inputs' hash given is not that of the assessment of the current data as of ${isoTime(givenAsOfMs)} ` +
    `(its hash is ${currentHash})${others.length ? `, nor as of ${others.map((t) => `${t.what} ${isoTime(t.asOfMs)}`).join(' or ')}` : ''}. ` +
    'Either data it rests on were imported since it was made (scans, counter samples, the route, tools, cleans, ' +
    'locations, the product or its spec) or it was made at another assessment time: review the current assessment before signing.'
  );
}

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
