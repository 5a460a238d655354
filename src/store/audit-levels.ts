/**
 * Stored alert and action levels of the contamination audit (table audit_levels, migration 0024):
 * append-only versions per location and channel; the latest version holds. Typed levels of the
 * locations file are read from location_levels (src/store/locations.ts).
 */
import type { Db } from './db.ts';
import { writeTransaction } from './writer.ts';

export type StoredLevelMethod =
  | 'percentile'
  | 'log-mean-k-sigma'
  | 'poisson-quantile'
  | 'negbin-quantile'
  | 'class-fraction';

export interface StoredLevel {
  locationId: string;
  diameterNm: number;
  version: number;
  alertPerM3: number | null;
  actionPerM3: number | null;
  method: StoredLevelMethod;
  name: string;
  windowFromMs: number | null;
  windowToMs: number | null;
  occupancy: string;
  parameters: Record<string, number>;
  basis: string;
  setBy: string;
  setAtMs: number;
}

interface Row {
  location_id: string;
  diameter_nm: number;
  version: number;
  alert_per_m3: number | null;
  action_per_m3: number | null;
  method: StoredLevelMethod;
  name: string;
  window_from_ms: number | null;
  window_to_ms: number | null;
  occupancy: string;
  parameters: string;
  basis: string;
  set_by: string;
  set_at_ms: number;
}

function toLevel(r: Row): StoredLevel {
  return {
    locationId: r.location_id,
    diameterNm: r.diameter_nm,
    version: r.version,
    alertPerM3: r.alert_per_m3,
    actionPerM3: r.action_per_m3,
    method: r.method,
    name: r.name,
    windowFromMs: r.window_from_ms,
    windowToMs: r.window_to_ms,
    occupancy: r.occupancy,
    parameters: JSON.parse(r.parameters) as Record<string, number>,
    basis: r.basis,
    setBy: r.set_by,
    setAtMs: r.set_at_ms,
  };
}

function tableExists(db: Db): boolean {
  return (
    db.prepare("SELECT 1 FROM sqlite_master WHERE type = 'table' AND name = 'audit_levels'").get() !==
    undefined
  );
}

/** Appends a version (the next number for its location and channel) and returns it as stored. */
export function appendLevel(db: Db, level: Omit<StoredLevel, 'version'>): StoredLevel {
  return writeTransaction(db, () => {
    const v =
      ((
        db
          .prepare('SELECT max(version) AS v FROM audit_levels WHERE location_id = ? AND diameter_nm = ?')
          .get(level.locationId, level.diameterNm) as { v: number | null }
      ).v ?? 0) + 1;
    db.prepare(
      `INSERT INTO audit_levels (location_id, diameter_nm, version, alert_per_m3, action_per_m3, method, name,
         window_from_ms, window_to_ms, occupancy, parameters, basis, set_by, set_at_ms)
       VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?)`,
    ).run(
      level.locationId,
      level.diameterNm,
      v,
      level.alertPerM3,
      level.actionPerM3,
      level.method,
      level.name,
      level.windowFromMs,
      level.windowToMs,
      level.occupancy,
      JSON.stringify(level.parameters),
      level.basis,
      level.setBy,
      level.setAtMs,
    );
    return { ...level, version: v };
  });
}

/** Every stored version of the given locations' levels, oldest first per location and channel. */
export function listLevelHistory(db: Db, locationIds: readonly string[]): StoredLevel[] {
  if (!tableExists(db) || locationIds.length === 0) return [];
  return (
    db
      .prepare(
        `SELECT * FROM audit_levels WHERE location_id IN (${locationIds.map(() => '?').join(',')})
          ORDER BY location_id, diameter_nm, version`,
      )
      .all(...locationIds) as Row[]
  ).map(toLevel);
}

/** The latest version per location and channel. */
export function currentStoredLevels(db: Db, locationIds: readonly string[]): StoredLevel[] {
  const latest = new Map<string, StoredLevel>();
  for (const l of listLevelHistory(db, locationIds)) latest.set(`${l.locationId}|${l.diameterNm}`, l);
  return [...latest.values()];
}
