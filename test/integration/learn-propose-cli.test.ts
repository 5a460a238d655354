/**
 * `voidcast learn all [--propose --as NAME [--label TEXT]]` and `--propose` on `learn adders` and
 * `learn removal` (docs/cli.md) on the demo's data directory: one line per fit (value, interval, n or
 * the too-little-data reason), one set holding every fit with --propose (nothing adopted), a set of
 * its own values only from adders or removal, exit 3 with the reason when nothing has enough data, and
 * usage errors. Which fits have enough data: the demo's learning tests (demo-learn.test.ts).
 */
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { loadDemo } from '../../src/cli/demo.ts';
import type { CliIo } from '../../src/cli/io.ts';
import { main } from '../../src/cli/main.ts';
import { readAdoptedParameterSet, readParameterSets } from '../../src/engine/parameter-sets.ts';
import { openDataDir } from '../../src/store/db.ts';

let dir: string;

async function run(...args: string[]) {
  let out = '';
  let err = '';
  const io: CliIo = { out: (t) => (out += t), err: (t) => (err += t), isTty: false, env: {}, cwd: dir };
  const code = await main([...args, '--data', dir], io);
  return { code, out, err };
}

function sets() {
  const db = openDataDir(dir);
  try {
    return { all: readParameterSets(db), adopted: readAdoptedParameterSet(db) };
  } finally {
    db.close();
  }
}

beforeAll(async () => {
  dir = mkdtempSync(join(tmpdir(), 'voidcast-learn-propose-'));
  const db = openDataDir(dir);
  await loadDemo(db);
  db.close();
}, 120_000);
afterAll(() => rmSync(dir, { recursive: true, force: true }));

describe('voidcast learn all', () => {
  it('prints one line per fit — value, interval and n, or the too-little-data reason — and stores nothing', async () => {
    const r = await run('learn', 'all');
    expect(r.code).toBe(0);
    expect(r.out).toMatch(
      /^ {2}LACT-1\/B +15\.5 ≥ 60 nm \[10\.5–22\.0\], slope 0\.93 ± 0\.17; n = 2 passes$/m,
    );
    expect(r.out).toMatch(/^ {2}LACT-1\/A +too little data: 1 adder ≥ 60 nm over 2 passes/m);
    expect(r.out).toMatch(/^ {2}ZSTK-1 +0\.10 ≥ 67\.5 nm \[0\.06–0\.18\].*; n = 125 passes$/m);
    expect(r.out).toMatch(
      /^ {2}CLN-RIN2 +maximum 96\.2 %, d50 64\.6 nm \[58\.4 nm–71\.4 nm\].*; n = 1128 particles$/m,
    );
    expect(r.out).toMatch(
      /^ {2}GALE-7 +interface energy 0\.51 J\/m² \[0\.47–0\.55\] \(typed 0\.80\); n = 24 explained voids$/m,
    );
    expect(r.out).toMatch(/unexplained voids 1\.\d\d per pair \[.*\].*; n = 24 pairs$/m);
    expect(r.out).toContain('6 values with enough data to propose; 5 notes kept with them.');
    expect(r.out).not.toContain('Proposed as parameter set');
    expect(sets().all).toEqual([]);
  });

  it('--propose --as stores ONE proposed set holding every fit, adopts nothing, and says how to adopt it', async () => {
    const r = await run('learn', 'all', '--propose', '--as', 'R. Okafor', '--label', 'week 42 line');
    expect(r.code).toBe(0);
    expect(r.out).toContain(
      'Proposed as parameter set 1 (version 1, “week 42 line”) by R. Okafor; adopt it with: voidcast params adopt 1 --as NAME',
    );
    const s = sets();
    expect(s.all).toHaveLength(1);
    expect(s.adopted).toBeNull();
    const v = s.all[0]!.values;
    expect([v.adders, v.removal, v.voidSize, v.unexplainedVoids].map((m) => Object.keys(m).sort())).toEqual([
      ['LACT-1/B', 'ZSTK-1'],
      ['CLN-RIN1', 'CLN-RIN2'],
      ['GALE-7'],
      ['GALE-7'],
    ]);
    expect(s.all[0]!.notes).toContainEqual(expect.stringMatching(/^Adders of LACT-1\/A: too little data/));
  });

  it('--json gives the fits in SI units with the proposal', async () => {
    const r = await run('learn', 'all', '--json');
    expect(r.code).toBe(0);
    const j = JSON.parse(r.out);
    expect(j.values.adders['LACT-1/B'].atDiameterM).toBeCloseTo(60e-9, 12); // metres
    expect(j.proposed).toBeNull();
    expect(j.refused).toBeNull();
    expect(j.calibration.lots).toEqual(['TR2641', 'TR2642']);
  });

  it('refuses --propose without --as, and --as without --propose (exit 2)', async () => {
    expect((await run('learn', 'all', '--propose')).code).toBe(2);
    expect((await run('learn', 'all', '--as', 'X')).code).toBe(2);
    expect((await run('learn', 'adders', '--propose')).err).toContain('--propose needs --as NAME');
  });
});

describe('--propose on learn adders and learn removal', () => {
  it('learn adders --propose stores its own values only', async () => {
    const r = await run('learn', 'adders', '--tool', 'LACT-1', '--propose', '--as', 'K. Ito');
    expect(r.code).toBe(0);
    const m =
      /Proposed as parameter set (\d+) \(version \d+, “adders per wafer pass of LACT-1, from the line’s scans”\)/.exec(
        r.out,
      );
    expect(m).not.toBeNull();
    const set = sets().all.find((s) => s.id === Number(m![1]))!;
    expect(Object.keys(set.values.adders)).toEqual(['LACT-1/B']);
    expect(set.values.removal).toEqual({});
    expect(set.values.voidSize).toEqual({});
    expect(set.notes).toEqual([expect.stringMatching(/^Adders of LACT-1\/A: too little data/)]);
  });

  it('learn removal --propose stores the removal curves only', async () => {
    const r = await run('learn', 'removal', '--propose', '--as', 'K. Ito', '--json');
    expect(r.code).toBe(0);
    const j = JSON.parse(r.out);
    const set = sets().all.find((s) => s.id === j.proposed.id)!;
    expect(Object.keys(set.values.removal).sort()).toEqual(['CLN-RIN1', 'CLN-RIN2']);
    expect(set.values.adders).toEqual({});
    expect(set.notes).toEqual([expect.stringMatching(/^Removal of CLN-PCMP: too little data/)]);
  });

  it('nothing with enough data: nothing stored, exit 3 with the reason', async () => {
    const before = sets().all.length;
    const r = await run('learn', 'adders', '--tool', 'LACT-1/A', '--propose', '--as', 'K. Ito');
    expect(r.code).toBe(3);
    expect(r.out).toMatch(
      /Not proposed: Nothing to propose: Adders of LACT-1\/A: too little data: 1 adder ≥ 60 nm/,
    );
    expect(sets().all).toHaveLength(before);
    expect(sets().adopted).toBeNull();
  });
});
