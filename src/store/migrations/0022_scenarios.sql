-- Engine: saved what-if scenarios — a name, the levers (JSON, as src/engine/tuning/types.ts defines
-- them), the pair or lot it was made for (none: any), who saved it and when. A scenario never changes
-- stored data or sign-offs: it is only ever applied to inputs in memory. Saved scenarios are
-- append-only, like parameter sets: saving again under a name adds a new row (the latest row of a
-- name is the one a name loads), so a link to a scenario's id always shows what was saved.
CREATE TABLE scenarios (
  id INTEGER PRIMARY KEY AUTOINCREMENT,
  name TEXT NOT NULL CHECK (length(trim(name)) > 0 AND length(name) <= 200),
  levers_json TEXT NOT NULL,
  target_kind TEXT CHECK (target_kind IN ('pair', 'lot')),
  target_id TEXT,
  created_by TEXT NOT NULL CHECK (length(trim(created_by)) > 0),
  created_at_ms INTEGER NOT NULL,
  CHECK ((target_kind IS NULL) = (target_id IS NULL))
);
CREATE INDEX scenarios_name ON scenarios (name, id);

CREATE TRIGGER scenarios_keep_values BEFORE UPDATE ON scenarios
BEGIN
  SELECT RAISE(ABORT, 'saved scenarios are append-only: save again under the name instead');
END;

CREATE TRIGGER scenarios_keep_rows BEFORE DELETE ON scenarios
BEGIN
  SELECT RAISE(ABORT, 'saved scenarios are append-only: a saved scenario is never deleted');
END;
