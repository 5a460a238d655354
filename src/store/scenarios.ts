/**
 * Saved what-if scenarios (table `scenarios`, migration 0022): append-only rows of a name, the
 * levers as JSON, an optional target (pair or lot), who saved it and when. The store keeps the levers
 * opaque (the engine validates them: the store does not import the engine). Saving under a name that
 * exists adds a row; the latest row of a name is the one the name loads.
 */
import type { Db } from './db.ts';
import { writeTransaction } from './writer.ts';

export interface NewStoredScenario {
  name: string;
  /** Serialised with JSON.stringify. */
  scenario: unknown;
  target: { kind: 'pair' | 'lot'; id: string } | null;
  createdBy: string;
  createdAtMs: number;
}

export interface StoredScenario {
  id: number;
  name: string;
  scenario: unknown;
  target: { kind: 'pair' | 'lot'; id: string } | null;
  createdBy: string;
  createdAtMs: number;
}

interface Row {
  id: number;
  name: string;
  levers_json: string;
  target_kind: 'pair' | 'lot' | null;
  target_id: string | null;
  created_by: string;
  created_at_ms: number;
}

function of(r: Row): StoredScenario {
  return {
    id: r.id,
    name: r.name,
    scenario: JSON.parse(r.levers_json),
    target: r.target_kind && r.target_id ? { kind: r.target_kind, id: r.target_id } : null,
    createdBy: r.created_by,
    createdAtMs: r.created_at_ms,
  };
}

function hasTable(db: Db): boolean {
  return Boolean(db.prepare("SELECT 1 FROM sqlite_master WHERE type = 'table' AND name = 'scenarios'").get());
}

/** Stores a scenario; returns its id. */
export function insertScenario(db: Db, s: NewStoredScenario): number {
  return writeTransaction(db, () =>
    Number(
      db
        .prepare(
          `INSERT INTO scenarios (name, levers_json, target_kind, target_id, created_by, created_at_ms)
           VALUES (?, ?, ?, ?, ?, ?)`,
        )
        .run(
          s.name,
          JSON.stringify(s.scenario),
          s.target?.kind ?? null,
          s.target?.id ?? null,
          s.createdBy,
          s.createdAtMs,
        ).lastInsertRowid,
    ),
  );
}

/** Every saved scenario, newest first (optionally those made for one target). */
export function readScenarios(db: Db, target?: { kind: 'pair' | 'lot'; id: string }): StoredScenario[] {
  if (!hasTable(db)) return [];
  const rows = target
    ? (db
        .prepare('SELECT * FROM scenarios WHERE target_kind = ? AND target_id = ? ORDER BY id DESC')
        .all(target.kind, target.id) as Row[])
    : (db.prepare('SELECT * FROM scenarios ORDER BY id DESC').all() as Row[]);
  return rows.map(of);
}

/** One saved scenario by id, or null. */
export function readScenario(db: Db, id: number): StoredScenario | null {
  if (!hasTable(db)) return null;
  const r = db.prepare('SELECT * FROM scenarios WHERE id = ?').get(id) as Row | undefined;
  return r ? of(r) : null;
}

/** The latest scenario saved under a name, or null. */
export function readScenarioByName(db: Db, name: string): StoredScenario | null {
  if (!hasTable(db)) return null;
  const r = db.prepare('SELECT * FROM scenarios WHERE name = ? ORDER BY id DESC LIMIT 1').get(name) as
    | Row
    | undefined;
  return r ? of(r) : null;
}
