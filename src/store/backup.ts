/**
 * Online backup of the database through SQLite's backup API (better-sqlite3 `db.backup`), safe while
 * the server or an import writes: the copy is one consistent snapshot.
 *
 * The pages are copied in a single step, inside one read transaction of the source. In WAL mode a
 * reader never blocks a writer, and a single step cannot be restarted by another connection's write
 * (SQLite restarts a step-wise backup when the source changes between steps, which under a steady
 * writer could go on for ever). The copy is written under a temporary name next to the target,
 * checked with `PRAGMA integrity_check`, and only then renamed into place, so a target that exists is
 * always a complete backup.
 */
import { existsSync, renameSync, rmSync, statSync } from 'node:fs';
import Database from 'better-sqlite3';
import type { Db } from './db.ts';

export interface BackupResult {
  file: string;
  pages: number;
  bytes: number;
  /** Newest migration in the copy. */
  schemaVersion: number;
}

/** `PRAGMA integrity_check` of a database file, opened read-only: 'ok' or SQLite's findings. */
export function integrityCheck(file: string): string {
  const db = new Database(file, { readonly: true, fileMustExist: true });
  try {
    const rows = db.pragma('integrity_check') as { integrity_check: string }[];
    return rows.map((r) => r.integrity_check).join('; ');
  } finally {
    db.close();
  }
}

/** Copies `db` to `target` (which must not exist yet). Throws with the reason when it cannot. */
export async function backupDatabase(db: Db, target: string): Promise<BackupResult> {
  if (existsSync(target))
    throw new Error(`${target} exists already; name a new file (a backup never overwrites)`);
  const partial = `${target}.partial-${process.pid}`;
  rmSync(partial, { force: true });
  try {
    // 0x7fffffff pages: everything in the step after the first (which only measures the source).
    const meta = await db.backup(partial, { progress: () => 0x7fffffff });
    const integrity = integrityCheck(partial);
    if (integrity !== 'ok') throw new Error(`the copy failed its integrity check: ${integrity}`);
    const copy = new Database(partial, { readonly: true, fileMustExist: true });
    let schemaVersion = 0;
    try {
      const r = copy.prepare('SELECT MAX(version) AS v FROM schema_migrations').get() as { v: number | null };
      schemaVersion = r.v ?? 0;
    } finally {
      copy.close();
    }
    renameSync(partial, target);
    return { file: target, pages: meta.totalPages, bytes: statSync(target).size, schemaVersion };
  } finally {
    rmSync(partial, { force: true });
  }
}
