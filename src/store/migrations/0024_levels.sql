-- Alert and action levels derived from data (the contamination audit), per location and channel,
-- append-only: every derivation adds a version; the current levels of a location and channel are its
-- latest version. Levels typed in the locations file stay in location_levels and read as "typed".
CREATE TABLE audit_levels (
  id INTEGER PRIMARY KEY,
  location_id TEXT NOT NULL REFERENCES locations (location_id),
  -- Channel: particles ≥ this size, whole nanometres.
  diameter_nm INTEGER NOT NULL CHECK (diameter_nm > 0),
  -- 1, 2, … per (location, channel).
  version INTEGER NOT NULL CHECK (version >= 1),
  -- Particles per m³ (hourly means); NULL: not set.
  alert_per_m3 REAL CHECK (alert_per_m3 IS NULL OR alert_per_m3 >= 0),
  action_per_m3 REAL CHECK (action_per_m3 IS NULL OR action_per_m3 >= 0),
  method TEXT NOT NULL CHECK (method IN ('percentile', 'log-mean-k-sigma', 'poisson-quantile', 'negbin-quantile', 'class-fraction')),
  -- The name the levels were given (voidcast levels derive --as NAME).
  name TEXT NOT NULL,
  -- Baseline window, UTC ms (NULL for class-fraction levels), and the occupancy state read.
  window_from_ms INTEGER,
  window_to_ms INTEGER,
  occupancy TEXT NOT NULL,
  -- Method parameters, JSON object of numbers.
  parameters TEXT NOT NULL,
  -- Words: how they were derived.
  basis TEXT NOT NULL,
  set_by TEXT NOT NULL,
  set_at_ms INTEGER NOT NULL,
  UNIQUE (location_id, diameter_nm, version)
);

CREATE TRIGGER audit_levels_append_only_update BEFORE UPDATE ON audit_levels
BEGIN
  SELECT RAISE(ABORT, 'audit_levels is append-only: derive a new version instead');
END;
CREATE TRIGGER audit_levels_append_only_delete BEFORE DELETE ON audit_levels
BEGIN
  SELECT RAISE(ABORT, 'audit_levels is append-only: derive a new version instead');
END;
