/**
 * Parameter sets end to end through the database: a proposed set changes nothing; adopting it makes
 * the loader apply it, the assessments name it and their inputs' hash change; reverting brings the
 * typed values and the old hash back; a sign-off of an assessment made before the set changed is
 * refused (the hash mechanism); a fit with nothing to propose stores nothing.
 */
import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import { assessLotFromDb, assessPairFromDb, loadPair, signOffPairInDb } from '../../src/engine/loader.ts';
import {
  adoptParameterSetInDb,
  proposeParameterSet,
  readAdoptedParameterSet,
  readParameterSets,
  revertToTypedValuesInDb,
} from '../../src/engine/parameter-sets.ts';
import { parameterValuesHash } from '../../src/engine/parameters.ts';
import { type Db, migrate, openDatabase } from '../../src/store/db.ts';
import { readParameterSetEvents } from '../../src/store/parameter-sets.ts';
import { seedLine, seedPairs } from '../helpers/engine-db.ts';
import { counterSeries, H, line, pair, someParticles, standardWafer, T0 } from '../helpers/engine-inputs.ts';
import {
  fittedAdders,
  fittedRemoval,
  fittedUnexplained,
  fittedVoidSize,
} from '../helpers/parameter-values.ts';

const CH = [0.1e-6, 0.2e-6, 0.3e-6, 0.5e-6, 1e-6, 5e-6];
const ISO5 = [100000, 23700, 10200, 3520, 832, 29];
const AS_OF = T0 + 7 * H;

let db: Db;

beforeEach(() => {
  db = openDatabase(':memory:');
  migrate(db);
  seedLine(
    db,
    line({ counters: { BAY: counterSeries('BAY', T0, T0 + 8 * H, CH, () => ISO5.map((v) => v * 0.01)) } }),
  );
  seedPairs(
    db,
    [0, 1].map((i) =>
      pair(
        `P${i}`,
        standardWafer(`W${i}-T`, someParticles(120, i)),
        standardWafer(`W${i}-B`, someParticles(90, i + 5)),
        {
          bondTimeMs: T0 + 6 * H,
        },
      ),
    ),
  );
});
afterEach(() => db.close());

const PARTS = {
  adders: { ACT: fittedAdders('ACT', null, { countAbove: 4, countLow: 3, countHigh: 6 }) },
  removal: { PBC: fittedRemoval('PBC') },
  voidSize: { 'HB-1': fittedVoidSize('HB-1') },
  unexplainedVoids: {
    'HB-1': fittedUnexplained('HB-1', { ratePerPair: 0.4, rateLowPerPair: 0.1, rateHighPerPair: 1 }),
  },
};

describe('parameter sets in the database', () => {
  it('proposes a set without changing any assessment; adopting applies it and names it; reverting undoes it', () => {
    const typed = assessPairFromDb(db, 'P0', { asOfMs: AS_OF })!;
    expect(typed.parameters.label).toBe('typed values');

    const proposed = proposeParameterSet(
      db,
      PARTS,
      ['removal of CLN-X: 3 particles, too few'],
      'week 41 fits',
      'A. Fitter',
      1000,
    );
    expect(proposed.ok).toBe(true);
    if (!proposed.ok) return;
    expect(proposed.set).toMatchObject({
      version: 1,
      state: 'proposed',
      label: 'week 41 fits',
      createdBy: 'A. Fitter',
    });
    expect(proposed.set.valuesHash).toBe(parameterValuesHash(proposed.set.values));
    expect(proposed.set.notes).toEqual(['removal of CLN-X: 3 particles, too few']);
    // Nothing changes silently: a proposed set is not applied.
    const still = assessPairFromDb(db, 'P0', { asOfMs: AS_OF })!;
    expect(still.inputsHash).toBe(typed.inputsHash);
    expect(still.parameters.id).toBeNull();

    const adopted = adoptParameterSetInDb(db, proposed.set.id, 'B. Engineer', 2000)!;
    expect(adopted.changed).toBe(true);
    expect(adopted.set).toMatchObject({ state: 'adopted', adoptedBy: 'B. Engineer', adoptedAtMs: 2000 });
    // The loader applies exactly the set's values.
    const loaded = loadPair(db, 'P0', AS_OF)!;
    expect(loaded.line.tools.ACT!.adders!.countAbove).toBe(4);
    expect(loaded.line.tools.ACT!.adderUncertaintyFactor).toBe(1.5); // max(6/4, 4/3)
    expect(loaded.line.cleans.PBC!.halfSizeM).toBe(60e-9);
    expect(loaded.line.products['HB-1']!.surfacePrep.energyJm2).toBe(1.2);
    expect(loaded.line.tools.BONDER!.adders!.countAbove).toBe(0.5); // not in the set: typed
    const withSet = assessPairFromDb(db, 'P0', { asOfMs: AS_OF })!;
    expect(withSet.parameters).toEqual({
      id: proposed.set.id,
      version: 1,
      label: 'week 41 fits',
      valuesHash: proposed.set.valuesHash,
    });
    expect(withSet.inputsHash).not.toBe(typed.inputsHash);
    expect(withSet.contributions.some((c) => c.kind === 'unexplained')).toBe(true);
    const lot = assessLotFromDb(db, 'LOT-1', { asOfMs: AS_OF })!;
    expect(lot.parameters).toEqual(withSet.parameters);
    expect(lot.pairs.every((p) => p.parameters.id === proposed.set.id)).toBe(true);

    const back = revertToTypedValuesInDb(db, 'C. Owner', 3000);
    expect(back.changed).toBe(true);
    expect(back.retired).toMatchObject({ id: proposed.set.id, state: 'retired', retiredBy: 'C. Owner' });
    expect(readAdoptedParameterSet(db)).toBeNull();
    const again = assessPairFromDb(db, 'P0', { asOfMs: AS_OF })!;
    expect(again.inputsHash).toBe(typed.inputsHash); // the hash returns with the typed values
    expect(JSON.stringify(again)).toBe(JSON.stringify(typed));
    // The history stays: one adoption, one revert, and the set as it was stored.
    expect(readParameterSetEvents(db).map((e) => e.action)).toEqual(['adopt', 'revert']);
    expect(readParameterSets(db)[0]!.values).toEqual(proposed.set.values);
  });

  it('refuses a sign-off of an assessment made before a set was adopted (the inputs changed)', () => {
    const seen = assessPairFromDb(db, 'P1', { asOfMs: AS_OF, detail: 'summary' })!;
    const p = proposeParameterSet(db, { adders: PARTS.adders }, [], 'adders', 'A. Fitter');
    if (!p.ok) throw new Error(p.message);
    adoptParameterSetInDb(db, p.set.id, 'B. Engineer');
    const out = signOffPairInDb(db, 'P1', {
      inputsHash: seen.inputsHash,
      asOfMs: AS_OF,
      signedBy: 'D. Signer',
    });
    expect(out).toMatchObject({ ok: false, code: 'hash-changed' });
    // Signing what the set gives is accepted; after a revert that hash is stale in turn.
    const now = assessPairFromDb(db, 'P1', { asOfMs: AS_OF, detail: 'summary' })!;
    expect(
      signOffPairInDb(db, 'P1', { inputsHash: now.inputsHash, asOfMs: AS_OF, signedBy: 'D. Signer' }),
    ).toMatchObject({
      ok: true,
    });
    revertToTypedValuesInDb(db, 'C. Owner');
    expect(
      signOffPairInDb(db, 'P1', { inputsHash: now.inputsHash, asOfMs: AS_OF, signedBy: 'D. Signer' }),
    ).toMatchObject({
      ok: false,
      code: 'hash-changed',
    });
    expect(
      signOffPairInDb(db, 'P1', { inputsHash: seen.inputsHash, asOfMs: AS_OF, signedBy: 'D. Signer' }),
    ).toMatchObject({
      ok: true,
    });
  });

  it('stores nothing when the fits propose nothing or their values cannot be used', () => {
    const empty = proposeParameterSet(
      db,
      {},
      ['adders of ACT: 1 pass, too few to fit'],
      'nothing',
      'A. Fitter',
    );
    expect(empty).toMatchObject({
      ok: false,
      code: 'empty',
      notes: ['adders of ACT: 1 pass, too few to fit'],
    });
    if (!empty.ok) expect(empty.message).toBe('Nothing to propose: adders of ACT: 1 pass, too few to fit');
    const bad = proposeParameterSet(
      db,
      { removal: { PBC: fittedRemoval('PBC', { halfSizeM: -1 }) } },
      [],
      'bad',
      'A. Fitter',
    );
    expect(bad).toMatchObject({ ok: false, code: 'invalid' });
    if (!bad.ok) expect(bad.issues.join(' ')).toMatch(/removal\.PBC\.halfSizeM/);
    expect(proposeParameterSet(db, { adders: PARTS.adders }, [], '  ', 'A. Fitter')).toMatchObject({
      ok: false,
    });
    expect(proposeParameterSet(db, { adders: PARTS.adders }, [], 'x', '')).toMatchObject({ ok: false });
    expect(readParameterSets(db)).toEqual([]);
  });

  it('keeps versions ascending and one set adopted; adopting an unknown set answers null', () => {
    const a = proposeParameterSet(db, { adders: PARTS.adders }, [], 'a', 'F');
    const b = proposeParameterSet(db, { removal: PARTS.removal }, [], 'b', 'F');
    if (!a.ok || !b.ok) throw new Error('not stored');
    expect([a.set.version, b.set.version]).toEqual([1, 2]);
    adoptParameterSetInDb(db, a.set.id, 'E');
    const second = adoptParameterSetInDb(db, b.set.id, 'E')!;
    expect(second.previous).toMatchObject({ id: a.set.id, state: 'retired' });
    expect(readParameterSets(db).map((s) => s.state)).toEqual(['adopted', 'retired']);
    expect(adoptParameterSetInDb(db, 999, 'E')).toBeNull();
    expect(() => adoptParameterSetInDb(db, a.set.id, ' ')).toThrow(/name of the person/);
  });

  it('refuses a proposed set to its proposer, under any of their names, ignoring case and spacing', () => {
    const p = proposeParameterSet(db, { adders: PARTS.adders }, [], 'p', 'R. Okafor');
    if (!p.ok) throw new Error('not stored');
    expect(() => adoptParameterSetInDb(db, p.set.id, ' r.  OKAFOR ')).toThrow(
      `parameter set ${p.set.id} was proposed by R. Okafor: another person has to adopt it.`,
    );
    expect(() => adoptParameterSetInDb(db, p.set.id, 'rokafor', 1, ['R. Okafor'])).toThrow(/another person/);
    expect(readParameterSets(db)[0]!.state).toBe('proposed');
    expect(adoptParameterSetInDb(db, p.set.id, 'K. Ito')!.changed).toBe(true);
    // Adopted once by another person, a retired set may come back by anyone's hand.
    revertToTypedValuesInDb(db, 'K. Ito');
    expect(adoptParameterSetInDb(db, p.set.id, 'R. Okafor')!.changed).toBe(true);
  });
});
