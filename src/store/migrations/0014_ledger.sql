-- Ingest: the exposure ledger (docs/formats.md "Exposure ledger"). A row with wafer_id NULL is a
-- lot-level step: it applies to every wafer of the lot, whenever that wafer becomes known.
CREATE TABLE ledger_steps (
  id INTEGER PRIMARY KEY,
  lot_id TEXT NOT NULL REFERENCES lots(id),
  wafer_id TEXT REFERENCES wafers(id),
  step TEXT NOT NULL CHECK (length(step) > 0),
  kind TEXT NOT NULL CHECK (kind IN ('process', 'clean', 'activation', 'inspection', 'wait', 'transfer', 'bond')),
  tool_id TEXT,
  chamber TEXT,
  recipe TEXT,
  clean_id TEXT,
  location_id TEXT,
  carrier TEXT NOT NULL CHECK (carrier IN ('open', 'closed', 'purged', 'in-tool')),
  orientation TEXT NOT NULL CHECK (orientation IN ('face-up', 'face-down', 'vertical')),
  start_ms INTEGER NOT NULL,
  -- NULL: the step is still running.
  end_ms INTEGER CHECK (end_ms IS NULL OR end_ms >= start_ms),
  reclean_count INTEGER NOT NULL CHECK (reclean_count >= 0),
  import_id INTEGER NOT NULL REFERENCES imports(id),
  line INTEGER NOT NULL
);
CREATE UNIQUE INDEX ledger_steps_key ON ledger_steps (lot_id, ifnull(wafer_id, ''), step, start_ms);
CREATE INDEX ledger_steps_wafer ON ledger_steps (wafer_id, start_ms);
