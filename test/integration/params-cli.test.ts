/**
 * `voidcast params`: list, show (fitted values beside the typed ones), adopt, revert, with --json;
 * the assessment printed by `voidcast assess` names the set while it is adopted. Expected texts:
 * the values the test proposes (invented) and the typed values of test/helpers/engine-inputs.ts.
 */
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import { main } from '../../src/cli/main.ts';
import { proposeParameterSet } from '../../src/engine/parameter-sets.ts';
import type { PairAssessment } from '../../src/engine/types.ts';
import { type Db, openDataDir } from '../../src/store/db.ts';
import { seedLine, seedPairs } from '../helpers/engine-db.ts';
import { H, line, pair, someParticles, standardWafer, T0 } from '../helpers/engine-inputs.ts';
import { fittedAdders, fittedRemoval, fittedUnexplained } from '../helpers/parameter-values.ts';

let dir: string;
let db: Db;

beforeEach(() => {
  dir = mkdtempSync(join(tmpdir(), 'voidcast-params-'));
  db = openDataDir(dir);
  seedLine(db, line());
  seedPairs(db, [
    pair('P0', standardWafer('W0-T', someParticles(50, 1)), standardWafer('W0-B', someParticles(50, 2)), {
      bondTimeMs: T0 + 6 * H,
    }),
  ]);
});
afterEach(() => {
  db.close();
  rmSync(dir, { recursive: true, force: true });
});

function io() {
  const out: string[] = [];
  const err: string[] = [];
  return {
    io: { out: (t: string) => out.push(t), err: (t: string) => err.push(t), isTty: false, env: {}, cwd: dir },
    out: () => out.join(''),
    err: () => err.join(''),
  };
}

async function run(...args: string[]) {
  const x = io();
  const code = await main([...args, '--data', dir], x.io);
  return { code, out: x.out(), err: x.err() };
}

function propose(label: string) {
  const r = proposeParameterSet(
    db,
    {
      adders: { ACT: fittedAdders('ACT', null, { countAbove: 3, countLow: 2, countHigh: 4.5 }) },
      removal: { PBC: fittedRemoval('PBC') },
      unexplainedVoids: { 'HB-1': fittedUnexplained('HB-1') },
    },
    ['adders of ACT/B: 1 pass, too few'],
    label,
    'A. Fitter',
    Date.UTC(2030, 0, 2, 8, 0),
  );
  if (!r.ok) throw new Error(r.message);
  return r.set;
}

describe('voidcast params', () => {
  it('lists no sets, then the proposed one; shows its values beside the typed ones', async () => {
    const none = await run('params', 'list');
    expect(none.code).toBe(0);
    expect(none.out).toMatch(/No parameter sets yet: assessments use the typed values/);
    const s = propose('week 1 fits');
    const list = await run('params', 'list');
    expect(list.out).toMatch(
      /1\s+1\s+proposed\s+week 1 fits\s+2030-01-02 08:00 UTC by A\. Fitter\s+—\s+1 adders, 1 removal, 0 void size, 1 unexplained voids/,
    );
    expect(list.out).toMatch(/Assessments use the typed values: no set is adopted\./);
    const show = await run('params', 'show', String(s.id));
    expect(show.code).toBe(0);
    // Fitted 3 per pass (2–4.5) beside the typed 1 per pass of tool ACT (engine-inputs.ts).
    expect(show.out).toMatch(/Tool ACT: adders per wafer pass \[adders ACT\]/);
    expect(show.out).toMatch(
      /adders per pass at or above the reference size: 3\.00 \(95 %: 2\.00–4\.50\) · typed 1\.00/,
    );
    // d50 60 nm fitted beside the typed 40 nm of clean PBC.
    expect(show.out).toMatch(/half-efficiency size d50: 60 nm \(95 %: 50 nm–70 nm\) · typed 40 nm/);
    expect(show.out).toMatch(/reportable voids per pair: 2\.00 \(95 %: 1\.00–3\.50\) · typed —/);
    expect(show.out).toMatch(/method: hand-made for a test; n = 10/);
    expect(show.out).toMatch(/- adders of ACT\/B: 1 pass, too few/);
    const json = await run('params', 'show', String(s.id), '--json');
    const doc = JSON.parse(json.out) as { set: { id: number }; entries: { kind: string }[] };
    expect(doc.set.id).toBe(s.id);
    expect(doc.entries.map((e) => e.kind)).toEqual(['adders', 'removal', 'unexplainedVoids']);
  });

  it('adopts a set (the assessment names it), reverts to the typed values, and says when nothing changes', async () => {
    const s = propose('week 1 fits');
    const before = await run('assess', '--pair', 'P0', '--as-of', String(T0 + 7 * H));
    expect(before.out).toMatch(/parameters: typed values \(no parameter set adopted\)/);
    const adopt = await run('params', 'adopt', String(s.id), '--as', 'B. Engineer');
    expect(adopt.code).toBe(0);
    expect(adopt.out).toBe(
      `adopted: set ${s.id} (version 1, “week 1 fits”) by B. Engineer; every assessment now uses it\n`,
    );
    const after = await run('assess', '--pair', 'P0', '--as-of', String(T0 + 7 * H), '--json');
    const a = JSON.parse(after.out) as PairAssessment;
    expect(a.parameters).toEqual({ id: s.id, version: 1, label: 'week 1 fits', valuesHash: s.valuesHash });
    expect(a.contributions.some((c) => c.kind === 'unexplained')).toBe(true);
    expect((await run('params', 'adopt', String(s.id), '--as', 'B. Engineer')).out).toMatch(
      /is adopted already; nothing changed/,
    );
    const list = JSON.parse((await run('params', 'list', '--json')).out) as {
      state: string;
      adoptedBy: string;
    }[];
    expect(list[0]).toMatchObject({ state: 'adopted', adoptedBy: 'B. Engineer' });
    const revert = await run('params', 'revert', '--as', 'C. Owner', '--json');
    expect(JSON.parse(revert.out)).toMatchObject({ changed: true, retired: { id: s.id, state: 'retired' } });
    const again = await run('params', 'revert', '--as', 'C. Owner');
    expect(again.out).toMatch(
      /no parameter set was adopted: assessments use the typed values already; nothing changed/,
    );
    const typed = await run('assess', '--pair', 'P0', '--as-of', String(T0 + 7 * H));
    expect(typed.out).toMatch(/parameters: typed values/);
  });

  it('answers bad requests with the usage (2) and unknown sets with not found (4)', async () => {
    propose('x');
    expect((await run('params', 'show', '7')).code).toBe(4);
    expect((await run('params', 'adopt', '7', '--as', 'B')).code).toBe(4);
    const noName = await run('params', 'adopt', '1');
    expect(noName.code).toBe(2);
    expect(noName.err).toMatch(/--as NAME is required/);
    expect((await run('params', 'revert')).code).toBe(2);
    expect((await run('params', 'show', 'one')).code).toBe(2);
    expect((await run('params', 'rename', '1')).code).toBe(2);
    expect((await run('params')).code).toBe(2);
    const empty = mkdtempSync(join(tmpdir(), 'voidcast-params-empty-'));
    const x = io();
    expect(await main(['params', 'list', '--data', empty], x.io)).toBe(4);
    rmSync(empty, { recursive: true, force: true });
  });
});
