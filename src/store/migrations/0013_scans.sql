-- Ingest: surface scans, one row per scan with its defects packed (docs/formats.md "Surface scans").
-- Defects are normalised to the internal wafer frame (origin at the centre, x right, y up, notch
-- down, seen from the front side) in metres and stored column-wise as little-endian Float64 arrays
-- (x_m, y_m, diameter_m: 8 bytes per defect each) and a Uint8 class code array (class_codes, see
-- src/store/scans.ts DEFECT_CLASSES), so that the engine reads a whole lot in a few large reads.
CREATE TABLE scans (
  id INTEGER PRIMARY KEY,
  scan_key TEXT NOT NULL UNIQUE CHECK (length(scan_key) > 0),
  wafer_id TEXT NOT NULL REFERENCES wafers(id),
  step TEXT,
  tool_id TEXT,
  chamber TEXT,
  recipe TEXT,
  film TEXT,
  time_ms INTEGER NOT NULL,
  -- The scan time as written in the file (with its offset), for the audit trail.
  time_text TEXT NOT NULL,
  wafer_diameter_m REAL NOT NULL CHECK (wafer_diameter_m > 0),
  edge_exclusion_m REAL NOT NULL CHECK (edge_exclusion_m >= 0),
  threshold_m REAL NOT NULL CHECK (threshold_m > 0),
  -- The file's coordinate convention as declared, e.g. "origin=centre x=right y=up view=front notch=270".
  convention TEXT NOT NULL,
  defect_count INTEGER NOT NULL CHECK (defect_count >= 0),
  x_m BLOB NOT NULL CHECK (length(x_m) = 8 * defect_count),
  y_m BLOB NOT NULL CHECK (length(y_m) = 8 * defect_count),
  diameter_m BLOB NOT NULL CHECK (length(diameter_m) = 8 * defect_count),
  class_codes BLOB NOT NULL CHECK (length(class_codes) = defect_count),
  -- sha256 of the normalised scan (header and defects): the same scan sent again is a duplicate.
  content_sha256 TEXT NOT NULL CHECK (length(content_sha256) = 64),
  import_id INTEGER NOT NULL REFERENCES imports(id),
  line INTEGER NOT NULL
);
CREATE INDEX scans_wafer_time ON scans (wafer_id, time_ms);
