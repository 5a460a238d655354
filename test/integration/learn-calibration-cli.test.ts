/**
 * `voidcast learn calibration` and `voidcast learn backtest` on the demo's data directory (docs/cli.md):
 * the figures with their intervals and n, JSON in SI units, proposing a parameter set (nothing
 * adopted), usage errors and unknown lots; and an inspection naming an unknown pair imported beside a
 * good one — the bad file rejected with its name, line and rule, nothing of it stored.
 */
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { loadDemo } from '../../src/cli/demo.ts';
import type { CliIo } from '../../src/cli/io.ts';
import { main } from '../../src/cli/main.ts';
import type { BacktestReport, CalibrationReport } from '../../src/engine/learn/calibration-types.ts';
import { openDataDir } from '../../src/store/db.ts';

const FIX = join(import.meta.dirname, '../fixtures');
const DEMO = join(import.meta.dirname, '../../sample-counts');
let dir: string;

function io() {
  let out = '';
  let err = '';
  const io: CliIo = { out: (t) => (out += t), err: (t) => (err += t), isTty: false, env: {}, cwd: FIX };
  return { io, out: () => out, err: () => err };
}

async function run(...args: string[]) {
  const t = io();
  const code = await main([...args, '--data', dir], t.io);
  return { code, out: t.out(), err: t.err() };
}

beforeAll(async () => {
  dir = mkdtempSync(join(tmpdir(), 'voidcast-learn-cal-'));
  const db = openDataDir(dir);
  await loadDemo(db);
  db.close();
}, 120_000);
afterAll(() => rmSync(dir, { recursive: true, force: true }));

describe('voidcast learn calibration', () => {
  it('prints the matches per pair, the fitted energy with its interval and n, and the unexplained voids beside the tail', async () => {
    const r = await run('learn', 'calibration');
    expect(r.code).toBe(0);
    expect(r.out).toMatch(/^Calibration from void inspections: 24 bonded pairs of lots TR2641, TR2642/);
    expect(r.out).toMatch(/TR2642-P09 +TR2642-P09-SAM +100 µm +4 +3 +2 /);
    expect(r.out).toMatch(
      /interface energy +0\.5\d J\/m² \[0\.4\d–0\.5\d\] \(95 %\), typed 0\.80 J\/m²; n = 24 explained voids \(24 small-gap, 0 thick-plate\)/,
    );
    expect(r.out).toMatch(/void radius +× 1\.\d\d \[/);
    expect(r.out).toMatch(
      /The undetected tail predicts 0 per pair — outside the observed interval: they disagree/,
    );
    expect(r.out).toMatch(/proposed source +1\.\d\d per pair \[/);
    expect(r.out).toContain('Nothing is changed: a proposed set becomes');
    expect(r.out).not.toContain('Proposed as parameter set');
  });

  it('--json gives the report in SI units', async () => {
    const r = await run('learn', 'calibration', '--json');
    expect(r.code).toBe(0);
    const j = JSON.parse(r.out) as CalibrationReport & { proposed: unknown };
    expect(j.pairs).toHaveLength(24);
    const v = j.values.voidSize['GALE-7']!;
    expect(v.energyLowJm2).toBeLessThan(v.energyJm2);
    expect(v.energyJm2).toBeLessThan(v.energyHighJm2);
    expect(v.n).toBe(24);
    expect(j.values.unexplainedVoids['GALE-7']!.meanDiameterM).toBeLessThan(1e-3); // metres
    expect(j.proposed).toBeNull();
  });

  it('--lot limits the data: one lot, its own pairs only', async () => {
    const j = JSON.parse(
      (await run('learn', 'calibration', '--lot', 'TR2641', '--json')).out,
    ) as CalibrationReport;
    expect(j.lots).toEqual(['TR2641']);
    expect(j.pairs.every((p) => p.lotId === 'TR2641')).toBe(true);
    expect(j.values.voidSize['GALE-7']!.n).toBe(7);
  });

  it('refuses --propose without --as (usage, exit 2), an unknown lot (exit 4), and stores nothing', async () => {
    const a = await run('learn', 'calibration', '--propose');
    expect(a.code).toBe(2);
    expect(a.err).toContain('voidcast learn: --propose needs --as NAME: who proposes the set');
    const b = await run('learn', 'calibration', '--lot', 'TR9999');
    expect(b.code).toBe(4);
    expect(b.err).toBe('voidcast learn calibration: no bonded lot with void inspections named "TR9999"\n');
    const list = await run('params', 'list', '--json');
    expect(JSON.parse(list.out)).toEqual([]);
  });

  it('--propose --as NAME stores a proposed set (not adopted) that params show lists', async () => {
    const r = await run('learn', 'calibration', '--propose', '--as', 'Ada Lovelace', '--label', 'demo voids');
    expect(r.code).toBe(0);
    expect(r.out).toContain('Proposed as parameter set 1 (version 1, “demo voids”) by Ada Lovelace');
    const show = await run('params', 'show', '1', '--json');
    const { set } = JSON.parse(show.out) as { set: { state: string; values: CalibrationReport['values'] } };
    expect(set.state).toBe('proposed');
    expect(Object.keys(set.values.voidSize)).toEqual(['GALE-7']);
    expect(Object.keys(set.values.unexplainedVoids)).toEqual(['GALE-7']);
  });
});

describe('voidcast learn backtest', () => {
  it('prints each left-out lot before and after with intervals, and the coverage', async () => {
    const r = await run('learn', 'backtest');
    expect(r.code).toBe(0);
    expect(r.out).toMatch(/Lot TR2641: fitted on TR2642 — energy 0\.\d\d J\/m² \[/);
    expect(r.out).toMatch(/reportable voids over the lot: observed 40, predicted before 8\.\d\d, after \d/);
    expect(r.out).toMatch(/before +voids \d+\.\d % \(\d+\/24\)/);
    expect(r.out).toMatch(/after +voids \d+\.\d % \(\d+\/24\)/);
    const j = JSON.parse((await run('learn', 'backtest', '--json')).out) as BacktestReport;
    expect(j.pairs).toHaveLength(24);
    expect(j.pairs.every((p) => p.after !== null)).toBe(true);
  });

  it('says a single lot cannot be left out', async () => {
    const j = JSON.parse((await run('learn', 'backtest', '--lot', 'TR2642', '--json')).out) as BacktestReport;
    expect(j.notes[0]).toBe(
      '1 bonded lot with inspections: leaving one out needs at least two; no after-calibration figures.',
    );
    expect(j.pairs.every((p) => p.after === null)).toBe(true);
  });
});

describe('an inspection naming an unknown pair', () => {
  it('is rejected with its file, line and rule while the good file beside it is stored', async () => {
    const good = join(dir, 'TR2641-P03-SAM-again.csv');
    writeFileSync(
      good,
      readFileSync(join(DEMO, 'void-inspections/TR2641/TR2641-P03-SAM.csv'), 'utf8').replace(
        '# inspection_id: TR2641-P03-SAM',
        '# inspection_id: TR2641-P03-SAM-2',
      ),
    );
    const before = JSON.parse((await run('learn', 'calibration', '--json')).out) as CalibrationReport;
    const r = await run('import', 'void-inspections', good, 'bad/void-inspections-unknown-pair.csv');
    expect(r.code).toBe(3);
    expect(r.out).toContain(`${good}: imported`);
    expect(r.out).toContain('bad/void-inspections-unknown-pair.csv: rejected, nothing stored — 1 issue');
    expect(r.out).toContain(
      'bad/void-inspections-unknown-pair.csv:3: "# pair: P-NONE" pair "P-NONE" is not stored (import its pairs file first)',
    );
    // the calibration now sees the second inspection of TR2641-P03 (the later one is used) and nothing of P-NONE
    const after = JSON.parse((await run('learn', 'calibration', '--json')).out) as CalibrationReport;
    expect(after.pairs).toHaveLength(before.pairs.length);
    const p03 = after.pairs.find((p) => p.pairId === 'TR2641-P03')!;
    expect(p03.matching.inspectionId).toBe('TR2641-P03-SAM-2');
    expect(p03.otherInspections).toEqual(['TR2641-P03-IR', 'TR2641-P03-SAM']);
  });
});
