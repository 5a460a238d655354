-- Acknowledgements of excursions found by the contamination audit: who read it, when, and what they
-- wrote. Append-only; an excursion's acknowledgement is its latest row. `excursion_id` is the audit's
-- stable id of the excursion (rule, location, channel, start).
CREATE TABLE excursion_acks (
  id INTEGER PRIMARY KEY,
  excursion_id TEXT NOT NULL CHECK (length(excursion_id) BETWEEN 1 AND 300),
  comment TEXT NOT NULL CHECK (length(comment) BETWEEN 1 AND 4000),
  account TEXT NOT NULL,
  at_ms INTEGER NOT NULL
);
CREATE INDEX excursion_acks_by_id ON excursion_acks (excursion_id, id);

CREATE TRIGGER excursion_acks_append_only_update BEFORE UPDATE ON excursion_acks
BEGIN
  SELECT RAISE(ABORT, 'excursion_acks is append-only');
END;
CREATE TRIGGER excursion_acks_append_only_delete BEFORE DELETE ON excursion_acks
BEGIN
  SELECT RAISE(ABORT, 'excursion_acks is append-only');
END;
