/**
 * The bench runner's own logic (bench/run.ts): merging a later run's sections into a report, the
 * run-time rows of the Targets table (issue 17: the whole run under 15 min, the quick run under 2),
 * finding the latest whole run of a mode, and the generated Markdown. Every expected value is a hand
 * computation from the small reports built here; no timing is measured.
 */
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterEach, describe, expect, it } from 'vitest';
import {
  isWhole,
  latestWhole,
  markdown,
  merged,
  type Report,
  runTime,
  timeTargets,
} from '../../../bench/run.ts';

const FULL = ['import', 'scans', 'assess', 'scaling', 'load', 'tuning', 'audit', 'match', 'calibrate'];
const QUICK = FULL.slice(0, 7);

function report(mode: Report['mode'], date: string, seconds: Record<string, number>, total: number): Report {
  return {
    date,
    mode,
    machine: { cpu: 'test cpu', cores: 2, memoryGb: 8, node: 'v20', platform: 'linux x64' },
    sections: Object.entries(seconds).map(([name, s]) => ({
      name,
      data: `${name} data`,
      figures: [],
      targets: [{ name: `${name} target`, target: 'goal', measured: 'x', met: true }],
      seconds: s,
      loadAvgBefore: [1, 1, 1],
      loadAvgAfter: [2, 2, 2],
    })),
    seconds: total,
    loadAvgBefore: [0.5, 0.25, 0.125],
    loadAvgAfter: [1.5, 1, 0.75],
  };
}
const each = (names: string[], s: number) => Object.fromEntries(names.map((n) => [n, s]));

const dirs: string[] = [];
afterEach(() => {
  for (const d of dirs.splice(0)) rmSync(d, { recursive: true, force: true });
});

describe('merged', () => {
  it('replaces the named sections, marks them with their run and keeps the runner order', () => {
    const base = report('full', '2026-12-03T10:00:00Z', each(FULL, 10), 95);
    const later = report('full', '2026-12-03T11:00:00Z', { scaling: 70 }, 71);
    const m = merged(base, later, ['scaling'], false);
    expect(m.sections.map((s) => s.name)).toEqual(FULL);
    const scaling = m.sections.find((s) => s.name === 'scaling')!;
    expect(scaling.seconds).toBe(70);
    expect(scaling.separateRun).toEqual({
      date: '2026-12-03T11:00:00Z',
      mode: 'full',
      command: 'npm run bench -- scaling',
    });
    expect(m.sections.filter((s) => s.separateRun).length).toBe(1);
    expect(m.date).toBe(base.date);
  });

  it('adds a section the earlier report did not have, in runner order', () => {
    const base = report('full', '2026-12-03T10:00:00Z', each(['import', 'load'], 10), 20);
    const m = merged(base, report('quick', '2026-12-03T11:00:00Z', { scans: 4 }, 4), ['scans'], true);
    expect(m.sections.map((s) => s.name)).toEqual(['import', 'scans', 'load']);
    expect(m.sections[1]!.separateRun?.command).toBe('npm run bench -- quick scans');
  });
});

describe('the run-time targets', () => {
  it('measures a whole full run by its own total and the quick run by the other report', () => {
    const full = report('full', '2026-12-03T10:00:00Z', each(FULL, 60), 600);
    const quick = report('quick', '2026-12-03T09:00:00Z', each(QUICK, 12), 90);
    const [w, q] = timeTargets(full, quick);
    // 600 s = 10.0 min < 15 min; 90 s = 1.5 min < 2 min (hand computation)
    expect(w).toMatchObject({ target: '< 15 min', met: true });
    expect(w!.measured).toMatch(
      /^10\.0 min \(run of 2026-12-03T10:00:00Z, load average 0\.50 \/ 0\.25 \/ 0\.13/,
    );
    expect(q).toMatchObject({ target: '< 2 min', met: true });
    expect(q!.measured).toMatch(
      /^1\.5 min \(the latest complete run of that mode: run of 2026-12-03T09:00:00Z/,
    );
  });

  it('counts a run at or over its bound as missed, and a mode without a whole run as missed', () => {
    const quick = report('quick', '2026-12-03T09:00:00Z', each(QUICK, 20), 120);
    const [w, q] = timeTargets(quick, undefined);
    expect(w).toMatchObject({ measured: 'not measured', met: false });
    expect(w!.why).toContain('npm run bench');
    // 120 s is not under 2 min
    expect(q).toMatchObject({
      met: false,
      measured:
        '2.0 min (run of 2026-12-03T09:00:00Z, load average 0.50 / 0.25 / 0.13 before, 1.50 / 1.00 / 0.75 after)',
    });
  });

  it('takes the sum of the sections’ own times when sections were merged in', () => {
    const base = report('full', '2026-12-03T10:00:00Z', each(FULL, 100), 1200);
    const m = merged(base, report('full', '2026-12-03T11:00:00Z', { scaling: 40 }, 41), ['scaling'], false);
    // 8 × 100 s + 40 s = 840 s = 14.0 min (the first run's 1,200 s no longer stands for the tables)
    expect(runTime(m).seconds).toBe(840);
    const [w] = timeTargets(m, undefined);
    expect(w).toMatchObject({ met: true });
    expect(w!.measured).toMatch(
      /^14\.0 min \(sum of the sections’ own times; scaling measured in separate runs\)$/,
    );
  });
});

describe('whole runs', () => {
  it('knows a whole run of each mode', () => {
    expect(isWhole(report('full', 'd', each(FULL, 1), 9))).toBe(true);
    expect(isWhole(report('quick', 'd', each(QUICK, 1), 7))).toBe(true);
    expect(isWhole(report('full', 'd', each(QUICK, 1), 7))).toBe(false);
    expect(isWhole(report('full', 'd', { scaling: 1 }, 1))).toBe(false);
    const base = report('full', 'd', each(FULL, 1), 9);
    expect(isWhole(merged(base, report('full', 'e', { load: 1 }, 1), ['load'], false))).toBe(false);
  });

  it('finds the latest whole run of a mode among the results, passing over partial and other runs', () => {
    const dir = mkdtempSync(join(tmpdir(), 'voidcast-bench-results-'));
    dirs.push(dir);
    const put = (name: string, r: Report) => writeFileSync(join(dir, name), JSON.stringify(r));
    put('2026-12-03T100000Z.json', report('full', '2026-12-03T10:00:00Z', each(FULL, 60), 600));
    put('2026-12-03T110000Z.json', report('full', '2026-12-03T11:00:00Z', { scaling: 70 }, 70));
    put('2026-12-03T120000Z-quick.json', report('quick', '2026-12-03T12:00:00Z', each(QUICK, 10), 70));
    put('2026-12-03T130000Z-quick.json', report('quick', '2026-12-03T13:00:00Z', each(QUICK, 12), 84));
    writeFileSync(join(dir, '2026-12-03T140000Z.json'), '{"half-writ');
    put('merged.json', report('full', '2026-12-03T15:00:00Z', each(FULL, 1), 9));
    expect(latestWhole(dir, 'full')?.date).toBe('2026-12-03T10:00:00Z');
    expect(latestWhole(dir, 'quick')?.date).toBe('2026-12-03T13:00:00Z');
    expect(latestWhole(join(dir, 'absent'), 'full')).toBeUndefined();
  });
});

describe('markdown', () => {
  it('puts the run-time rows first in the Targets table and states each section’s time', () => {
    const full = report('full', '2026-12-03T10:00:00Z', each(FULL, 60), 600);
    full.targets = timeTargets(full, undefined);
    const md = markdown(full);
    expect(md).toContain(
      '(10.0 min in all; load average 0.50 / 0.25 / 0.13 before, 1.50 / 1.00 / 0.75 after).',
    );
    expect(md).toContain(`Time per section (wall): ${FULL.map((n) => `${n} 60 s`).join(', ')}.`);
    const rows = md
      .split('\n')
      .filter((l) => l.startsWith('| ') && !l.startsWith('| section') && !l.startsWith('| measured'));
    expect(rows[0]).toMatch(
      /^\| run \| whole run, `npm run bench` \| < 15 min \| 10\.0 min .* \| met \| {2}\|$/,
    );
    expect(rows[1]).toMatch(
      /^\| run \| quick run, `npm run bench -- quick` \| < 2 min \| not measured \| \*\*missed\*\* \|/,
    );
    expect(rows[2]).toBe('| import | import target | goal | x | met |  |');
  });

  it('states CPU beside wall time where the report has it', () => {
    const full = report('full', '2026-12-03T10:00:00Z', each(FULL, 60), 600);
    full.cpuSeconds = 300;
    for (const s of full.sections) s.cpuSeconds = 30;
    full.targets = timeTargets(full, undefined);
    const md = markdown(full);
    // 300 s = 5.0 min of CPU (hand computation)
    expect(md).toContain('; the whole run 10.0 min wall / 5.0 min CPU.');
    expect(md).toContain('import 60 s / 30 s, scans 60 s / 30 s');
    expect(full.targets[0]!.measured).toMatch(/; 5\.0 min of CPU\)$/);
  });

  it('writes an older report without run-level load averages or time targets', () => {
    const old = report('full', '2026-12-03T10:00:00Z', each(FULL, 60), 600);
    delete old.loadAvgBefore;
    delete old.loadAvgAfter;
    const md = markdown(old);
    expect(md).toContain('load average not recorded before');
    expect(md).not.toContain('| run |');
  });
});
