-- Engine: signed-off dispositions (bond / re-clean / hold) of a pair or a lot.
-- A record keeps what the call was made from: the inputs' hash (sha256 of the canonical
-- serialisation of every input the figures depend on), the model and spec versions, the figures
-- and the reasons as JSON, who signed and when. Records are never updated; a new sign-off adds a row.
CREATE TABLE dispositions (
  id INTEGER PRIMARY KEY AUTOINCREMENT,
  subject_kind TEXT NOT NULL CHECK (subject_kind IN ('pair', 'lot')),
  subject_id TEXT NOT NULL,
  call TEXT NOT NULL CHECK (call IN ('bond', 're-clean', 'hold')),
  proposed_call TEXT NOT NULL CHECK (proposed_call IN ('bond', 're-clean', 'hold')),
  inputs_hash TEXT NOT NULL CHECK (length(inputs_hash) = 64),
  model_version TEXT NOT NULL,
  spec_version TEXT NOT NULL,
  figures_json TEXT NOT NULL,
  reasons_json TEXT NOT NULL,
  signed_by TEXT NOT NULL CHECK (length(trim(signed_by)) > 0),
  comment TEXT,
  signed_at_ms INTEGER NOT NULL,
  assessed_at_ms INTEGER NOT NULL
);
CREATE INDEX dispositions_subject ON dispositions (subject_kind, subject_id, signed_at_ms);
