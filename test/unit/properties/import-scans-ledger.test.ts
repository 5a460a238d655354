/**
 * Property-based tests of the import kinds (issue 14), part 2: scans and the route ledger.
 * Generators and checks: test/helpers/import-fuzz.ts (fast-check; fixed seeds, so a failure
 * reproduces). No expected values: the properties are the error contract of docs/architecture.md
 * (a report or clear issues, never an exception; nothing of a rejected file stored; no NaN or
 * infinity out).
 */
import { describe, expect, it } from 'vitest';
import { IMPORT_RUNS, kindProperties, READ_RUNS } from '../../helpers/import-fuzz.ts';

describe.each([
  ['scans', 14_121],
  ['ledger', 14_131],
] as const)('%s files', (kind, seed) => {
  const p = kindProperties(kind, seed);
  it(`${READ_RUNS} generated files read without a database: clear issues or finite values, never an exception`, () => {
    const r = p.read();
    expect(r.cases).toBe(READ_RUNS);
    // The generators make both kinds of file: some pass, some are refused.
    expect(r.refused).toBeGreaterThan(0);
    expect(r.refused).toBeLessThan(READ_RUNS);
  }, 120_000);
  it(`${IMPORT_RUNS} generated files imported: a rejected file stores nothing, nothing non-finite stored`, async () => {
    const s = await p.imports();
    expect(Object.values(s).reduce((a, b) => a + b, 0)).toBe(IMPORT_RUNS);
    expect(s.rejected ?? 0).toBeGreaterThan(0);
    expect((s.imported ?? 0) + (s.partial ?? 0)).toBeGreaterThan(0);
  }, 120_000);
});
