-- Foundation: key/value settings of this installation (e.g. whether the demo was loaded).
CREATE TABLE settings (
  key TEXT PRIMARY KEY,
  value TEXT NOT NULL,
  updated_at TEXT NOT NULL
);
