/**
 * The embedded database: one SQLite file in the data directory (better-sqlite3).
 *
 * WAL journal (readers never block the writer), foreign keys enforced, and versioned
 * migrations from `src/store/migrations/NNNN_name.sql`, each applied in its own transaction
 * and recorded in `schema_migrations`.
 */
import { mkdirSync, readdirSync, readFileSync } from 'node:fs';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';
import Database from 'better-sqlite3';
import { registerCounterFunctions } from './counter-hourly.ts';
import { onWriterWait, writeTransaction } from './writer.ts';

export type Db = Database.Database;

export const DATABASE_FILE_NAME = 'voidcast.db';
const MIGRATIONS_DIR = join(dirname(fileURLToPath(import.meta.url)), 'migrations');

export interface Migration {
  version: number;
  name: string;
  sql: string;
}

/** The migrations shipped with this build, in version order. */
export function loadMigrations(dir: string = MIGRATIONS_DIR): Migration[] {
  const out: Migration[] = [];
  for (const file of readdirSync(dir)) {
    const m = /^(\d{4})_([a-z0-9_-]+)\.sql$/i.exec(file);
    if (!m) continue;
    out.push({ version: Number(m[1]), name: m[2]!, sql: readFileSync(join(dir, file), 'utf8') });
  }
  out.sort((a, b) => a.version - b.version);
  for (let i = 1; i < out.length; i++)
    if (out[i]!.version === out[i - 1]!.version)
      throw new Error(
        `two migrations share version ${out[i]!.version}: ${out[i - 1]!.name} and ${out[i]!.name}`,
      );
  return out;
}

/** Opens (creating if absent) a database file with WAL and foreign keys on. `:memory:` for tests. */
export function openDatabase(file: string): Db {
  if (file !== ':memory:') mkdirSync(dirname(file), { recursive: true });
  const db = new Database(file);
  if (file !== ':memory:') db.pragma('journal_mode = WAL');
  db.pragma('foreign_keys = ON');
  db.pragma('synchronous = NORMAL');
  db.pragma('busy_timeout = 5000');
  registerCounterFunctions(db);
  return db;
}

/** Versions already applied. */
export function appliedVersions(db: Db): number[] {
  db.exec(`CREATE TABLE IF NOT EXISTS schema_migrations (
    version INTEGER PRIMARY KEY,
    name TEXT NOT NULL,
    applied_at TEXT NOT NULL
  )`);
  return (
    db.prepare('SELECT version FROM schema_migrations ORDER BY version').all() as { version: number }[]
  ).map((r) => r.version);
}

/**
 * Applies every pending migration up to `upTo` (default: all), each in one transaction:
 * either a migration and its record land together, or neither does.
 * Returns the versions applied now.
 */
export function migrate(db: Db, opts: { upTo?: number; migrations?: Migration[] } = {}): number[] {
  const done = new Set(appliedVersions(db));
  // SQL functions some migrations call (0023 fills the counter aggregates from the stored samples).
  registerCounterFunctions(db);
  const all = opts.migrations ?? loadMigrations();
  const applied: number[] = [];
  const record = db.prepare('INSERT INTO schema_migrations (version, name, applied_at) VALUES (?, ?, ?)');
  for (const m of all) {
    if (done.has(m.version)) continue;
    if (opts.upTo !== undefined && m.version > opts.upTo) break;
    // Another process may be migrating the same file at this moment: wait for it, then look again.
    const already = writeTransaction(db, () => {
      if (db.prepare('SELECT 1 FROM schema_migrations WHERE version = ?').get(m.version)) return true;
      db.exec(m.sql);
      record.run(m.version, m.name, new Date().toISOString());
      return false;
    });
    if (already) continue;
    applied.push(m.version);
  }
  return applied;
}

/**
 * Opens the data directory's database and brings its schema up to date. `onWait` hears when a write
 * waits for another process (src/store/writer.ts).
 */
export function openDataDir(dataDir: string, onWait?: (message: string) => void): Db {
  const db = openDatabase(join(dataDir, DATABASE_FILE_NAME));
  if (onWait) onWriterWait(db, onWait);
  migrate(db);
  return db;
}

/** A quick health probe: the schema is readable and the latest migration applied. */
export function databaseHealth(db: Db): { ok: boolean; schemaVersion: number; expectedVersion: number } {
  try {
    const row = db.prepare('SELECT MAX(version) AS v FROM schema_migrations').get() as { v: number | null };
    const expected = loadMigrations().at(-1)?.version ?? 0;
    return { ok: (row.v ?? 0) === expected, schemaVersion: row.v ?? 0, expectedVersion: expected };
  } catch {
    return { ok: false, schemaVersion: 0, expectedVersion: loadMigrations().at(-1)?.version ?? 0 };
  }
}
