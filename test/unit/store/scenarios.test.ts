/**
 * Saved scenarios in the store (migration 0022, src/store/scenarios.ts): a database of 0021 upgrades
 * with its parameter sets intact; rows round-trip; the latest save of a name is the one the name
 * loads; the database refuses to change or delete a row (append-only) and a target half given.
 */
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterEach, describe, expect, it } from 'vitest';
import { migrate, openDatabase } from '../../../src/store/db.ts';
import {
  insertScenario,
  readScenario,
  readScenarioByName,
  readScenarios,
} from '../../../src/store/scenarios.ts';

const dirs: string[] = [];
afterEach(() => {
  for (const d of dirs.splice(0)) rmSync(d, { recursive: true, force: true });
});
function freshFile(): string {
  const d = mkdtempSync(join(tmpdir(), 'voidcast-scen-'));
  dirs.push(d);
  return join(d, 'scen.db');
}

describe('saved scenarios (0022)', () => {
  it('upgrades a database of 0021 with its parameter sets intact', () => {
    const db = openDatabase(freshFile());
    migrate(db, { upTo: 21 });
    db.prepare(
      `INSERT INTO parameter_sets (version, label, values_json, values_hash, notes_json, created_by, created_at_ms)
       VALUES (1, 'fit', '{}', ?, '[]', 'A. Fitter', 5)`,
    ).run('d'.repeat(64));
    const before = db.prepare('SELECT * FROM parameter_sets').all();
    expect(migrate(db)).toContain(22);
    expect(db.prepare('SELECT * FROM parameter_sets').all()).toEqual(before);
    expect(readScenarios(db)).toEqual([]);
    db.close();
  });

  it('round-trips rows, loads the latest save of a name, and refuses changes', () => {
    const db = openDatabase(freshFile());
    migrate(db);
    const scenario = { levers: [{ kind: 'energy', energyJm2: 1 }] };
    const a = insertScenario(db, { name: 'n', scenario, target: null, createdBy: 'A', createdAtMs: 1 });
    const b = insertScenario(db, {
      name: 'n',
      scenario: { levers: [] },
      target: { kind: 'pair', id: 'P1' },
      createdBy: 'B',
      createdAtMs: 2,
    });
    expect(readScenario(db, a)).toEqual({
      id: a,
      name: 'n',
      scenario,
      target: null,
      createdBy: 'A',
      createdAtMs: 1,
    });
    expect(readScenarioByName(db, 'n')?.id).toBe(b);
    expect(readScenarios(db).map((s) => s.id)).toEqual([b, a]);
    expect(readScenarios(db, { kind: 'pair', id: 'P1' }).map((s) => s.id)).toEqual([b]);
    expect(readScenario(db, 999)).toBeNull();
    expect(() => db.prepare("UPDATE scenarios SET levers_json = '{}'").run()).toThrow(/append-only/);
    expect(() => db.prepare('DELETE FROM scenarios').run()).toThrow(/append-only/);
    expect(() =>
      db
        .prepare(
          "INSERT INTO scenarios (name, levers_json, target_kind, target_id, created_by, created_at_ms) VALUES ('x', '{}', 'lot', NULL, 'A', 1)",
        )
        .run(),
    ).toThrow(/CHECK/);
    db.close();
  });
});
