import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterEach, describe, expect, it } from 'vitest';
import {
  appliedVersions,
  loadMigrations,
  migrate,
  openDatabase,
  openDataDir,
} from '../../../src/store/db.ts';

const dirs: string[] = [];
function tempDir(): string {
  const d = mkdtempSync(join(tmpdir(), 'voidcast-mig-'));
  dirs.push(d);
  return d;
}
afterEach(() => {
  for (const d of dirs.splice(0)) rmSync(d, { recursive: true, force: true });
});

describe('migrations', () => {
  it('creates the database file on first open, with WAL and foreign keys on', () => {
    const dir = tempDir();
    const db = openDataDir(dir);
    expect(db.pragma('journal_mode', { simple: true })).toBe('wal');
    expect(db.pragma('foreign_keys', { simple: true })).toBe(1);
    expect(appliedVersions(db)).toEqual(loadMigrations().map((m) => m.version));
    db.close();
  });

  it('ships migrations with unique, increasing versions starting at 1', () => {
    const versions = loadMigrations().map((m) => m.version);
    expect(versions[0]).toBe(1);
    expect([...versions].sort((a, b) => a - b)).toEqual(versions);
    expect(new Set(versions).size).toBe(versions.length);
  });

  it('upgrades a database made by an earlier schema version with its rows intact', () => {
    const file = join(tempDir(), 'old.db');
    const all = loadMigrations();
    // Build the database as the first release left it: only migration 0001, with a row in it.
    const old = openDatabase(file);
    migrate(old, { upTo: 1 });
    old
      .prepare(
        "INSERT INTO settings (key, value, updated_at) VALUES ('operator-note', 'kept', '2026-01-01T00:00:00Z')",
      )
      .run();
    expect(appliedVersions(old)).toEqual([1]);
    old.close();

    const db = openDatabase(file);
    const applied = migrate(db);
    expect(applied).toEqual(all.filter((m) => m.version > 1).map((m) => m.version));
    expect(appliedVersions(db)).toEqual(all.map((m) => m.version));
    expect(db.prepare("SELECT value FROM settings WHERE key = 'operator-note'").get()).toEqual({
      value: 'kept',
    });
    // A second start applies nothing.
    expect(migrate(db)).toEqual([]);
    db.close();
  });

  it('rolls a failing migration back whole, leaving the earlier schema and its record', () => {
    const dir = tempDir();
    writeFileSync(join(dir, '0001_a.sql'), 'CREATE TABLE a (x INTEGER);');
    writeFileSync(join(dir, '0002_b.sql'), 'CREATE TABLE b (x INTEGER); INSERT INTO nowhere VALUES (1);');
    const db = openDatabase(':memory:');
    expect(() => migrate(db, { migrations: loadMigrations(dir) })).toThrow(/no such table: nowhere/);
    expect(appliedVersions(db)).toEqual([1]);
    const tables = db.prepare("SELECT name FROM sqlite_master WHERE type='table' ORDER BY name").all();
    expect(tables).toEqual([{ name: 'a' }, { name: 'schema_migrations' }]);
  });

  it('refuses two migrations with the same version', () => {
    const dir = tempDir();
    writeFileSync(join(dir, '0001_a.sql'), 'SELECT 1;');
    writeFileSync(join(dir, '0001_b.sql'), 'SELECT 1;');
    expect(() => loadMigrations(dir)).toThrow('two migrations share version 1: a and b');
  });
});
