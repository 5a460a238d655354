/**
 * `voidcast signoff --pair <id> --hash <inputsHash> --as-of <TIME> --by <name> [--call C] [--comment T]`:
 * records a person's sign-off of a pair's call; refused when the inputs changed since the assessment.
 */
import { signOffPairInDb } from '../../engine/loader.ts';
import type { Call } from '../../engine/types.ts';
import { parseOptions } from '../args.ts';
import { cliAudit } from '../audit.ts';
import { type Command, EXIT, UsageError } from '../io.ts';
import { openExisting, parseAsOf } from './assess.ts';

export const signoff: Command = {
  name: 'signoff',
  summary: 'sign off the call of a pair (refused when its inputs changed since the assessment)',
  usage: `voidcast signoff --pair <id> --hash <inputsHash> --as-of <TIME> --by <name> [--call C] [--comment TEXT] [--data DIR]

  --pair ID      the pair
  --hash H       inputs' hash of the assessment signed (printed by voidcast assess)
  --as-of T      assessment time of that assessment (ISO 8601 with zone, or UTC ms)
  --by NAME      who signs
  --call C       bond | re-clean | hold (default the proposed call; another one needs --comment)
  --comment T    why (required when the call differs from the proposed one)
  --data DIR     data directory holding voidcast.db`,
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
    if (!values['as-of']) throw new UsageError('--as-of is required (the time of the assessment signed)');
    if (!values.by) throw new UsageError('--by is required');
    if (values.call !== undefined && !['bond', 're-clean', 'hold'].includes(values.call))
      throw new UsageError(`--call must be bond, re-clean or hold, got "${values.call}"`);
    const asOfMs = parseAsOf(values['as-of'], Date.now());
    const { db, file } = openExisting(values.data, io);
    if (!db) {
      io.err(`voidcast signoff: no database at ${file}\n`);
      return EXIT.notFound;
    }
    try {
      const r = signOffPairInDb(db, values.pair, {
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
        io.err(`voidcast signoff: refused: ${r.message}\n`);
        return EXIT.rejected;
      }
      cliAudit(
        db,
        'signoff',
        `pair ${values.pair}`,
        {
          dispositionId: r.id,
          call: r.record.call,
          proposedCall: r.record.proposedCall,
          inputsHash: r.record.inputsHash,
        },
        r.record.signedBy,
      );
      io.out(`signed: pair ${values.pair} ${r.record.call} by ${r.record.signedBy} (record ${r.id})\n`);
      return EXIT.ok;
    } finally {
      db.close();
    }
  },
};
