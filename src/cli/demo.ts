/**
 * The demo loader: imports the Tramontane pilot line (sample-counts/, see docs/demo.md) into a
 * database through the same `importFile` every other import uses, in dependency order (locations,
 * tools, products, counter samples, scans, ledger, pairs, void inspections — the manifest lists them
 * in that order).
 *
 * First start: `voidcast serve` on a fresh data directory calls `loadDemoOnce`, which imports the
 * demo once and records it in the settings table (DEMO_LOADED_SETTING); a later start sees the
 * setting and imports nothing. It also freezes the line's clock (CLOCK_AS_OF_SETTING) at the demo's
 * own "now" — the recorded fortnight ends on 18 October 2026, and the waiting lots are meant to be
 * assessed then, not months later when every Q-time would have run out.
 */
import { existsSync, readFileSync } from 'node:fs';
import { dirname, join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { importFile } from '../ingest/pipeline.ts';
import type { ImportKindName, ImportReport } from '../ingest/types.ts';
import type { Db } from '../store/db.ts';
import { CLOCK_SETTING, getSetting, setSetting } from '../store/settings.ts';
import { writeTransaction } from '../store/writer.ts';

/** Settings key recording that (and when, from which manifest) the demo was loaded. */
export const DEMO_LOADED_SETTING = 'demo.loaded';
/** The frozen clock the pages assess at (src/store/settings.ts). */
export const CLOCK_AS_OF_SETTING = CLOCK_SETTING;

/** sample-counts/ at the repository root (this file is src/cli/demo.ts). */
export const DEFAULT_DEMO_DIR = resolve(dirname(fileURLToPath(import.meta.url)), '..', '..', 'sample-counts');

const KIND_ORDER: readonly ImportKindName[] = [
  'locations',
  'tools',
  'products',
  'counter-samples',
  'scans',
  'ledger',
  'pairs',
  'void-inspections',
];

export interface DemoManifest {
  format: string;
  seed: number;
  asOf: string;
  files: { kind: ImportKindName; path: string; title: string }[];
}

/** Reads and checks the demo's manifest.json; the files come back in dependency order. */
export function readDemoManifest(dir: string = DEFAULT_DEMO_DIR): DemoManifest {
  const p = join(dir, 'manifest.json');
  if (!existsSync(p)) throw new Error(`no demo manifest at ${p} (regenerate it with npm run demo:generate)`);
  const m = JSON.parse(readFileSync(p, 'utf8')) as DemoManifest;
  if (m.format !== 'voidcast demo manifest 1' || !Array.isArray(m.files))
    throw new Error(`${p} is not a voidcast demo manifest (format "${m.format}")`);
  for (const f of m.files)
    if (!KIND_ORDER.includes(f.kind)) throw new Error(`${p}: unknown import kind "${f.kind}" for ${f.path}`);
  if (!Number.isFinite(Date.parse(m.asOf))) throw new Error(`${p}: asOf "${m.asOf}" is not a time`);
  const files = [...m.files].sort((a, b) => KIND_ORDER.indexOf(a.kind) - KIND_ORDER.indexOf(b.kind));
  return { ...m, files };
}

export interface DemoLoadOptions {
  dir?: string;
  /** One line per step (progress, summary). */
  log?: (line: string) => void;
}

export interface DemoLoadResult {
  files: number;
  rows: number;
  duplicates: number;
  /** Data-quality flags raised by the import, summed by code. */
  flags: Record<string, number>;
  asOf: string;
  reports: ImportReport[];
  ms: number;
}

/**
 * Imports every file of the demo. A file that does not import (status rejected or partial) stops
 * the load with an error naming it and its first issue; files imported before it stay (each import
 * is its own transaction), and the settings are not written, so the next start tries again —
 * re-importing an unchanged file is a no-op ('unchanged').
 */
export async function loadDemo(db: Db, opts: DemoLoadOptions = {}): Promise<DemoLoadResult> {
  const dir = opts.dir ?? DEFAULT_DEMO_DIR;
  const log = opts.log ?? (() => {});
  const manifest = readDemoManifest(dir);
  const t0 = Date.now();
  const reports: ImportReport[] = [];
  const flags: Record<string, number> = {};
  let rows = 0;
  let duplicates = 0;
  const n = manifest.files.length;
  let kindFiles = 0;
  let kindRows = 0;
  for (const [i, f] of manifest.files.entries()) {
    const r = await importFile(db, { kind: f.kind, path: join(dir, f.path), displayName: f.path });
    reports.push(r);
    if (r.status !== 'imported' && r.status !== 'unchanged') {
      const first = r.issues[0];
      throw new Error(
        `demo file ${f.path} was ${r.status}${first ? `: line ${first.line}${first.column ? `, column ${first.column}` : ''}: ${first.rule}` : ''}`,
      );
    }
    rows += r.rowsStored;
    duplicates += r.duplicates;
    kindFiles++;
    kindRows += r.rowsStored;
    for (const fl of r.flags) flags[fl.code] = (flags[fl.code] ?? 0) + fl.count;
    // Progress: a line per large file, and one per kind when its last file is in.
    const lastOfKind = manifest.files[i + 1]?.kind !== f.kind;
    const at = `[${String(i + 1).padStart(String(n).length)}/${n}]`;
    if (r.rowsRead >= 10_000) log(`  ${at} ${f.path}: ${r.rowsStored} rows`);
    if (lastOfKind) {
      log(`  ${at} ${f.kind}: ${kindFiles} file${kindFiles === 1 ? '' : 's'}, ${kindRows} rows`);
      kindFiles = 0;
      kindRows = 0;
    }
  }
  return { files: n, rows, duplicates, flags, asOf: manifest.asOf, reports, ms: Date.now() - t0 };
}

/** Whether the demo was loaded into this database already. */
export function demoLoaded(db: Db): boolean {
  return getSetting(db, DEMO_LOADED_SETTING) !== undefined;
}

/**
 * First-start hook: loads the demo unless it was loaded before, then records it and freezes the
 * clock at the demo's "now" (unless a clock is set already). Returns the result, or null when it
 * did nothing.
 */
export async function loadDemoOnce(db: Db, opts: DemoLoadOptions = {}): Promise<DemoLoadResult | null> {
  if (demoLoaded(db)) return null;
  const log = opts.log ?? (() => {});
  log(
    'first start: loading the demo line (Tramontane pilot line, invented data; start with --empty to skip)…',
  );
  const r = await loadDemo(db, opts);
  recordDemo(db, r);
  const flagText = Object.entries(r.flags)
    .map(([k, v]) => `${k} ${v}`)
    .join(', ');
  log(
    `demo loaded: ${r.files} files, ${r.rows} rows in ${(r.ms / 1000).toFixed(1)} s${flagText ? `; data-quality flags: ${flagText}` : ''}; clock set to ${r.asOf}`,
  );
  return r;
}

/** Writes the settings that say the demo is in this database. */
export function recordDemo(db: Db, r: DemoLoadResult): void {
  writeTransaction(db, () => {
    setSetting(db, DEMO_LOADED_SETTING, JSON.stringify({ files: r.files, rows: r.rows, asOf: r.asOf }));
    if (getSetting(db, CLOCK_AS_OF_SETTING) === undefined) setSetting(db, CLOCK_AS_OF_SETTING, r.asOf);
  });
}
