/**
 * What every benchmark section hands the runner (bench/run.ts): its figures, each measured against
 * a baseline in the same run, its targets (met or missed, and why), and growth exponents; plus the
 * small statistics they share (median, log–log least squares, CPU time of this process).
 */
import { readFileSync } from 'node:fs';

export interface BenchConfig {
  /** Short sizes and bounds (`npm run bench -- quick`): target: under two minutes in all (a row of the Targets table). */
  quick: boolean;
  /** Measured runs per figure after the warm-up (BENCH_RUNS overrides). */
  runs: number;
  log: (line: string) => void;
}

export interface Figure {
  /** What was measured. */
  what: string;
  /** The measured value, in `unit`. */
  value: number;
  unit: string;
  /** The baseline measured in the same run (what the ratio divides by), and its value. */
  baseline?: { what: string; value: number; unit: string };
  /** value / baseline (or the rate ratio, as `ratioNote` says). */
  ratio?: number;
  ratioNote?: string;
  note?: string;
}

export interface Target {
  name: string;
  /** The target in words, e.g. "≥ 1.0 × sqlite3 .import (CPU)". */
  target: string;
  measured: string;
  met: boolean;
  /** Why it is missed (or a remark when met). */
  why?: string;
}

export interface Growth {
  path: string;
  /** Sizes (n) and the median time at each (ms). */
  sizes: number[];
  ms: number[];
  /** b of t ∝ n^b, least squares in log–log. */
  exponent: number;
  /** What n counts. */
  unit: string;
}

export interface Section {
  name: string;
  /** The data of the section in words (sizes, seeds). */
  data: string;
  figures: Figure[];
  targets: Target[];
  growth?: Growth[];
  /** Any further table, already in Markdown (e.g. the load test's per-route table). */
  table?: string;
  /** Wall time of the section (set by the runner). */
  seconds?: number;
  /** CPU time (user + system) of the bench process and the child processes it waited for (set by the runner). */
  cpuSeconds?: number;
}

export function median(xs: readonly number[]): number {
  const s = [...xs].sort((a, b) => a - b);
  const n = s.length;
  if (n === 0) return Number.NaN;
  return n % 2 ? s[(n - 1) / 2]! : (s[n / 2 - 1]! + s[n / 2]!) / 2;
}

/** b of y = a·x^b by least squares on (ln x, ln y). */
export function logLogSlope(xs: readonly number[], ys: readonly number[]): number {
  const lx = xs.map(Math.log);
  const ly = ys.map(Math.log);
  const n = lx.length;
  const mx = lx.reduce((a, b) => a + b, 0) / n;
  const my = ly.reduce((a, b) => a + b, 0) / n;
  let sxy = 0;
  let sxx = 0;
  for (let i = 0; i < n; i++) {
    sxy += (lx[i]! - mx) * (ly[i]! - my);
    sxx += (lx[i]! - mx) ** 2;
  }
  return sxy / sxx;
}

/** Wall and CPU (user + system of this process) milliseconds of `f`. */
export function timed<T>(f: () => T): { value: T; ms: number; cpuMs: number } {
  const c0 = process.cpuUsage();
  const t0 = performance.now();
  const value = f();
  const ms = performance.now() - t0;
  const c = process.cpuUsage(c0);
  return { value, ms, cpuMs: (c.user + c.system) / 1000 };
}

export async function timedAsync<T>(f: () => Promise<T>): Promise<{ value: T; ms: number; cpuMs: number }> {
  const c0 = process.cpuUsage();
  const t0 = performance.now();
  const value = await f();
  const ms = performance.now() - t0;
  const c = process.cpuUsage(c0);
  return { value, ms, cpuMs: (c.user + c.system) / 1000 };
}

/**
 * CPU seconds (user + system) used so far by this process and by the child processes it has waited
 * for (the load section's server, once it has exited): Node's own count for this process, and on
 * Linux the children's from /proc/self/stat (cutime + cstime, fields 16 and 17, in clock ticks of
 * 1/100 s, the kernel's USER_HZ); elsewhere the children count as 0.
 */
export function cpuSecondsSoFar(): number {
  const c = process.cpuUsage();
  let children = 0;
  try {
    const stat = readFileSync('/proc/self/stat', 'utf8');
    // fields after the command name (which may hold spaces) start at field 3, state
    const f = stat.slice(stat.lastIndexOf(')') + 2).split(' ');
    children = (Number(f[13]) + Number(f[14])) / 100;
  } catch {
    // not Linux: the bench process alone
  }
  return (c.user + c.system) / 1e6 + (Number.isFinite(children) ? children : 0);
}

export function fmt(v: number, digits = 2): string {
  if (!Number.isFinite(v)) return String(v);
  const a = Math.abs(v);
  if (a >= 1000) return Math.round(v).toLocaleString('en-US');
  if (a >= 100) return v.toFixed(0);
  if (a >= 10) return v.toFixed(1);
  return v.toFixed(digits);
}

export function runsFrom(cfg: { quick: boolean }, full: number, quick: number): number {
  const env = Number(process.env.BENCH_RUNS);
  return Number.isFinite(env) && env > 0 ? env : cfg.quick ? quick : full;
}

export function defaultConfig(): BenchConfig {
  const quick = process.argv.includes('quick');
  return { quick, runs: runsFrom({ quick }, 7, 3), log: (l) => console.log(l) };
}
