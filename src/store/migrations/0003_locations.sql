-- Locations: the hierarchy site > area > bay > tool > point, with the air each one holds.
-- `id` is a compact key for counter_samples; `location_id` is the name files use.
CREATE TABLE locations (
  id INTEGER PRIMARY KEY,
  location_id TEXT NOT NULL UNIQUE,
  parent_id TEXT REFERENCES locations (location_id) DEFERRABLE INITIALLY DEFERRED,
  level TEXT NOT NULL CHECK (level IN ('site', 'area', 'bay', 'tool', 'point')),
  name TEXT NOT NULL,
  -- open-room, mini-environment, efem, load-port, purged-carrier, process-module
  environment TEXT NOT NULL,
  -- Target ISO 14644-1:2015 class N (1 to 9 in steps of 0.1); NULL when not classified.
  iso_class REAL CHECK (iso_class IS NULL OR (iso_class >= 1 AND iso_class <= 9)),
  -- Floor area of the classified room, m² (ISO 14644-1:2015 Annex A sizes the sampling plan from it).
  floor_area_m2 REAL CHECK (floor_area_m2 IS NULL OR floor_area_m2 > 0),
  -- Wafer states open to this air, '|'-separated (post-cmp, cleaned, activated, bonded); '' for none.
  exposed_states TEXT NOT NULL,
  -- Downflow air velocity over a horizontal wafer, m/s; NULL: the engine's default.
  air_velocity_m_s REAL CHECK (air_velocity_m_s IS NULL OR air_velocity_m_s > 0),
  -- The import that last wrote this row.
  import_id INTEGER NOT NULL REFERENCES imports (id)
);
CREATE INDEX locations_parent ON locations (parent_id);

-- Alert and action levels of a location: particles per m³ at or above a diameter (m).
CREATE TABLE location_levels (
  location_id TEXT NOT NULL REFERENCES locations (location_id) ON DELETE CASCADE,
  diameter_m REAL NOT NULL,
  alert_per_m3 REAL,
  action_per_m3 REAL,
  PRIMARY KEY (location_id, diameter_m)
) WITHOUT ROWID;
