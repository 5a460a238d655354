/**
 * Parameter sets in the database: reading them (with their values checked), proposing one from the
 * fits, adopting one, going back to the typed values. With loader.ts (and parallel.ts's worker) the
 * engine's only database access; the store keeps the rows (src/store/parameter-sets.ts), the engine
 * checks the values and computes their hash (parameters.ts).
 *
 * Adoption is always a person's act: proposing stores a set and changes no assessment; adopting
 * makes every later assessment use it and name it; reverting returns them to the typed values.
 */
import type { Db } from '../store/db.ts';
import {
  adoptedParameterSet,
  adoptParameterSet,
  getParameterSet,
  insertParameterSet,
  listParameterSets,
  revertToTypedValues,
  type StoredParameterSet,
} from '../store/parameter-sets.ts';
import { EngineInputError } from './pair.ts';
import type { ParameterSet, ParameterValues } from './parameter-set-types.ts';
import { checkParameterValues, emptyParameterValues, parameterValuesHash } from './parameters.ts';

function toParameterSet(s: StoredParameterSet): ParameterSet {
  const checked = checkParameterValues(s.values);
  if (!checked.ok)
    throw new EngineInputError(
      `parameter set ${s.version} ("${s.label}") holds values the engine cannot use: ${checked.issues.join('; ')}`,
    );
  return {
    id: s.id,
    version: s.version,
    label: s.label,
    state: s.state,
    values: checked.values,
    notes: s.notes,
    createdAtMs: s.createdAtMs,
    createdBy: s.createdBy,
    adoptedAtMs: s.adoptedAtMs,
    adoptedBy: s.adoptedBy,
    retiredAtMs: s.retiredAtMs,
    retiredBy: s.retiredBy,
    valuesHash: s.valuesHash,
  };
}

/** The adopted parameter set, or null when the typed values apply. */
export function readAdoptedParameterSet(db: Db): ParameterSet | null {
  const s = adoptedParameterSet(db);
  return s ? toParameterSet(s) : null;
}

/** Every stored parameter set with its state, newest version first. */
export function readParameterSets(db: Db): ParameterSet[] {
  return listParameterSets(db).map(toParameterSet);
}

/** One parameter set, or null. */
export function readParameterSet(db: Db, id: number): ParameterSet | null {
  const s = getParameterSet(db, id);
  return s ? toParameterSet(s) : null;
}

export type ProposeOutcome =
  | { ok: true; set: ParameterSet }
  | { ok: false; code: 'empty' | 'invalid'; message: string; issues: string[]; notes: string[] };

/**
 * Stores the fits' values as a proposed parameter set (the next version), for a person to adopt —
 * nothing changes in any assessment until someone does. The learn commands call this with what
 * their fits produced; `notes` say what the fits found too thin to propose.
 *
 * Refused, storing nothing: values that fail the checks (checkParameterValues: each problem named by
 * its path), no value at all (a set must propose something: the notes are handed back), or no label
 * or creator.
 */
export function proposeParameterSet(
  db: Db,
  parts: Partial<ParameterValues>,
  notes: string[],
  label: string,
  createdBy: string,
  nowMs: number = Date.now(),
): ProposeOutcome {
  const refuse = (code: 'empty' | 'invalid', message: string, issues: string[] = []): ProposeOutcome => ({
    ok: false,
    code,
    message,
    issues,
    notes,
  });
  if (typeof label !== 'string' || !label.trim())
    return refuse('invalid', 'label: a label for the set is required.');
  if (typeof createdBy !== 'string' || !createdBy.trim())
    return refuse('invalid', 'createdBy: the name of whoever proposes the set is required.');
  const checked = checkParameterValues({ ...emptyParameterValues(), ...parts });
  if (!checked.ok)
    return refuse('invalid', `The values cannot be used: ${checked.issues.join('; ')}`, checked.issues);
  const v = checked.values;
  const count =
    Object.keys(v.adders).length +
    Object.keys(v.removal).length +
    Object.keys(v.voidSize).length +
    Object.keys(v.unexplainedVoids).length;
  if (count === 0)
    return refuse(
      'empty',
      notes.length
        ? `Nothing to propose: ${notes.join(' ')}`
        : 'Nothing to propose: the fits produced no value.',
    );
  const stored = insertParameterSet(db, {
    label: label.trim(),
    values: v,
    valuesHash: parameterValuesHash(v),
    notes,
    createdBy: createdBy.trim(),
    createdAtMs: nowMs,
  });
  return { ok: true, set: readParameterSet(db, stored.id)! };
}

/**
 * Adopts a parameter set: from now on every assessment uses its values and names it; the set
 * adopted before (if any) is retired. Null when there is no such set.
 */
export function adoptParameterSetInDb(
  db: Db,
  id: number,
  by: string,
  nowMs: number = Date.now(),
  alsoKnownAs: readonly string[] = [],
): { changed: boolean; set: ParameterSet; previous: ParameterSet | null } | null {
  const name = typeof by === 'string' ? by.trim() : '';
  if (!name) throw new EngineInputError('by: the name of the person adopting the set is required.');
  const set = readParameterSet(db, id); // checks the values are usable before anyone depends on them
  if (!set) return null;
  // A second person looks at every set: its proposer does not adopt it, under any of their names.
  if (set.state === 'proposed' && isSamePerson(set.createdBy, [name, ...alsoKnownAs]))
    throw new EngineInputError(
      `parameter set ${id} was proposed by ${set.createdBy}: another person has to adopt it.`,
    );
  const out = adoptParameterSet(db, id, name, nowMs);
  if (!out.ok) return null;
  return {
    changed: out.changed,
    set: readParameterSet(db, id)!,
    previous: out.changed && out.previousId !== null ? readParameterSet(db, out.previousId) : null,
  };
}

/** Whether a recorded name is one of a person's names (trimmed, case and inner spaces ignored). */
export function isSamePerson(recorded: string, names: readonly string[]): boolean {
  const norm = (t: string) => t.trim().replace(/\s+/g, ' ').toLowerCase();
  const r = norm(recorded);
  return r !== '' && names.some((n) => norm(n) === r);
}

/** Goes back to the typed values (no set adopted) in one action; says which set it retired. */
export function revertToTypedValuesInDb(
  db: Db,
  by: string,
  nowMs: number = Date.now(),
): { changed: boolean; retired: ParameterSet | null } {
  const name = typeof by === 'string' ? by.trim() : '';
  if (!name) throw new EngineInputError('by: the name of the person reverting is required.');
  const out = revertToTypedValues(db, name, nowMs);
  return {
    changed: out.changed,
    retired: out.retiredId === null ? null : readParameterSet(db, out.retiredId),
  };
}
