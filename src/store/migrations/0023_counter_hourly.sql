-- Hourly aggregates of counter samples, per location, channel (particles ≥ a size), occupancy state
-- and UTC hour: what the Areas page and the contamination audit read instead of the raw samples.
-- Kept by the counter-sample import in the same transaction as the samples (src/store/counter-hourly.ts,
-- refreshCounterHourly); this migration fills it from the samples already stored.
--
-- A sample belongs to the hour its start falls in. "Usable" samples are those not flagged as an
-- instrument fault (flag 1) or a sentinel (flag 4); sums, the maximum and the concentration are over
-- usable samples only, the counts of flags over all samples. counter_ge(counts, mode, i) and
-- bit_or(x) are SQL functions the store registers on every connection (src/store/counter-hourly.ts).
CREATE TABLE counter_hourly (
  location INTEGER NOT NULL REFERENCES locations (id),
  -- Channel: particles ≥ this size, whole nanometres (0.1 µm = 100).
  diameter_nm INTEGER NOT NULL,
  -- ISO 14644-1 occupancy state as in counter_samples: 0 not stated, 1 as-built, 2 at-rest, 3 operational.
  room_state INTEGER NOT NULL,
  -- Start of the UTC hour, ms since 1970.
  hour_ms INTEGER NOT NULL,
  -- Samples starting in the hour, all and usable.
  n INTEGER NOT NULL,
  n_usable INTEGER NOT NULL,
  -- Σ counts ≥ size and Σ sampled volume (m³) of the usable samples.
  count_sum REAL NOT NULL,
  volume_m3 REAL NOT NULL,
  -- Σ of the usable samples' own concentrations ≥ size, per m³ (÷ n_usable: the plain mean of samples).
  conc_sum REAL NOT NULL,
  -- Largest single usable sample concentration ≥ size, per m³ (NULL: no usable sample).
  max_per_m3 REAL,
  -- Smallest single usable sample volume (m³) and duration (ms) (sample-volume adequacy; NULL: none usable).
  min_volume_m3 REAL,
  min_duration_ms INTEGER,
  -- OR of the samples' flag bitmasks, and how many samples carry each flag the audit reports.
  flags INTEGER NOT NULL,
  n_fault INTEGER NOT NULL,
  n_lower_bound INTEGER NOT NULL,
  n_sentinel INTEGER NOT NULL,
  n_zero_run INTEGER NOT NULL,
  n_gap INTEGER NOT NULL,
  PRIMARY KEY (location, diameter_nm, room_state, hour_ms)
) WITHOUT ROWID;

INSERT INTO counter_hourly
SELECT s.location,
       CAST(round(json_extract(ch.value, '$[0]') * 1e9) AS INTEGER) AS diameter_nm,
       s.room_state,
       s.start_ms - (((s.start_ms % 3600000) + 3600000) % 3600000) AS hour_ms,
       count(*),
       sum((s.flags & 5) = 0),
       coalesce(sum(CASE WHEN (s.flags & 5) = 0 THEN counter_ge(s.counts, cs.mode, ch.key) END), 0),
       coalesce(sum(CASE WHEN (s.flags & 5) = 0 THEN s.volume_m3 END), 0),
       coalesce(sum(CASE WHEN (s.flags & 5) = 0 THEN counter_ge(s.counts, cs.mode, ch.key) / s.volume_m3 END), 0),
       max(CASE WHEN (s.flags & 5) = 0 THEN counter_ge(s.counts, cs.mode, ch.key) / s.volume_m3 END),
       min(CASE WHEN (s.flags & 5) = 0 THEN s.volume_m3 END),
       min(CASE WHEN (s.flags & 5) = 0 THEN s.duration_ms END),
       bit_or(s.flags),
       sum((s.flags & 1) <> 0),
       sum((s.flags & 2) <> 0),
       sum((s.flags & 4) <> 0),
       sum((s.flags & 8) <> 0),
       sum((s.flags & 16) <> 0)
  FROM counter_samples s
  JOIN counter_channel_sets cs ON cs.id = s.channel_set
  JOIN json_each(cs.sizes) ch
 GROUP BY s.location, diameter_nm, s.room_state, hour_ms;
