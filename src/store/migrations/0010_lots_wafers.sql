-- Ingest: lots and wafers. Created by the scans and ledger imports the first time a file names
-- them (docs/formats.md, "Lots and wafers"); pairs and void inspections only refer to them.
-- Every id is the text the files use, stored verbatim (compared byte for byte).
CREATE TABLE lots (
  id TEXT PRIMARY KEY CHECK (length(id) > 0),
  -- The product of the lot, set by the first pairs file that names it (NULL until then).
  product_id TEXT,
  created_import_id INTEGER NOT NULL REFERENCES imports(id)
);

CREATE TABLE wafers (
  id TEXT PRIMARY KEY CHECK (length(id) > 0),
  lot_id TEXT NOT NULL REFERENCES lots(id),
  created_import_id INTEGER NOT NULL REFERENCES imports(id)
);
CREATE INDEX wafers_lot ON wafers (lot_id, id);
