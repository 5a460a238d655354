/**
 * Read helpers for locations (written by the `locations` import kind): the hierarchy with its air
 * attributes and alert/action levels, in SI.
 */
import type { Db } from './db.ts';

export interface LocationLevelRecord {
  /** Levels apply to particles at or above this diameter, m. */
  diameterM: number;
  alertPerM3: number | null;
  actionPerM3: number | null;
}

export interface LocationRecord {
  locationId: string;
  parentId: string | null;
  level: 'site' | 'area' | 'bay' | 'tool' | 'point';
  name: string;
  environment: string;
  isoClass: number | null;
  floorAreaM2: number | null;
  exposedStates: string[];
  airVelocityMps: number | null;
  levels: LocationLevelRecord[];
  importId: number;
}

interface Row {
  location_id: string;
  parent_id: string | null;
  level: LocationRecord['level'];
  name: string;
  environment: string;
  iso_class: number | null;
  floor_area_m2: number | null;
  exposed_states: string;
  air_velocity_m_s: number | null;
  import_id: number;
}

function toRecord(r: Row, levels: LocationLevelRecord[]): LocationRecord {
  return {
    locationId: r.location_id,
    parentId: r.parent_id,
    level: r.level,
    name: r.name,
    environment: r.environment,
    isoClass: r.iso_class,
    floorAreaM2: r.floor_area_m2,
    exposedStates: r.exposed_states === '' ? [] : r.exposed_states.split('|'),
    airVelocityMps: r.air_velocity_m_s,
    levels,
    importId: r.import_id,
  };
}

/** Every location, parents before children (depth-first, siblings by id). */
export function listLocations(db: Db): LocationRecord[] {
  const rows = db.prepare('SELECT * FROM locations ORDER BY location_id').all() as Row[];
  const levels = new Map<string, LocationLevelRecord[]>();
  for (const l of db
    .prepare(
      'SELECT location_id, diameter_m, alert_per_m3, action_per_m3 FROM location_levels ORDER BY diameter_m',
    )
    .all() as {
    location_id: string;
    diameter_m: number;
    alert_per_m3: number | null;
    action_per_m3: number | null;
  }[]) {
    const list = levels.get(l.location_id) ?? [];
    list.push({ diameterM: l.diameter_m, alertPerM3: l.alert_per_m3, actionPerM3: l.action_per_m3 });
    levels.set(l.location_id, list);
  }
  const children = new Map<string | null, Row[]>();
  for (const r of rows) {
    const list = children.get(r.parent_id) ?? [];
    list.push(r);
    children.set(r.parent_id, list);
  }
  const out: LocationRecord[] = [];
  const visit = (parent: string | null) => {
    for (const r of children.get(parent) ?? []) {
      out.push(toRecord(r, levels.get(r.location_id) ?? []));
      visit(r.location_id);
    }
  };
  visit(null);
  return out;
}

export function getLocation(db: Db, locationId: string): LocationRecord | null {
  const r = db.prepare('SELECT * FROM locations WHERE location_id = ?').get(locationId) as Row | undefined;
  if (!r) return null;
  const levels = (
    db
      .prepare(
        'SELECT diameter_m, alert_per_m3, action_per_m3 FROM location_levels WHERE location_id = ? ORDER BY diameter_m',
      )
      .all(locationId) as { diameter_m: number; alert_per_m3: number | null; action_per_m3: number | null }[]
  ).map((l) => ({ diameterM: l.diameter_m, alertPerM3: l.alert_per_m3, actionPerM3: l.action_per_m3 }));
  return toRecord(r, levels);
}

/** The chain from the site down to the location (inclusive); empty when unknown. */
export function locationPath(db: Db, locationId: string): string[] {
  const rows = db
    .prepare(
      `WITH RECURSIVE up(id, parent, depth) AS (
         SELECT location_id, parent_id, 0 FROM locations WHERE location_id = ?
         UNION ALL SELECT l.location_id, l.parent_id, up.depth + 1 FROM locations l JOIN up ON l.location_id = up.parent
         WHERE up.depth < 16)
       SELECT id FROM up ORDER BY depth DESC`,
    )
    .pluck()
    .all(locationId) as string[];
  return rows;
}
