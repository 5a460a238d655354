/**
 * A child process for test/integration/kill-signoff.test.ts: signs off a pair with the CLI's own
 * function (signOffAndRecord: the sign-off and its audit-trail entry in one write transaction) on a
 * database file, and — unless told `complete` — stops inside that write so that the test can kill it
 * there with SIGKILL.
 *
 * Where it stops is set with a TEMP trigger, which lives only on this process's connection (nothing
 * is added to the database file or to product code): after the sign-off row is inserted
 * (`after-signoff`, the audit entry not yet written) or after the audit entry is inserted
 * (`after-audit`, the transaction not yet committed). The trigger calls a function of this
 * connection that says "in-write" on stdout and then waits far longer than the test.
 *
 *   node --import tsx signoff-child.ts <db file> <pair> <asOfMs> <after-signoff|after-audit|complete>
 */
import { writeSync } from 'node:fs';
import { signOffAndRecord } from '../../src/cli/commands/signoff.ts';
import { assessPairWithInputsFromDb } from '../../src/engine/loader.ts';
import { openDatabase } from '../../src/store/db.ts';

const [file, pairId, asOfText, mode] = process.argv.slice(2);
if (!file || !pairId || !asOfText || !mode) throw new Error('usage: <db file> <pair> <asOfMs> <mode>');
const asOfMs = Number(asOfText);
const db = openDatabase(file);
const table = { 'after-signoff': 'dispositions', 'after-audit': 'audit_log' }[mode];
if (table) {
  db.function('vc_stop_here', () => {
    writeSync(1, 'in-write\n');
    Atomics.wait(new Int32Array(new SharedArrayBuffer(4)), 0, 0, 600_000);
    return null;
  });
  db.exec(`CREATE TEMP TRIGGER vc_stop AFTER INSERT ON main.${table} BEGIN SELECT vc_stop_here(); END`);
}
const seen = assessPairWithInputsFromDb(db, pairId, asOfMs);
if (!seen) throw new Error(`no pair ${pairId}`);
const r = signOffAndRecord(db, pairId, {
  inputsHash: seen.assessment.inputsHash,
  asOfMs,
  signedBy: 'A. Approver',
});
if (!r?.ok) throw new Error(`sign-off refused: ${JSON.stringify(r)}`);
writeSync(1, `signed ${r.id}\n`);
db.close();
