-- Surface scans: the same table with the defect blobs moved to the end of the row.
-- SQLite stores a row's columns in order and spills a long row into a chain of overflow pages, so
-- reading a column that follows the blobs (content_sha256, import_id, line) walked every overflow
-- page of a 20 000-defect scan (about 120 pages) even when only the header was wanted. With the
-- blobs last, header reads stop before them. Rows, ids and the index are kept as they were.
CREATE TABLE scans_blobs_last (
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
  -- sha256 of the normalised scan (header and defects): the same scan sent again is a duplicate.
  content_sha256 TEXT NOT NULL CHECK (length(content_sha256) = 64),
  import_id INTEGER NOT NULL REFERENCES imports(id),
  line INTEGER NOT NULL,
  x_m BLOB NOT NULL CHECK (length(x_m) = 8 * defect_count),
  y_m BLOB NOT NULL CHECK (length(y_m) = 8 * defect_count),
  diameter_m BLOB NOT NULL CHECK (length(diameter_m) = 8 * defect_count),
  class_codes BLOB NOT NULL CHECK (length(class_codes) = defect_count)
);
INSERT INTO scans_blobs_last (id, scan_key, wafer_id, step, tool_id, chamber, recipe, film, time_ms,
    time_text, wafer_diameter_m, edge_exclusion_m, threshold_m, convention, defect_count,
    content_sha256, import_id, line, x_m, y_m, diameter_m, class_codes)
  SELECT id, scan_key, wafer_id, step, tool_id, chamber, recipe, film, time_ms, time_text,
    wafer_diameter_m, edge_exclusion_m, threshold_m, convention, defect_count, content_sha256,
    import_id, line, x_m, y_m, diameter_m, class_codes
  FROM scans;
DROP TABLE scans;
ALTER TABLE scans_blobs_last RENAME TO scans;
CREATE INDEX scans_wafer_time ON scans (wafer_id, time_ms);
