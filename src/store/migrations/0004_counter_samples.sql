-- Airborne particle-counter samples, shaped for the engine's reads: clustered by (location, start),
-- so two weeks of one location is one contiguous range of the primary key (no index look-ups).

-- Counter instruments by the id files use.
CREATE TABLE counters (
  id INTEGER PRIMARY KEY,
  counter_id TEXT NOT NULL UNIQUE
);

-- The channel layout of a sample: count mode and channel bounds (m). `sizes` is canonical JSON
-- [[lower_m, upper_m or null], ...] in ascending order; cumulative channels have upper null.
CREATE TABLE counter_channel_sets (
  id INTEGER PRIMARY KEY,
  mode TEXT NOT NULL CHECK (mode IN ('cumulative', 'differential')),
  sizes TEXT NOT NULL,
  channel_count INTEGER NOT NULL CHECK (channel_count >= 1),
  UNIQUE (mode, sizes)
);

CREATE TABLE counter_samples (
  location INTEGER NOT NULL REFERENCES locations (id),
  -- Sample start, UTC, ms since 1970-01-01T00:00:00Z.
  start_ms INTEGER NOT NULL,
  counter INTEGER NOT NULL REFERENCES counters (id),
  duration_ms INTEGER NOT NULL CHECK (duration_ms > 0),
  -- Sampled air volume, m³.
  volume_m3 REAL NOT NULL CHECK (volume_m3 > 0),
  channel_set INTEGER NOT NULL REFERENCES counter_channel_sets (id),
  -- Raw counts in the set's mode: channel_count little-endian IEEE-754 doubles.
  counts BLOB NOT NULL,
  -- Per-sample data-quality bitmask (src/ingest/kinds/counter-samples.ts, SAMPLE_FLAGS):
  -- 1 fault, 2 lower bound, 4 sentinel, 8 zero run, 16 gap before, 32 time backwards,
  -- 256 flow status, 512 laser status, 1024 overload status, 2048 saturation.
  flags INTEGER NOT NULL,
  -- ISO 14644-1 occupancy state: 0 not stated, 1 as-built, 2 at-rest, 3 operational.
  room_state INTEGER NOT NULL,
  import_id INTEGER NOT NULL REFERENCES imports (id) ON DELETE CASCADE,
  -- Line of the row in the imported file.
  line INTEGER NOT NULL,
  -- The de-duplication key (counter, location, start, duration), ordered for range reads.
  PRIMARY KEY (location, start_ms, counter, duration_ms)
) WITHOUT ROWID;
