-- Ingest: the position accuracy a void inspection states (one standard deviation of its position
-- error per axis, metres; NULL when the file states none — the calibration then applies its
-- documented default, src/engine/learn/calibration-match.ts). Rows stored before keep NULL.
ALTER TABLE void_inspections ADD COLUMN position_sigma_m REAL CHECK (position_sigma_m IS NULL OR position_sigma_m > 0);
