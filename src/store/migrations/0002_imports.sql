-- Ingest bookkeeping: one row per accepted file (a rejected file leaves no row), keyed by content.
-- Re-importing the same bytes of the same kind is recognised by (kind, sha256) and changes nothing.
CREATE TABLE imports (
  id INTEGER PRIMARY KEY,
  kind TEXT NOT NULL,
  file_name TEXT NOT NULL,
  sha256 TEXT NOT NULL,
  status TEXT NOT NULL CHECK (status IN ('imported', 'partial')),
  bytes INTEGER NOT NULL,
  rows_read INTEGER NOT NULL,
  rows_stored INTEGER NOT NULL,
  rows_rejected INTEGER NOT NULL,
  duplicates INTEGER NOT NULL,
  -- JSON: how the file was read (delimiter, decimal separator, BOM, line break; declared or detected).
  dialect TEXT NOT NULL,
  -- JSON object of the file's `# key: value` metadata block.
  metadata TEXT NOT NULL,
  -- JSON array of notes (detected delimiter, ignored metadata keys, rows updated).
  notes TEXT NOT NULL,
  -- JSON array of the rows rejected from a 'partial' import: {file, line, column, value, rule}.
  issues TEXT NOT NULL,
  imported_at TEXT NOT NULL,
  UNIQUE (kind, sha256)
);

-- Data-quality flags found in an import, summarised (per-row flags live with the rows themselves).
CREATE TABLE import_flags (
  id INTEGER PRIMARY KEY,
  import_id INTEGER NOT NULL REFERENCES imports (id) ON DELETE CASCADE,
  code TEXT NOT NULL,
  count INTEGER NOT NULL,
  detail TEXT NOT NULL
);
CREATE INDEX import_flags_import ON import_flags (import_id);
