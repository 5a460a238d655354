/**
 * Parameter sets (tables `parameter_sets` and `parameter_set_events`, migration 0021).
 *
 * A set is stored once and never changed (the database refuses an UPDATE or DELETE): its values as
 * JSON, their hash, the notes of the fits, who created it and when. Adoption is a log of events,
 * append-only as well: `adopt` makes a set the one assessments use, `revert` goes back to the typed
 * values (tools file, products) and names the set it retired. The latest event decides which set is
 * adopted, so at most one is, and the history of every set stays readable:
 * - **proposed**: never adopted;
 * - **adopted**: the set of the latest event, when that event is an adoption;
 * - **retired**: adopted once, no longer (another set was adopted after it, or the line went back
 *   to the typed values). A retired set may be adopted again; that is a new event.
 *
 * The store keeps the values opaque (the engine validates them and computes the hash: the store
 * does not import the engine).
 */
import type { Db } from './db.ts';
import { writeTransaction } from './writer.ts';

export type StoredParameterSetState = 'proposed' | 'adopted' | 'retired';

export interface NewParameterSet {
  label: string;
  /** Serialised with JSON.stringify. */
  values: unknown;
  valuesHash: string;
  notes: string[];
  createdBy: string;
  createdAtMs: number;
}

export interface StoredParameterSet {
  id: number;
  version: number;
  label: string;
  state: StoredParameterSetState;
  values: unknown;
  valuesHash: string;
  notes: string[];
  createdBy: string;
  createdAtMs: number;
  /** The latest adoption of this set (null: never adopted). */
  adoptedAtMs: number | null;
  adoptedBy: string | null;
  /** When the latest adoption ended, and by whom (null: never adopted, or adopted now). */
  retiredAtMs: number | null;
  retiredBy: string | null;
}

export interface ParameterSetEvent {
  id: number;
  action: 'adopt' | 'revert';
  setId: number;
  by: string;
  atMs: number;
}

interface SetRow {
  id: number;
  version: number;
  label: string;
  values_json: string;
  values_hash: string;
  notes_json: string;
  created_by: string;
  created_at_ms: number;
}

interface EventRow {
  id: number;
  action: 'adopt' | 'revert';
  set_id: number;
  by_name: string;
  at_ms: number;
}

function hasTables(db: Db): boolean {
  return Boolean(
    db.prepare("SELECT 1 FROM sqlite_master WHERE type = 'table' AND name = 'parameter_set_events'").get(),
  );
}

function eventOf(r: EventRow): ParameterSetEvent {
  return { id: r.id, action: r.action, setId: r.set_id, by: r.by_name, atMs: r.at_ms };
}

/** Every adoption and revert, oldest first. */
export function readParameterSetEvents(db: Db): ParameterSetEvent[] {
  if (!hasTables(db)) return [];
  return (db.prepare('SELECT * FROM parameter_set_events ORDER BY id').all() as EventRow[]).map(eventOf);
}

function latestEvent(db: Db): EventRow | null {
  return (
    (db.prepare('SELECT * FROM parameter_set_events ORDER BY id DESC LIMIT 1').get() as
      | EventRow
      | undefined) ?? null
  );
}

/** The id of the adopted set, or null when the typed values apply. */
export function adoptedParameterSetId(db: Db): number | null {
  if (!hasTables(db)) return null;
  const e = latestEvent(db);
  return e && e.action === 'adopt' ? e.set_id : null;
}

/** The sets' stored rows with their states, from the rows and the log (events oldest first). */
function withStates(rows: SetRow[], events: ParameterSetEvent[]): StoredParameterSet[] {
  const last = events.at(-1);
  const adoptedId = last?.action === 'adopt' ? last.setId : null;
  return rows.map((r) => {
    let adoptedAtMs: number | null = null;
    let adoptedBy: string | null = null;
    let retiredAtMs: number | null = null;
    let retiredBy: string | null = null;
    for (let i = 0; i < events.length; i++) {
      const e = events[i]!;
      if (e.action !== 'adopt' || e.setId !== r.id) continue;
      adoptedAtMs = e.atMs;
      adoptedBy = e.by;
      const next = events[i + 1];
      retiredAtMs = next ? next.atMs : null;
      retiredBy = next ? next.by : null;
    }
    return {
      id: r.id,
      version: r.version,
      label: r.label,
      state: r.id === adoptedId ? 'adopted' : adoptedAtMs !== null ? 'retired' : 'proposed',
      values: JSON.parse(r.values_json),
      valuesHash: r.values_hash,
      notes: JSON.parse(r.notes_json) as string[],
      createdBy: r.created_by,
      createdAtMs: r.created_at_ms,
      adoptedAtMs,
      adoptedBy,
      retiredAtMs,
      retiredBy,
    };
  });
}

/** Stores a proposed set with the next version; returns its id and version. */
export function insertParameterSet(db: Db, s: NewParameterSet): { id: number; version: number } {
  return writeTransaction(db, () => {
    const v = db.prepare('SELECT COALESCE(MAX(version), 0) + 1 AS v FROM parameter_sets').get() as {
      v: number;
    };
    const info = db
      .prepare(
        `INSERT INTO parameter_sets (version, label, values_json, values_hash, notes_json, created_by, created_at_ms)
         VALUES (?, ?, ?, ?, ?, ?, ?)`,
      )
      .run(
        v.v,
        s.label,
        JSON.stringify(s.values),
        s.valuesHash,
        JSON.stringify(s.notes),
        s.createdBy,
        Math.round(s.createdAtMs),
      );
    return { id: Number(info.lastInsertRowid), version: v.v };
  });
}

/** Every stored set with its state, newest version first. */
export function listParameterSets(db: Db): StoredParameterSet[] {
  if (!hasTables(db)) return [];
  const rows = db.prepare('SELECT * FROM parameter_sets ORDER BY version DESC').all() as SetRow[];
  return withStates(rows, readParameterSetEvents(db));
}

/** One set with its state, or null. */
export function getParameterSet(db: Db, id: number): StoredParameterSet | null {
  if (!hasTables(db)) return null;
  const row = db.prepare('SELECT * FROM parameter_sets WHERE id = ?').get(id) as SetRow | undefined;
  if (!row) return null;
  const events = (db.prepare('SELECT * FROM parameter_set_events ORDER BY id').all() as EventRow[]).map(
    eventOf,
  );
  return withStates([row], events)[0]!;
}

/** The adopted set, or null when the typed values apply. */
export function adoptedParameterSet(db: Db): StoredParameterSet | null {
  const id = adoptedParameterSetId(db);
  return id === null ? null : getParameterSet(db, id);
}

export type AdoptOutcome =
  | { ok: true; changed: boolean; previousId: number | null }
  | { ok: false; reason: 'not-found' };

/**
 * Adopts a set: one 'adopt' event (the set adopted before, if any, becomes retired). Adopting the
 * set that is adopted already stores nothing (changed: false).
 */
export function adoptParameterSet(db: Db, id: number, by: string, atMs: number): AdoptOutcome {
  return writeTransaction(db, (): AdoptOutcome => {
    if (!db.prepare('SELECT 1 FROM parameter_sets WHERE id = ?').get(id))
      return { ok: false, reason: 'not-found' };
    const current = adoptedParameterSetId(db);
    if (current === id) return { ok: true, changed: false, previousId: current };
    db.prepare(
      "INSERT INTO parameter_set_events (action, set_id, by_name, at_ms) VALUES ('adopt', ?, ?, ?)",
    ).run(id, by, Math.round(atMs));
    return { ok: true, changed: true, previousId: current };
  });
}

/**
 * Goes back to the typed values: one 'revert' event naming the set it retires. With no set adopted
 * it stores nothing (changed: false).
 */
export function revertToTypedValues(
  db: Db,
  by: string,
  atMs: number,
): { changed: boolean; retiredId: number | null } {
  return writeTransaction(db, () => {
    const current = adoptedParameterSetId(db);
    if (current === null) return { changed: false, retiredId: null };
    db.prepare(
      "INSERT INTO parameter_set_events (action, set_id, by_name, at_ms) VALUES ('revert', ?, ?, ?)",
    ).run(current, by, Math.round(atMs));
    return { changed: true, retiredId: current };
  });
}

/**
 * A short stamp that changes whenever a set is stored, adopted or reverted (for caches of
 * assessments, which depend on the adopted set).
 */
export function parameterSetsStamp(db: Db): string {
  if (!hasTables(db)) return '0:0';
  const r = db
    .prepare(
      'SELECT (SELECT COALESCE(MAX(id), 0) FROM parameter_set_events) AS e, (SELECT COALESCE(MAX(id), 0) FROM parameter_sets) AS s',
    )
    .get() as { e: number; s: number };
  return `${r.e}:${r.s}`;
}
