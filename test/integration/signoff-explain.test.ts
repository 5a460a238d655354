/**
 * A refused sign-off says what actually differs, computed by comparing the two assessments' inputs
 * (src/engine/inputs-diff.ts), through the engine, the CLI and the API. Data: the page line of
 * test/helpers/pages-data.ts (route of every wafer: clean 12:00–12:30, inspection 14:00–14:05,
 * closed wait in bay-3 14:30–17:30, activation 18:00–18:10, open wait in me-1 18:15–19:30 on
 * 2025-03-03; L-01's pairs bond at 21:00). Expected values are hand computations from that route:
 * the clean ended at 12:30, so the "post-CMP clean → bond" Q-time is 7.5 h at 20:00 and 5.5 h at
 * 18:00; activation ends at 18:10, so "activation → bond" is 1 h 50 min = 1.8 h at 20:00 and at
 * 18:00 there is no activation step yet.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { CliIo } from '../../src/cli/io.ts';
import { main } from '../../src/cli/main.ts';
import { describeInputsDiff } from '../../src/engine/inputs-diff.ts';
import { assessPairWithInputsFromDb, signOffPairInDb } from '../../src/engine/loader.ts';
import { DATABASE_FILE_NAME, type Db, migrate, openDatabase } from '../../src/store/db.ts';
import { readDispositions } from '../../src/store/dispositions.ts';
import { setSetting } from '../../src/store/settings.ts';
import { createApp } from '../../src/web/app.ts';
import { CSRF_COOKIE, csrfSecret, tokenFor } from '../../src/web/csrf.ts';
import { AS_OF_MS, importPageLine, type LineFiles, lineFiles } from '../helpers/pages-data.ts';

let db: Db;
let files: LineFiles;
const H = 3_600_000;
const at = (ms: number) => new Date(ms).toISOString();

beforeAll(async () => {
  db = openDatabase(':memory:');
  migrate(db);
  files = await importPageLine(db, lineFiles());
  setSetting(db, 'clock.as_of', at(AS_OF_MS)); // 2025-03-03T20:00Z
}, 60_000);
afterAll(() => {
  files?.cleanup();
  db?.close();
});

describe('describeInputsDiff', () => {
  it('finds nothing between an assessment and itself', () => {
    const a = assessPairWithInputsFromDb(db, 'P-01', AS_OF_MS)!;
    expect(describeInputsDiff(a, a)).toEqual([]);
  });
});

describe('a sign-off with another assessment time than the hash was made at', () => {
  it('names the time the hash belongs to and what the time changes: counter samples, Q-times, running steps', () => {
    const seen = assessPairWithInputsFromDb(db, 'P-01', AS_OF_MS)!.assessment;
    const r = signOffPairInDb(db, 'P-01', {
      inputsHash: seen.inputsHash,
      asOfMs: AS_OF_MS - 2 * H,
      signedBy: 'A',
    });
    if (!r || r.ok) throw new Error('expected a refusal');
    expect(r.code).toBe('hash-changed');
    expect(r.matchedAsOfMs).toBe(AS_OF_MS); // found at the installation clock
    expect(r.differences).toEqual([
      'the assessment time: 2025-03-03T20:00Z → 2025-03-03T18:00Z',
      'the tools on the route up to the assessment time: ACT-1 (only as of 2025-03-03T20:00Z)',
      'the locations on the route up to the assessment time: me-1 (only as of 2025-03-03T20:00Z)',
      // me-1 is sampled every 15 min; the wait there (18:15–19:30) holds the samples starting 18:15,
      // 18:30, 18:45, 19:00 and 19:15 (the last ends at 19:30)
      'the counter samples of location me-1 read for the exposure (the exposure windows moved): 5 samples, 2025-03-03T18:15Z to 2025-03-03T19:30Z → no samples',
      'Q-time activation → bond of wafer L-01-02: 1.8 h → no activation step yet (limit 8.0 h)',
      'Q-time activation → bond of wafer L-01-01: 1.8 h → no activation step yet (limit 8.0 h)',
      'Q-time post-CMP clean → bond of wafer L-01-02: 7.5 h → 5.5 h (limit 24.0 h)',
      'Q-time post-CMP clean → bond of wafer L-01-01: 7.5 h → 5.5 h (limit 24.0 h)',
      'steps in progress between the two times (the route is cut at the assessment time): "plasma activation", "load at bonder"',
    ]);
    expect(r.message).toContain(
      "The inputs' hash given is that of the assessment as of 2025-03-03T20:00:00.000Z, not of the one as of 2025-03-03T18:00:00.000Z",
    );
    expect(r.message).toContain('The data are the same');
    expect(readDispositions(db, 'pair', 'P-01')).toHaveLength(0);
  });

  it('when no time tried has the hash, says the data changed or another time was used, without guessing which', () => {
    const r = signOffPairInDb(db, 'P-01', { inputsHash: 'a'.repeat(64), asOfMs: AS_OF_MS, signedBy: 'A' });
    if (!r || r.ok) throw new Error('expected a refusal');
    expect(r.matchedAsOfMs).toBeNull();
    expect(r.message).toMatch(
      /^The inputs' hash given is not that of the assessment of the current data as of 2025-03-03T20:00:00\.000Z \(its hash is [0-9a-f]{64}\)\. Either data it rests on were imported since it was made/,
    );
  });
});

describe('POST /api/pairs/:id/signoff', () => {
  it('answers 409 with the matched time and the differences as a list', async () => {
    const app = createApp({ db, dataDir: files.dir, version: 'test', log: () => {} });
    const page = await app.request('/pairs/P-01');
    const cookie = (page.headers.get('set-cookie') ?? '').split(';')[0]!;
    const token = tokenFor(csrfSecret(db), cookie.slice(CSRF_COOKIE.length + 1));
    const hash = assessPairWithInputsFromDb(db, 'P-01', AS_OF_MS)!.assessment.inputsHash;
    // The server's reference to the assessment two hours earlier (the time the signer claims to have
    // seen), as the JSON API hands it out with that assessment.
    const earlier = (await (
      await app.request(`/api/pairs/P-01/assessment?asOf=${AS_OF_MS - 2 * H}`)
    ).json()) as { assessmentRef: string };
    const res = await app.request('/api/pairs/P-01/signoff', {
      method: 'POST',
      headers: {
        'content-type': 'application/json',
        cookie,
        'X-CSRF-Token': token,
        origin: 'http://localhost',
      },
      body: JSON.stringify({ inputsHash: hash, assessmentRef: earlier.assessmentRef, signedBy: 'A' }),
    });
    expect(res.status).toBe(409);
    const body = (await res.json()) as { matchedAsOfMs: number; differences: string[] };
    expect(body.matchedAsOfMs).toBe(AS_OF_MS);
    expect(body.differences).toContain(
      'Q-time post-CMP clean → bond of wafer L-01-01: 7.5 h → 5.5 h (limit 24.0 h)',
    );
  });
});

describe('voidcast signoff', () => {
  it('prints what differs, one line each, exits 3; signs with the right time, exits 0', async () => {
    // The CLI opens a data directory: copy the in-memory line into a file database there.
    const dir = files.dir;
    await db.backup(`${dir}/${DATABASE_FILE_NAME}`);
    let err = '';
    let out = '';
    const io: CliIo = { out: (t) => (out += t), err: (t) => (err += t), isTty: false, env: {}, cwd: dir };
    const hash = assessPairWithInputsFromDb(db, 'P-01', AS_OF_MS)!.assessment.inputsHash;
    const base = ['signoff', '--pair', 'P-01', '--hash', hash, '--by', 'A. Engineer', '--data', dir];
    expect(await main([...base, '--as-of', '2025-03-03T18:00Z'], io)).toBe(3);
    expect(err).toContain(
      'voidcast signoff: refused: the hash given is that of the assessment as of 2025-03-03T20:00:00.000Z, not as of 2025-03-03T18:00:00.000Z (the --as-of given).',
    );
    expect(err).toContain(
      '    - Q-time post-CMP clean → bond of wafer L-01-02: 7.5 h → 5.5 h (limit 24.0 h)',
    );
    expect(err).toContain('  Sign with --as-of 2025-03-03T20:00:00.000Z');
    err = '';
    // Without --as-of the installation clock is used, as `voidcast assess` does.
    expect(await main(base, io), err).toBe(0);
    expect(out).toMatch(/^signed: pair P-01 \S+ by A\. Engineer \(record \d+\)/);
  });
});
