-- Engine: parameter sets — versioned records of values fitted from the line's own data (adders per
-- wafer pass, removal curves, the effective interface energy, the rate of voids no scanned particle
-- explains). A set is stored once and never changed: its values, their hash (sha256 of the canonical
-- serialisation the engine computes) and the notes of the fits that made it.
-- Who adopted which set when is a log of events, also append-only: an 'adopt' event makes its set the
-- one the assessments use; a 'revert' event returns them to the typed values (tools file, products)
-- and names the set it retired. The latest event decides which set is adopted (at most one), so no
-- row is ever rewritten to change a state.
CREATE TABLE parameter_sets (
  id INTEGER PRIMARY KEY AUTOINCREMENT,
  version INTEGER NOT NULL UNIQUE CHECK (version >= 1),
  label TEXT NOT NULL CHECK (length(trim(label)) > 0),
  values_json TEXT NOT NULL,
  values_hash TEXT NOT NULL CHECK (length(values_hash) = 64),
  notes_json TEXT NOT NULL DEFAULT '[]',
  created_by TEXT NOT NULL CHECK (length(trim(created_by)) > 0),
  created_at_ms INTEGER NOT NULL
);

CREATE TRIGGER parameter_sets_keep_values BEFORE UPDATE ON parameter_sets
BEGIN
  SELECT RAISE(ABORT, 'parameter sets are append-only: a stored set is never changed');
END;

CREATE TRIGGER parameter_sets_keep_rows BEFORE DELETE ON parameter_sets
BEGIN
  SELECT RAISE(ABORT, 'parameter sets are append-only: a stored set is never deleted');
END;

CREATE TABLE parameter_set_events (
  id INTEGER PRIMARY KEY AUTOINCREMENT,
  action TEXT NOT NULL CHECK (action IN ('adopt', 'revert')),
  -- adopt: the set adopted; revert: the set retired by going back to the typed values
  set_id INTEGER NOT NULL REFERENCES parameter_sets (id),
  by_name TEXT NOT NULL CHECK (length(trim(by_name)) > 0),
  at_ms INTEGER NOT NULL
);
CREATE INDEX parameter_set_events_set ON parameter_set_events (set_id, id);

CREATE TRIGGER parameter_set_events_keep BEFORE UPDATE ON parameter_set_events
BEGIN
  SELECT RAISE(ABORT, 'the parameter-set log is append-only');
END;

CREATE TRIGGER parameter_set_events_keep_rows BEFORE DELETE ON parameter_set_events
BEGIN
  SELECT RAISE(ABORT, 'the parameter-set log is append-only');
END;
