/**
 * `npm run bench`: every benchmark in bench/, each measured against its baseline in the same run,
 * then the results as JSON (bench/results/<UTC date-time>[-quick].json, not committed) and the
 * tables of docs/performance.md (between its generated-section markers).
 *
 *   npm run bench                 every workload at full size (target: under 15 minutes on two cores)
 *   npm run bench -- quick        small sizes and bounds (target: under 2 minutes); says so beside each target
 *   npm run bench -- load assess  only the named sections (no docs written unless every one ran)
 *   BENCH_RUNS=n                  measured runs per figure (after the warm-up)
 *   --no-docs                     do not rewrite docs/performance.md
 *   --merge=<report.json>         with named sections: put them into that earlier report (a full run's
 *                                 bench/results/*.json), each marked with its own run, and write the
 *                                 tables of the merged report (the other sections' figures kept)
 *
 * Sections: import, scans, assess, scaling, load, tuning, audit, match, calibrate (the last two print their own
 * figures; in quick mode they are left out, as their sizes are fixed).
 *
 * Each section prints a line when it starts (how far into the run) and one when it ends (its time and
 * the load average before and after); the JSON keeps each section's seconds and load averages. The
 * run's own time is a pair of rows of the Targets table: the whole run under 15 minutes and the quick
 * run under 2, this run's mode measured by this run, the other mode taken from its latest whole run
 * in bench/results (its date and load average stated).
 */
import { existsSync, mkdirSync, readdirSync, readFileSync, writeFileSync } from 'node:fs';
import { cpus, loadavg, totalmem } from 'node:os';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { type BenchConfig, cpuSecondsSoFar, fmt, runsFrom, type Section, type Target } from './common.ts';

const ROOT = join(dirname(fileURLToPath(import.meta.url)), '..');
const DOC = join(ROOT, 'docs', 'performance.md');
export const BEGIN = '<!-- bench:begin (written by npm run bench; edit above or below) -->';
export const END = '<!-- bench:end -->';

type Runner = (cfg: BenchConfig) => Promise<Section>;

/** The console's own log, kept before a printing benchmark's lines are captured. */
const print = console.log.bind(console);

/** Benchmarks that print their own figures: their lines are kept as the section's table. */
function printed(name: string, load: () => Promise<{ run: () => Promise<void> }>, data: string): Runner {
  return async () => {
    const lines: string[] = [];
    const log = console.log;
    console.log = (...a: unknown[]) => {
      const l = a.map(String).join(' ');
      lines.push(l);
      print(`  ${l}`);
    };
    try {
      await (await load()).run();
    } finally {
      console.log = log;
    }
    return { name, data, figures: [], targets: [], table: ['```', ...lines, '```'].join('\n') };
  };
}

const SECTIONS: { name: string; quick: boolean; run: Runner }[] = [
  { name: 'import', quick: true, run: async (c) => (await import('./import.ts')).run(c) },
  { name: 'scans', quick: true, run: async (c) => (await import('./scans-read.ts')).run(c) },
  { name: 'assess', quick: true, run: async (c) => (await import('./assess.ts')).run(c) },
  { name: 'scaling', quick: true, run: async (c) => (await import('./scaling.ts')).run(c) },
  { name: 'load', quick: true, run: async (c) => (await import('./load.ts')).run(c) },
  { name: 'tuning', quick: true, run: async (c) => (await import('./tuning.ts')).run(c) },
  { name: 'audit', quick: true, run: async (c) => (await import('./audit.ts')).run(c) },
  {
    name: 'match',
    quick: false,
    run: printed(
      'match',
      () => import('./match.ts'),
      'two scans of 100,000 defects, matched as learning matches them',
    ),
  },
  {
    name: 'calibrate',
    quick: false,
    run: printed(
      'calibrate',
      () => import('./calibrate.ts'),
      'the demo’s bonded lots calibrated from their inspections',
    ),
  },
];

export interface Report {
  date: string;
  mode: 'full' | 'quick';
  machine: { cpu: string; cores: number; memoryGb: number; node: string; platform: string };
  sections: (Section & {
    loadAvgBefore: number[];
    loadAvgAfter: number[];
    /** Set when the section was measured in a later run merged into this report (--merge). */
    separateRun?: { date: string; mode: 'full' | 'quick'; command: string };
  })[];
  seconds: number;
  /** CPU seconds of the bench process and its waited-for children over the run (absent in older reports). */
  cpuSeconds?: number;
  /** Load average (1 / 5 / 15 min) when the run started and when it ended (absent in older reports). */
  loadAvgBefore?: number[];
  loadAvgAfter?: number[];
  /**
   * The run's own time against the issue's bounds (whole run < 15 min, quick run < 2 min): the mode
   * of this run measured here, the other mode from its latest whole run in bench/results.
   */
  targets?: Target[];
}

/** The issue's bounds on the bench's own time, in seconds. */
export const FULL_LIMIT_S = 15 * 60;
export const QUICK_LIMIT_S = 2 * 60;

/** Whether a report holds every section of its mode, each from that run (not merged in). */
export function isWhole(r: Report): boolean {
  return SECTIONS.every(
    (def) =>
      (r.mode === 'quick' && !def.quick) || r.sections.some((s) => s.name === def.name && !s.separateRun),
  );
}

const la = (x: number[] | undefined) => (x ? x.map((v) => v.toFixed(2)).join(' / ') : 'not recorded');

/**
 * The time a report stands for: its run's total, or, when sections were measured in separate runs
 * and merged in, the sum of the sections' own times (the runner's overhead between sections is
 * under a second).
 */
export function runTime(r: Report): { seconds: number; how: string } {
  const separate = r.sections.filter((s) => s.separateRun);
  if (separate.length === 0)
    return {
      seconds: r.seconds,
      how: `run of ${r.date}, load average ${la(r.loadAvgBefore)} before, ${la(r.loadAvgAfter)} after${r.cpuSeconds !== undefined ? `; ${fmt(r.cpuSeconds / 60, 1)} min of CPU` : ''}`,
    };
  return {
    seconds: r.sections.reduce((a, s) => a + (s.seconds ?? 0), 0),
    how: `sum of the sections’ own times; ${separate.map((s) => s.name).join(', ')} measured in separate runs`,
  };
}

/**
 * The rows of the Targets table for the bench's own time. `r`'s mode is measured from `r`; the other
 * mode from `other`, its latest whole run (undefined: none recorded, counted as missed).
 */
export function timeTargets(r: Report, other?: Report): Target[] {
  const full = r.mode === 'full' ? r : other;
  const quick = r.mode === 'quick' ? r : other;
  const row = (name: string, limitS: number, x: Report | undefined, command: string): Target => {
    const goal = `< ${limitS / 60} min`;
    if (!x)
      return {
        name,
        target: goal,
        measured: 'not measured',
        met: false,
        why: `no whole run of \`${command}\` in bench/results`,
      };
    const t = runTime(x);
    return {
      name,
      target: goal,
      measured: `${fmt(t.seconds / 60, 1)} min (${x === r ? '' : 'the latest complete run of that mode: '}${t.how})`,
      met: t.seconds < limitS,
      why: t.seconds < limitS ? undefined : 'see the time per section above the tables',
    };
  };
  return [
    row('whole run, `npm run bench`', FULL_LIMIT_S, full, 'npm run bench'),
    row('quick run, `npm run bench -- quick`', QUICK_LIMIT_S, quick, 'npm run bench -- quick'),
  ];
}

/** The latest whole run of `mode` among the reports in `dir` (bench/results), if any. */
export function latestWhole(dir: string, mode: Report['mode']): Report | undefined {
  if (!existsSync(dir)) return undefined;
  const files = readdirSync(dir)
    .filter((f) => /^\d{4}-\d{2}-\d{2}T\d{6}Z(-quick)?\.json$/.test(f))
    .filter((f) => f.endsWith('-quick.json') === (mode === 'quick'))
    .sort()
    .reverse();
  for (const f of files) {
    try {
      const r = JSON.parse(readFileSync(join(dir, f), 'utf8')) as Report;
      if (r.mode === mode && isWhole(r)) return r;
    } catch {
      // an unreadable or half-written report is passed over
    }
  }
  return undefined;
}

function machine(): Report['machine'] {
  const c = cpus();
  return {
    cpu: c[0]?.model ?? 'unknown',
    cores: c.length,
    memoryGb: Math.round(totalmem() / 2 ** 30),
    node: process.version,
    platform: `${process.platform} ${process.arch}`,
  };
}

const esc = (s: string) => s.replace(/\|/g, '\\|');

/** The generated part of docs/performance.md. */
export function markdown(r: Report): string {
  const out: string[] = [];
  const t = runTime(r);
  const separate = r.sections.some((s) => s.separateRun);
  out.push(
    `Run of \`npm run bench${r.mode === 'quick' ? ' -- quick' : ''}\` on ${r.date} (${fmt(r.seconds / 60, 1)} min in all` +
      (separate
        ? `; with the sections measured in separate runs merged in, the sections’ own times sum to ${fmt(t.seconds / 60, 1)} min).`
        : `; load average ${la(r.loadAvgBefore)} before, ${la(r.loadAvgAfter)} after).`),
    '',
    `Time per section (wall${r.sections.some((s) => s.cpuSeconds !== undefined) ? ' / CPU of the bench process and the load section’s server' : ''}): ${r.sections
      .map(
        (s) =>
          `${s.name} ${Math.round(s.seconds ?? 0)} s${s.cpuSeconds !== undefined ? ` / ${Math.round(s.cpuSeconds)} s` : ''}`,
      )
      .join(
        ', ',
      )}${r.cpuSeconds !== undefined && !separate ? `; the whole run ${fmt(r.seconds / 60, 1)} min wall / ${fmt(r.cpuSeconds / 60, 1)} min CPU` : ''}.`,
    '',
    `Machine: ${r.machine.cpu}, ${r.machine.cores} cores, ${r.machine.memoryGb} GB, Node.js ${r.machine.node}, ${r.machine.platform}. ` +
      'The machine is shared with other work: absolute figures are noisy; the ratios against baselines measured in the same run are what the targets use. ' +
      'Load average (1 / 5 / 15 min) before and after each section is given with it.',
    '',
    '### Targets',
    '',
    '| section | target | goal | measured | met | why / remark |',
    '|---|---|---|---|---|---|',
  );
  for (const x of r.targets ?? [])
    out.push(
      `| run | ${esc(x.name)} | ${esc(x.target)} | ${esc(x.measured)} | ${x.met ? 'met' : '**missed**'} | ${esc(x.why ?? '')} |`,
    );
  for (const s of r.sections)
    for (const t of s.targets)
      out.push(
        `| ${s.name} | ${esc(t.name)} | ${esc(t.target)} | ${esc(t.measured)} | ${t.met ? 'met' : '**missed**'} | ${esc(t.why ?? '')} |`,
      );
  out.push('', '### Figures', '');
  for (const s of r.sections) {
    out.push(
      `#### ${s.name}`,
      '',
      `Data: ${s.data}. Load average ${la(s.loadAvgBefore)} before, ${la(s.loadAvgAfter)} after; ${fmt(s.seconds ?? 0, 0)} s.` +
        (s.separateRun
          ? ` Measured in a separate run, \`${s.separateRun.command}\` on ${s.separateRun.date}${s.separateRun.mode === 'quick' ? ' (quick sizes)' : ''}, on the same machine.`
          : ''),
      '',
    );
    if (s.figures.length) {
      out.push(
        '| measured | value | baseline (same run) | baseline value | ratio | note |',
        '|---|---|---|---|---|---|',
      );
      for (const f of s.figures)
        out.push(
          `| ${esc(f.what)} | ${fmt(f.value)} ${f.unit} | ${esc(f.baseline?.what ?? '—')} | ${f.baseline ? `${fmt(f.baseline.value)} ${f.baseline.unit}` : '—'} | ${f.ratio !== undefined ? `${fmt(f.ratio)} ×` : '—'}${f.ratioNote ? ` (${esc(f.ratioNote)})` : ''} | ${esc(f.note ?? '')} |`,
        );
      out.push('');
    }
    for (const g of s.growth ?? []) {
      out.push(
        `Growth of ${g.path} with ${g.unit}: **n^${g.exponent.toFixed(2)}** (least squares in log–log over ${g.sizes.map((n) => n.toExponential(0)).join(', ')}; median CPU ms ${g.ms.map((m) => fmt(m)).join(', ')}).`,
        '',
      );
    }
    if (s.table) out.push(s.table, '');
  }
  return out.join('\n');
}

async function main() {
  const args = process.argv.slice(2);
  const quick = args.includes('quick');
  const names = args.filter((a) => !a.startsWith('-') && a !== 'quick' && SECTIONS.some((s) => s.name === a));
  const cfg: BenchConfig = { quick, runs: runsFrom({ quick }, 7, 3), log: (l) => print(`  ${l}`) };
  const t0 = performance.now();
  const cpu0 = cpuSecondsSoFar();
  const runLoadBefore = loadavg();
  const sections: Report['sections'] = [];
  const todo = SECTIONS.filter((s) => (names.length > 0 ? names.includes(s.name) : !quick || s.quick));
  const clock = (ms: number) => {
    const sec = Math.round(ms / 1000);
    return `${Math.floor(sec / 60)}:${String(sec % 60).padStart(2, '0')}`;
  };
  for (const [i, s] of todo.entries()) {
    console.log(
      `— bench ${s.name} (${i + 1} of ${todo.length}; ${clock(performance.now() - t0)} into the run) —`,
    );
    const before = loadavg();
    const ts = performance.now();
    const cs = cpuSecondsSoFar();
    const sec = await s.run(cfg);
    sec.seconds = (performance.now() - ts) / 1000;
    sec.cpuSeconds = cpuSecondsSoFar() - cs;
    sections.push({ ...sec, loadAvgBefore: before, loadAvgAfter: loadavg() });
    for (const t of sec.targets)
      console.log(
        `  ${t.met ? 'met   ' : 'MISSED'} ${t.name}: ${t.measured}${t.why && !t.met ? ` — ${t.why}` : ''}`,
      );
    console.log(
      `  ${s.name}: ${Math.round(sec.seconds)} s wall, ${Math.round(sec.cpuSeconds)} s CPU (load average ${la(before)} → ${la(loadavg())}); ${clock(performance.now() - t0)} into the run`,
    );
  }
  const report: Report = {
    date: new Date().toISOString().replace(/\.\d+Z$/, 'Z'),
    mode: quick ? 'quick' : 'full',
    machine: machine(),
    sections,
    seconds: (performance.now() - t0) / 1000,
    cpuSeconds: cpuSecondsSoFar() - cpu0,
    loadAvgBefore: runLoadBefore,
    loadAvgAfter: loadavg(),
  };
  const dir = join(ROOT, 'bench', 'results');
  // Only a whole run measures its mode's time (a run of named sections is merged or stands alone).
  if (names.length === 0) report.targets = timeTargets(report, latestWhole(dir, quick ? 'full' : 'quick'));
  mkdirSync(dir, { recursive: true });
  const file = join(dir, `${report.date.replace(/:/g, '')}${quick ? '-quick' : ''}.json`);
  writeFileSync(file, `${JSON.stringify(report, null, 2)}\n`);
  console.log(
    `results: ${file} (${fmt(report.seconds / 60, 1)} min wall, ${fmt(report.cpuSeconds! / 60, 1)} min CPU; load average ${la(report.loadAvgBefore)} → ${la(report.loadAvgAfter)})`,
  );
  for (const t of report.targets ?? [])
    console.log(`${t.met ? 'met   ' : 'MISSED'} ${t.name}: ${t.target}: ${t.measured}`);
  const mergeFrom = args.find((a) => a.startsWith('--merge='))?.slice('--merge='.length);
  if (mergeFrom && names.length > 0 && !args.includes('--no-docs')) {
    // The merged report replaces the earlier one, so that later merges add to it.
    const base = JSON.parse(readFileSync(mergeFrom, 'utf8')) as Report;
    const all = merged(base, report, names, quick);
    all.targets = timeTargets(all, latestWhole(dir, all.mode === 'full' ? 'quick' : 'full'));
    writeFileSync(mergeFrom, `${JSON.stringify(all, null, 2)}\n`);
    writeDoc(all);
    console.log(`sections ${names.join(', ')} merged into ${mergeFrom}; tables written to ${DOC}`);
  } else if (names.length === 0 && !args.includes('--no-docs')) writeDoc(report);
}

/** An earlier report with the named sections of a later run put in (replaced or added in runner order). */
export function merged(base: Report, later: Report, names: string[], quick: boolean): Report {
  const command = `npm run bench -- ${quick ? 'quick ' : ''}${names.join(' ')}`;
  const mark = (s: Report['sections'][number]) => ({
    ...s,
    separateRun: { date: later.date, mode: later.mode, command },
  });
  const sections = SECTIONS.flatMap((def) => {
    const fresh = later.sections.find((s) => s.name === def.name);
    if (fresh) return [mark(fresh)];
    const old = base.sections.find((s) => s.name === def.name);
    return old ? [old] : [];
  });
  return { ...base, sections };
}

export function writeDoc(report: Report): void {
  const doc = readFileSync(DOC, 'utf8');
  const a = doc.indexOf(BEGIN);
  const b = doc.indexOf(END);
  if (a < 0 || b < a) throw new Error(`${DOC}: the generated-section markers are missing`);
  writeFileSync(DOC, `${doc.slice(0, a + BEGIN.length)}\n\n${markdown(report)}\n${doc.slice(b)}`);
  console.log(`tables written to ${DOC}`);
}

if (process.argv[1] && fileURLToPath(import.meta.url) === process.argv[1]) await main();
