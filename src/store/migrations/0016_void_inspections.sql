-- Ingest: post-bond void inspections with their voids packed like scan defects
-- (docs/formats.md "Void inspections"). Void positions are in the bond frame: the bottom wafer's
-- frame (origin at the centre, x right, y up, notch down, seen from its device side), metres.
CREATE TABLE void_inspections (
  id INTEGER PRIMARY KEY,
  inspection_key TEXT NOT NULL UNIQUE CHECK (length(inspection_key) > 0),
  pair_id TEXT NOT NULL REFERENCES pairs(id),
  method TEXT NOT NULL CHECK (method IN ('infrared', 'acoustic')),
  stage TEXT NOT NULL CHECK (stage IN ('after-contact', 'after-anneal')),
  tool_id TEXT,
  smallest_void_m REAL NOT NULL CHECK (smallest_void_m > 0),
  time_ms INTEGER NOT NULL,
  time_text TEXT NOT NULL,
  convention TEXT NOT NULL,
  void_count INTEGER NOT NULL CHECK (void_count >= 0),
  x_m BLOB NOT NULL CHECK (length(x_m) = 8 * void_count),
  y_m BLOB NOT NULL CHECK (length(y_m) = 8 * void_count),
  diameter_m BLOB NOT NULL CHECK (length(diameter_m) = 8 * void_count),
  class_codes BLOB NOT NULL CHECK (length(class_codes) = void_count),
  content_sha256 TEXT NOT NULL CHECK (length(content_sha256) = 64),
  import_id INTEGER NOT NULL REFERENCES imports(id),
  line INTEGER NOT NULL
);
CREATE INDEX void_inspections_pair ON void_inspections (pair_id, time_ms);
