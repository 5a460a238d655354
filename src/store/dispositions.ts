/**
 * Signed-off dispositions (table `dispositions`, migration 0020). Records are append-only.
 *
 * The store does not decide whether a sign-off is allowed (the engine's signoff checks that the
 * inputs' hash is unchanged); it keeps what it is given and reads it back.
 */
import type { Db } from './db.ts';
import { writeTransaction } from './writer.ts';

export type DispositionCall = 'bond' | 're-clean' | 'hold';

export interface NewDisposition {
  subjectKind: 'pair' | 'lot';
  subjectId: string;
  call: DispositionCall;
  proposedCall: DispositionCall;
  inputsHash: string;
  modelVersion: string;
  specVersion: string;
  /** Serialised with JSON.stringify. */
  figures: unknown;
  reasons: unknown;
  signedBy: string;
  comment: string | null;
  signedAtMs: number;
  assessedAtMs: number;
}

export interface StoredDisposition extends Omit<NewDisposition, 'figures' | 'reasons'> {
  id: number;
  figures: unknown;
  reasons: unknown;
}

interface Row {
  id: number;
  subject_kind: 'pair' | 'lot';
  subject_id: string;
  call: DispositionCall;
  proposed_call: DispositionCall;
  inputs_hash: string;
  model_version: string;
  spec_version: string;
  figures_json: string;
  reasons_json: string;
  signed_by: string;
  comment: string | null;
  signed_at_ms: number;
  assessed_at_ms: number;
}

function fromRow(r: Row): StoredDisposition {
  return {
    id: r.id,
    subjectKind: r.subject_kind,
    subjectId: r.subject_id,
    call: r.call,
    proposedCall: r.proposed_call,
    inputsHash: r.inputs_hash,
    modelVersion: r.model_version,
    specVersion: r.spec_version,
    figures: JSON.parse(r.figures_json),
    reasons: JSON.parse(r.reasons_json),
    signedBy: r.signed_by,
    comment: r.comment,
    signedAtMs: r.signed_at_ms,
    assessedAtMs: r.assessed_at_ms,
  };
}

/** Stores one sign-off; returns its id. */
export function insertDisposition(db: Db, d: NewDisposition): number {
  const info = writeTransaction(db, () =>
    db
      .prepare(
        `INSERT INTO dispositions (subject_kind, subject_id, call, proposed_call, inputs_hash, model_version,
         spec_version, figures_json, reasons_json, signed_by, comment, signed_at_ms, assessed_at_ms)
       VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?)`,
      )
      .run(
        d.subjectKind,
        d.subjectId,
        d.call,
        d.proposedCall,
        d.inputsHash,
        d.modelVersion,
        d.specVersion,
        JSON.stringify(d.figures),
        JSON.stringify(d.reasons),
        d.signedBy,
        d.comment,
        Math.round(d.signedAtMs),
        Math.round(d.assessedAtMs),
      ),
  );
  return Number(info.lastInsertRowid);
}

/** Every sign-off of a subject, oldest first. */
export function readDispositions(
  db: Db,
  subjectKind: 'pair' | 'lot',
  subjectId: string,
): StoredDisposition[] {
  const rows = db
    .prepare('SELECT * FROM dispositions WHERE subject_kind = ? AND subject_id = ? ORDER BY signed_at_ms, id')
    .all(subjectKind, subjectId) as Row[];
  return rows.map(fromRow);
}

/** The latest sign-off of a subject, or null. */
export function latestDisposition(
  db: Db,
  subjectKind: 'pair' | 'lot',
  subjectId: string,
): StoredDisposition | null {
  const row = db
    .prepare(
      'SELECT * FROM dispositions WHERE subject_kind = ? AND subject_id = ? ORDER BY signed_at_ms DESC, id DESC LIMIT 1',
    )
    .get(subjectKind, subjectId) as Row | undefined;
  return row ? fromRow(row) : null;
}
