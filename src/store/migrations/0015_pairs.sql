-- Ingest: bond pairs (docs/formats.md "Pairs"). A wafer is in at most one pair, on one side.
CREATE TABLE pairs (
  id TEXT PRIMARY KEY CHECK (length(id) > 0),
  product_id TEXT NOT NULL REFERENCES products(id),
  lot_id TEXT NOT NULL REFERENCES lots(id),
  top_wafer_id TEXT NOT NULL UNIQUE REFERENCES wafers(id),
  bottom_wafer_id TEXT NOT NULL UNIQUE REFERENCES wafers(id),
  flip_axis TEXT NOT NULL CHECK (flip_axis IN ('x', 'y')),
  -- Counter-clockwise rotation of the flipped top wafer, radians; offsets in metres (bond frame).
  rotation_rad REAL NOT NULL,
  offset_x_m REAL NOT NULL,
  offset_y_m REAL NOT NULL,
  bonder_tool_id TEXT,
  planned_bond_ms INTEGER,
  import_id INTEGER NOT NULL REFERENCES imports(id),
  line INTEGER NOT NULL,
  CHECK (top_wafer_id <> bottom_wafer_id)
);
CREATE INDEX pairs_lot ON pairs (lot_id, id);
