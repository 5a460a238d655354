/**
 * The parameter-set store: versions ascend, one set is adopted at a time, reverting is one event,
 * the history stays (states derived from an append-only log). Expected values: the sequence of
 * actions each test performs (hand-traced).
 */
import { beforeEach, describe, expect, it } from 'vitest';
import { type Db, migrate, openDatabase } from '../../../src/store/db.ts';
import {
  adoptedParameterSet,
  adoptedParameterSetId,
  adoptParameterSet,
  getParameterSet,
  insertParameterSet,
  listParameterSets,
  parameterSetsStamp,
  readParameterSetEvents,
  revertToTypedValues,
} from '../../../src/store/parameter-sets.ts';

const HASH = (c: string) => c.repeat(64);

function add(db: Db, label: string, hash: string, at = 1000) {
  return insertParameterSet(db, {
    label,
    values: { adders: {}, removal: {}, voidSize: {}, unexplainedVoids: { X: { ratePerPair: 1 } } },
    valuesHash: hash,
    notes: [`note of ${label}`],
    createdBy: 'A. Fitter',
    createdAtMs: at,
  });
}

describe('parameter-set store', () => {
  let db: Db;
  beforeEach(() => {
    db = openDatabase(':memory:');
    migrate(db);
  });

  it('stores proposed sets with ascending versions and reads them back unchanged', () => {
    const a = add(db, 'first', HASH('a'));
    const b = add(db, 'second', HASH('b'), 2000);
    expect([a.version, b.version]).toEqual([1, 2]);
    const list = listParameterSets(db);
    expect(list.map((s) => s.version)).toEqual([2, 1]); // newest first
    const s = getParameterSet(db, a.id)!;
    expect(s).toMatchObject({
      label: 'first',
      state: 'proposed',
      valuesHash: HASH('a'),
      notes: ['note of first'],
      createdBy: 'A. Fitter',
      createdAtMs: 1000,
      adoptedAtMs: null,
      adoptedBy: null,
    });
    expect(s.values).toEqual({
      adders: {},
      removal: {},
      voidSize: {},
      unexplainedVoids: { X: { ratePerPair: 1 } },
    });
    expect(getParameterSet(db, 99)).toBeNull();
    expect(adoptedParameterSet(db)).toBeNull();
  });

  it('adopts one set at a time: the one adopted before becomes retired, with who and when', () => {
    const a = add(db, 'first', HASH('a'));
    const b = add(db, 'second', HASH('b'));
    expect(adoptParameterSet(db, a.id, 'E. One', 5000)).toEqual({
      ok: true,
      changed: true,
      previousId: null,
    });
    expect(adoptedParameterSetId(db)).toBe(a.id);
    expect(adoptParameterSet(db, b.id, 'E. Two', 6000)).toEqual({
      ok: true,
      changed: true,
      previousId: a.id,
    });
    const sa = getParameterSet(db, a.id)!;
    const sb = getParameterSet(db, b.id)!;
    expect(sa).toMatchObject({
      state: 'retired',
      adoptedBy: 'E. One',
      adoptedAtMs: 5000,
      retiredBy: 'E. Two',
      retiredAtMs: 6000,
    });
    expect(sb).toMatchObject({ state: 'adopted', adoptedBy: 'E. Two', adoptedAtMs: 6000, retiredAtMs: null });
    expect(listParameterSets(db).filter((s) => s.state === 'adopted')).toHaveLength(1);
    // Adopting the adopted set again changes nothing and stores nothing.
    expect(adoptParameterSet(db, b.id, 'E. Two', 7000)).toEqual({
      ok: true,
      changed: false,
      previousId: b.id,
    });
    expect(readParameterSetEvents(db)).toHaveLength(2);
    expect(adoptParameterSet(db, 42, 'E. Two', 7000)).toEqual({ ok: false, reason: 'not-found' });
  });

  it('reverts to the typed values in one event, and a retired set can be adopted again', () => {
    const a = add(db, 'first', HASH('a'));
    adoptParameterSet(db, a.id, 'E. One', 5000);
    expect(revertToTypedValues(db, 'E. Three', 8000)).toEqual({ changed: true, retiredId: a.id });
    expect(adoptedParameterSet(db)).toBeNull();
    expect(getParameterSet(db, a.id)).toMatchObject({
      state: 'retired',
      retiredBy: 'E. Three',
      retiredAtMs: 8000,
    });
    // Nothing adopted: a revert stores nothing.
    expect(revertToTypedValues(db, 'E. Three', 9000)).toEqual({ changed: false, retiredId: null });
    adoptParameterSet(db, a.id, 'E. Four', 10000);
    expect(getParameterSet(db, a.id)).toMatchObject({
      state: 'adopted',
      adoptedBy: 'E. Four',
      adoptedAtMs: 10000,
      retiredAtMs: null,
    });
    expect(readParameterSetEvents(db).map((e) => [e.action, e.setId, e.by])).toEqual([
      ['adopt', a.id, 'E. One'],
      ['revert', a.id, 'E. Three'],
      ['adopt', a.id, 'E. Four'],
    ]);
  });

  it('changes its stamp with every stored set and every event, and not otherwise', () => {
    const s0 = parameterSetsStamp(db);
    const a = add(db, 'first', HASH('a'));
    const s1 = parameterSetsStamp(db);
    adoptParameterSet(db, a.id, 'E. One', 5000);
    const s2 = parameterSetsStamp(db);
    adoptParameterSet(db, a.id, 'E. One', 5000); // no change
    expect(parameterSetsStamp(db)).toBe(s2);
    revertToTypedValues(db, 'E. One', 6000);
    const s3 = parameterSetsStamp(db);
    expect(new Set([s0, s1, s2, s3]).size).toBe(4);
  });

  it('reads as "typed values, no sets" on a database without the tables (before migration 0021)', () => {
    const old = openDatabase(':memory:');
    migrate(old, { upTo: 20 });
    expect(listParameterSets(old)).toEqual([]);
    expect(adoptedParameterSet(old)).toBeNull();
    expect(readParameterSetEvents(old)).toEqual([]);
    expect(parameterSetsStamp(old)).toBe('0:0');
  });
});
