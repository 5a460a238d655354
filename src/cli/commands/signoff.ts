/**
 * `voidcast signoff --pair <id> --hash <inputsHash> --as-of <TIME> --by <name> [--call C] [--comment T]`:
 * records a person's sign-off of a pair's call; refused when the inputs changed since the assessment.
 */
import { signOffPairInDb } from '../../engine/loader.ts';
import type { SignoffOutcome, SignoffRequest } from '../../engine/signoff.ts';
import type { Call } from '../../engine/types.ts';
import type { Db } from '../../store/db.ts';
import { installationClockMs } from '../../store/settings.ts';
import { writeTransaction } from '../../store/writer.ts';
import { parseOptions } from '../args.ts';
import { cliAudit } from '../audit.ts';
import { type Command, EXIT, UsageError } from '../io.ts';
import { openExisting, parseAsOf } from './assess.ts';

export const signoff: Command = {
  name: 'signoff',
  summary: 'sign off the call of a pair (refused when its inputs changed since the assessment)',
  usage: `voidcast signoff --pair <id> --hash <inputsHash> [--as-of <TIME>] --by <name> [--call C] [--comment TEXT] [--data DIR]

  --pair ID      the pair
  --hash H       inputs' hash of the assessment signed (the "inputs" line of voidcast assess)
  --as-of T      assessment time of that assessment (the "assessed" line of voidcast assess): ISO 8601
                 with zone, or UTC ms; default the installation clock (setting clock.as_of), as assess
  --by NAME      who signs
  --call C       bond | re-clean | hold (default the proposed call; another one needs --comment)
  --comment T    why (required when the call differs from the proposed one)
  --data DIR     data directory holding voidcast.db (default $VOIDCAST_DATA, else ./data)

  exit codes: 0 signed, 2 usage, 3 refused (the hash is not that of the assessment at that time, or
  the request is invalid; the message says what differs), 4 no database or no such pair`,
  async run(argv, io) {
    const { values } = parseOptions(argv, {
      pair: { type: 'string' },
      hash: { type: 'string' },
      'as-of': { type: 'string' },
      by: { type: 'string' },
      call: { type: 'string' },
      comment: { type: 'string' },
      data: { type: 'string' },
    });
    if (!values.pair) throw new UsageError('--pair is required');
    if (!values.hash) throw new UsageError('--hash is required');
    if (!/^[0-9a-f]{64}$/.test(values.hash))
      throw new UsageError(
        `--hash must be the 64 hexadecimal digits printed on the "inputs" line of voidcast assess; got "${values.hash}"`,
      );
    if (!values.by?.trim()) throw new UsageError('--by is required: the name of the person signing');
    if (values.call !== undefined && !['bond', 're-clean', 'hold'].includes(values.call))
      throw new UsageError(`--call must be bond, re-clean or hold, got "${values.call}"`);
    if (values['as-of'] !== undefined) parseAsOf(values['as-of'], 0); // a bad --as-of is a usage error first
    const { db, file } = openExisting(values.data, io);
    if (!db) {
      io.err(`voidcast signoff: no database at ${file}\n`);
      return EXIT.notFound;
    }
    try {
      const clock = values['as-of'] === undefined ? installationClockMs(db) : null;
      if (values['as-of'] === undefined && clock === null)
        throw new UsageError(
          '--as-of is required: give the assessment time of the assessment signed (this installation has no clock setting)',
        );
      const asOfMs = parseAsOf(values['as-of'], clock ?? 0);
      const r = signOffAndRecord(db, values.pair, {
        inputsHash: values.hash,
        asOfMs,
        signedBy: values.by,
        call: values.call as Call | undefined,
        comment: values.comment ?? null,
      });
      if (r === null) {
        io.err(`voidcast signoff: no pair "${values.pair}"\n`);
        return EXIT.notFound;
      }
      if (!r.ok) {
        io.err(`voidcast signoff: refused: ${refusalText(values.pair, asOfMs, r)}\n`);
        return EXIT.rejected;
      }
      io.out(`signed: pair ${values.pair} ${r.record.call} by ${r.record.signedBy} (record ${r.id})\n`);
      return EXIT.ok;
    } finally {
      db.close();
    }
  },
};

/**
 * Signs off a pair and records it in the audit trail in one write transaction: both are stored or
 * neither. (Two transactions would leave a sign-off that nobody is recorded as making when the
 * process dies between them; test/integration/kill-signoff.test.ts kills it there.)
 */
export function signOffAndRecord(
  db: Db,
  pairId: string,
  req: SignoffRequest,
): ReturnType<typeof signOffPairInDb> {
  return writeTransaction(db, () => {
    const r = signOffPairInDb(db, pairId, req);
    if (r?.ok)
      cliAudit(
        db,
        'signoff',
        `pair ${pairId}`,
        {
          dispositionId: r.id,
          call: r.record.call,
          proposedCall: r.record.proposedCall,
          inputsHash: r.record.inputsHash,
        },
        r.record.signedBy,
      );
    return r;
  });
}

const isoTime = (ms: number) => new Date(ms).toISOString();

/** A refusal for the terminal: what differs one per line, and the command that shows the current figures. */
function refusalText(pairId: string, asOfMs: number, r: Extract<SignoffOutcome, { ok: false }>): string {
  if (r.code !== 'hash-changed')
    // The engine names its request fields; say the options the user typed.
    return r.message
      .replace(/^comment: /, '--comment: ')
      .replace(/^call: /, '--call: ')
      .replace(/^signedBy: /, '--by: ')
      .replace(/^inputsHash: /, '--hash: ');
  const review = `voidcast assess --pair ${pairId} --as-of ${isoTime(asOfMs)}`;
  if (r.matchedAsOfMs === undefined || r.matchedAsOfMs === null)
    return `${r.message}\n  Review: ${review} (it prints the current hash${r.currentHash ? `, ${r.currentHash}` : ''}).`;
  const diffs = (r.differences ?? []).filter((d) => !d.startsWith('the assessment time:'));
  return [
    `the hash given is that of the assessment as of ${isoTime(r.matchedAsOfMs)}, not as of ${isoTime(asOfMs)} (the --as-of given).`,
    `  The data are the same; between the two times ${diffs.length ? 'these differ:' : 'only the assessment time differs.'}`,
    ...diffs.map((d) => `    - ${d}`),
    `  Sign with --as-of ${isoTime(r.matchedAsOfMs)}, or review ${review} and sign the hash it prints.`,
  ].join('\n');
}
