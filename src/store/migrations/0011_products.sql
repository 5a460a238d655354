-- Ingest: products (one JSON file each, docs/formats.md "Products"). The whole normalised
-- definition (SI units, the engine's ProductInput shape) is kept as JSON; the columns beside it are
-- what lists and joins need. Re-importing a product with the same id and new content replaces it
-- (the import that did so is recorded); the text as written is kept for the audit trail.
CREATE TABLE products (
  id TEXT PRIMARY KEY CHECK (length(id) > 0),
  name TEXT NOT NULL,
  spec_version TEXT NOT NULL,
  bonding_mode TEXT NOT NULL CHECK (bonding_mode IN ('wafer-to-wafer', 'die-to-wafer')),
  wafer_diameter_m REAL NOT NULL CHECK (wafer_diameter_m > 0),
  edge_exclusion_m REAL NOT NULL CHECK (edge_exclusion_m >= 0),
  -- sha256 (hex) of the normalised definition: the same content imported again is a duplicate.
  content_sha256 TEXT NOT NULL CHECK (length(content_sha256) = 64),
  definition_json TEXT NOT NULL,
  source_json TEXT NOT NULL,
  import_id INTEGER NOT NULL REFERENCES imports(id)
);
