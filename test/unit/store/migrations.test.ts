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

  it('0017 moves the scan blobs to the end of the row and keeps every scan as it was', () => {
    const file = join(tempDir(), 'scans.db');
    const db = openDatabase(file);
    migrate(db, { upTo: 16 });
    db.prepare(
      `INSERT INTO imports (kind, file_name, sha256, status, bytes, rows_read, rows_stored, rows_rejected, duplicates,
         dialect, metadata, notes, issues, imported_at)
       VALUES ('scans', 's.csv', ?, 'imported', 0, 0, 0, 0, 0, '{}', '{}', '[]', '[]', '2026-01-01T00:00:00Z')`,
    ).run('a'.repeat(64));
    db.prepare("INSERT INTO lots (id, product_id, created_import_id) VALUES ('L1', NULL, 1)").run();
    db.prepare("INSERT INTO wafers (id, lot_id, created_import_id) VALUES ('W1', 'L1', 1)").run();
    const blob = (n: number, v: number) =>
      Buffer.from(Float64Array.from({ length: n }, (_, i) => v + i).buffer);
    db.prepare(
      `INSERT INTO scans (scan_key, wafer_id, step, tool_id, chamber, recipe, film, time_ms, time_text, wafer_diameter_m,
         edge_exclusion_m, threshold_m, convention, defect_count, x_m, y_m, diameter_m, class_codes, content_sha256, import_id, line)
       VALUES ('S1', 'W1', 'pre-bond', 'INSP', NULL, 'R', NULL, 1000, '1970-01-01T00:00:01Z', 0.3, 0.003, 4.5e-8,
         'origin=centre', 3000, ?, ?, ?, ?, ?, 1, 7)`,
    ).run(blob(3000, 1), blob(3000, 2), blob(3000, 3), Buffer.alloc(3000, 5), 'b'.repeat(64));
    const before = db.prepare('SELECT * FROM scans').all();
    migrate(db);
    const cols = (db.pragma('table_info(scans)') as { name: string }[]).map((c) => c.name);
    expect(cols.slice(-4)).toEqual(['x_m', 'y_m', 'diameter_m', 'class_codes']);
    const after = db.prepare('SELECT * FROM scans').all() as Record<string, unknown>[];
    expect(after).toHaveLength(1);
    expect(after[0]).toEqual(before[0]); // same values by column name, blobs byte for byte
    const idx = db.prepare("SELECT sql FROM sqlite_master WHERE name = 'scans_wafer_time'").get() as {
      sql: string;
    };
    expect(idx.sql).toMatch(/ON scans \(wafer_id, time_ms\)/);
    db.close();
  });

  it('0021 adds the parameter sets to a database of 0020 with its sign-offs intact, and keeps them append-only', () => {
    const file = join(tempDir(), 'params.db');
    const db = openDatabase(file);
    migrate(db, { upTo: 20 });
    db.prepare(
      `INSERT INTO dispositions (subject_kind, subject_id, call, proposed_call, inputs_hash, model_version, spec_version,
         figures_json, reasons_json, signed_by, comment, signed_at_ms, assessed_at_ms)
       VALUES ('pair', 'P1', 'bond', 'bond', ?, 'voidcast-chain/2', 'spec-1', '{}', '[]', 'A. Signer', NULL, 1000, 900)`,
    ).run('c'.repeat(64));
    const before = db.prepare('SELECT * FROM dispositions').all();
    expect(migrate(db)).toContain(21);
    expect(db.prepare('SELECT * FROM dispositions').all()).toEqual(before);
    db.prepare(
      `INSERT INTO parameter_sets (version, label, values_json, values_hash, notes_json, created_by, created_at_ms)
       VALUES (1, 'fit', '{}', ?, '[]', 'A. Fitter', 5)`,
    ).run('d'.repeat(64));
    db.prepare(
      "INSERT INTO parameter_set_events (action, set_id, by_name, at_ms) VALUES ('adopt', 1, 'A. Adopter', 6)",
    ).run();
    // Append-only: the database itself refuses to change or delete a set or an event.
    expect(() => db.prepare("UPDATE parameter_sets SET values_json = '[]'").run()).toThrow(/append-only/);
    expect(() => db.prepare('DELETE FROM parameter_sets').run()).toThrow(/append-only/);
    expect(() => db.prepare("UPDATE parameter_set_events SET by_name = 'x'").run()).toThrow(/append-only/);
    expect(() => db.prepare('DELETE FROM parameter_set_events').run()).toThrow(/append-only/);
    // An event must name a stored set (foreign key) and a known action.
    expect(() =>
      db
        .prepare(
          "INSERT INTO parameter_set_events (action, set_id, by_name, at_ms) VALUES ('adopt', 9, 'x', 1)",
        )
        .run(),
    ).toThrow(/FOREIGN KEY/);
    expect(() =>
      db
        .prepare(
          "INSERT INTO parameter_set_events (action, set_id, by_name, at_ms) VALUES ('edit', 1, 'x', 1)",
        )
        .run(),
    ).toThrow(/CHECK/);
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
