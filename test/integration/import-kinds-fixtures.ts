/**
 * Shared set-up of the import-kinds tests: a database with the good example files of
 * test/fixtures/good imported in a working order, and a snapshot of every table so that a test can
 * prove a rejected file changed nothing.
 */
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { importFile } from '../../src/ingest/pipeline.ts';
import type { ImportKindName, ImportReport } from '../../src/ingest/types.ts';
import { type Db, migrate, openDatabase } from '../../src/store/db.ts';

export const FIXTURES = fileURLToPath(new URL('../fixtures/', import.meta.url));
export const good = (name: string) => join(FIXTURES, 'good', name);
export const bad = (name: string) => join(FIXTURES, 'bad', name);

/** The good files in an order that satisfies every reference (cleans before products' flags, locations before the ledger). */
export const BASE_FILES: [ImportKindName, string][] = [
  ['tools', 'tools-line.json'],
  ['products', 'products-hybrid-300.json'],
  ['locations', 'locations-for-ledger.csv'],
  ['scans', 'scans-one-wafer.csv'],
  ['scans', 'scans-batch.csv'],
  ['ledger', 'ledger-lot.csv'],
];
export const PAIR_FILES: [ImportKindName, string][] = [['pairs', 'pairs-lot.csv']];
export const INSPECTION_FILES: [ImportKindName, string][] = [
  ['void-inspections', 'void-inspections-pair.csv'],
];

export function freshDb(): Db {
  const db = openDatabase(':memory:');
  migrate(db);
  return db;
}

/** Imports files in order; throws when one is not imported (the set-up itself must be sound). */
export async function importAll(db: Db, files: [ImportKindName, string][]): Promise<ImportReport[]> {
  const out: ImportReport[] = [];
  for (const [kind, name] of files) {
    const r = await importFile(db, { kind, path: good(name) });
    if (r.status !== 'imported')
      throw new Error(`set-up import of ${name} is ${r.status}: ${JSON.stringify(r.issues.slice(0, 3))}`);
    out.push(r);
  }
  return out;
}

/** Every row of every table (BLOBs as hex), for before/after comparisons. */
export function snapshot(db: Db): Record<string, unknown[]> {
  const tables = db
    .prepare("SELECT name FROM sqlite_master WHERE type = 'table' AND name NOT LIKE 'sqlite_%' ORDER BY name")
    .pluck()
    .all() as string[];
  const out: Record<string, unknown[]> = {};
  for (const t of tables) {
    const rows = db.prepare(`SELECT * FROM "${t}"`).all() as Record<string, unknown>[];
    out[t] = rows
      .map((r) =>
        JSON.stringify(r, (_k, v) =>
          v && typeof v === 'object' && v.type === 'Buffer' ? Buffer.from(v.data).toString('hex') : v,
        ),
      )
      .sort();
  }
  return out;
}
