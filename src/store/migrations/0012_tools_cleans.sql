-- Ingest: tools (with their chambers) and cleans, from a tools JSON file (docs/formats.md "Tools").
-- A tool-level row has chamber '' (empty text, so that the primary key stays unique); a chamber
-- row overrides the tool row for steps that name that chamber.
CREATE TABLE tools (
  tool_id TEXT NOT NULL CHECK (length(tool_id) > 0),
  chamber TEXT NOT NULL DEFAULT '',
  name TEXT NOT NULL,
  tool_kind TEXT NOT NULL,
  -- Adders per wafer pass, normalised to SI: {"model":"power-law",...} or {"model":"bands",...};
  -- NULL: the file states no adders for this tool or chamber.
  adders_json TEXT,
  -- 95 % of passes within ×/÷ this factor of the stated level (≥ 1).
  adder_uncertainty_factor REAL NOT NULL CHECK (adder_uncertainty_factor >= 1),
  import_id INTEGER NOT NULL REFERENCES imports(id),
  PRIMARY KEY (tool_id, chamber)
);

CREATE TABLE cleans (
  id TEXT PRIMARY KEY CHECK (length(id) > 0),
  name TEXT NOT NULL,
  tool_id TEXT,
  chamber TEXT,
  recipe TEXT,
  -- 'logistic-log-d': PRE(d) = max_efficiency / (1 + exp(−(log10 d − log10 d50) / width_decades));
  -- 'bands': measured before/after counts per size band (bands_json), efficiency 1 − after/before.
  curve TEXT NOT NULL CHECK (curve IN ('logistic-log-d', 'bands')),
  max_efficiency REAL CHECK (max_efficiency IS NULL OR (max_efficiency >= 0 AND max_efficiency <= 1)),
  half_size_m REAL CHECK (half_size_m IS NULL OR half_size_m > 0),
  width_decades REAL CHECK (width_decades IS NULL OR width_decades > 0),
  bands_json TEXT,
  import_id INTEGER NOT NULL REFERENCES imports(id),
  CHECK ((curve = 'logistic-log-d' AND max_efficiency IS NOT NULL AND half_size_m IS NOT NULL AND width_decades IS NOT NULL)
      OR (curve = 'bands' AND bands_json IS NOT NULL))
);
CREATE INDEX cleans_tool ON cleans (tool_id, recipe);
