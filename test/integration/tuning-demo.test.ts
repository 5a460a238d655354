/**
 * Tuning on the demo line (docs/demo.md, invented data), loaded into a fresh database and assessed at
 * the demo's "now" (manifest asOf, 2026-10-18T19:00Z):
 * - a scenario with no levers reproduces the stored assessment exactly (deep equality with
 *   assessPairFromDb / assessLotFromDb at the same time and parameter set);
 * - the longest buffer-bay (BOR-B2) wait that keeps lot TR2653 within spec exists, and a fresh run of
 *   the chain confirms it on both sides;
 * - one more rinse at the end of TR2652's route changes its call (re-clean → bond); a weaker rinse
 *   (the re-clean no longer enough) changes it to hold;
 * - what-ifs, solvers, sensitivity and bad levers never change the database (a content dump before and
 *   after); saved scenarios are the only thing a scenario stores, and only when asked.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { loadDemo, readDemoManifest } from '../../src/cli/demo.ts';
import { assessLotFromDb, assessPairFromDb } from '../../src/engine/loader.ts';
import {
  assessLotScenario,
  exportScenario,
  forwardOf,
  listScenarios,
  loadScenario,
  openLotContext,
  openPairContext,
  pairsUnder,
  ScenarioError,
  saveScenario,
  sensitivity,
  solveExtraPasses,
  solveLongestWait,
  whatIfLot,
  whatIfPair,
  whatIfWaiting,
} from '../../src/engine/tuning/index.ts';
import { type Db, migrate, openDatabase } from '../../src/store/db.ts';
import { dumpDatabase } from '../helpers/db-dump.ts';

let db: Db;
let asOfMs: number;
beforeAll(async () => {
  db = openDatabase(':memory:');
  migrate(db);
  await loadDemo(db);
  asOfMs = Date.parse(readDemoManifest().asOf);
}, 180_000);
afterAll(() => db.close());

describe('a scenario with no levers is the stored assessment', () => {
  it.each(['TR2651-P01', 'TR2652-P03', 'TR2653-P07'])(
    'pair %s: deep equality with assessPairFromDb',
    (pairId) => {
      const stored = assessPairFromDb(db, pairId, { asOfMs })!;
      const ctx = openPairContext(db, pairId, { asOfMs })!;
      const w = whatIfPair(ctx, { levers: [] });
      expect(w.whatIf).toEqual(stored);
      expect(w.asIs).toEqual(stored);
      expect(w.callChanged).toBe(false);
      expect(w.delta).toEqual({ voids: 0, unbondedAreaM2: 0, unbondedFraction: 0, dieLoss: 0 });
    },
  );

  it('lot TR2652: deep equality with assessLotFromDb', () => {
    const stored = assessLotFromDb(db, 'TR2652', { asOfMs, detail: 'summary' })!;
    const ctx = openLotContext(db, 'TR2652', { asOfMs })!;
    expect(whatIfLot(ctx, { levers: [] }).whatIf).toEqual(stored);
  }, 60_000);
});

describe('TR2653: the longest buffer-bay wait within spec', () => {
  it('exists, below the 23.7 h the lot waited, and a fresh run of the chain confirms both sides', () => {
    const ctx = openLotContext(db, 'TR2653', { asOfMs })!;
    const r = solveLongestWait(ctx, 'BOR-B2');
    expect(r.status, r.message).toBe('found');
    expect(r.value!).toBeGreaterThan(0);
    expect(r.value!).toBeLessThan(r.current!);
    expect(r.margin!).toBeLessThan(0);
    expect(r.tolerance).toBe(300);
    expect(r.forward.atAnswer?.withinSpec).toBe(true);
    expect(r.forward.pastAnswer?.withinSpec).toBe(false);
    // Q-times and the excursion still hold the lot: within spec is not a BOND
    expect(r.forward.atAnswer?.call).toBe('hold');
    const fresh = openLotContext(db, 'TR2653', { asOfMs })!;
    const at = forwardOf(
      r.value!,
      pairsUnder(fresh, [{ kind: 'wait', locationId: 'BOR-B2', durationS: r.value! }]),
    );
    const past = r.forward.pastAnswer!.value;
    expect(past - r.value!).toBeGreaterThan(0);
    expect(past - r.value!).toBeLessThanOrEqual(300);
    const beyond = forwardOf(
      past,
      pairsUnder(fresh, [{ kind: 'wait', locationId: 'BOR-B2', durationS: past }]),
    );
    expect(at.withinSpec).toBe(true);
    expect(beyond.withinSpec).toBe(false);
  }, 120_000);
});

describe('TR2652: a rinse changes the call', () => {
  it('one more CLN-RIN1 pass at the end of the route: RE-CLEAN → BOND on every pair', () => {
    const ctx = openLotContext(db, 'TR2652', { asOfMs })!;
    const w = whatIfLot(ctx, { levers: [{ kind: 'clean', cleanId: 'CLN-RIN1', extraPasses: 1 }] });
    expect(w.asIs.call).toBe('re-clean');
    expect(w.whatIf.call).toBe('bond');
    expect(w.callChanged).toBe(true);
    expect(w.pairs.every((p) => p.asIsCall === 're-clean' && p.whatIfCall === 'bond')).toBe(true);
    expect(w.delta.voids).toBeLessThan(0);
  }, 60_000);

  it('pair TR2652-P01, one more CLN-RIN2 pass or CLN-RIN1 at 60 nm d50 with a pass: BOND; a weaker CLN-RIN1 (d50 80 nm): HOLD', () => {
    const ctx = openPairContext(db, 'TR2652-P01', { asOfMs })!;
    expect(
      whatIfPair(ctx, { levers: [{ kind: 'clean', cleanId: 'CLN-RIN2', extraPasses: 1 }] }).whatIf.call,
    ).toBe('bond');
    expect(
      whatIfPair(ctx, { levers: [{ kind: 'clean', cleanId: 'CLN-RIN1', extraPasses: 1, d50M: 60e-9 }] })
        .whatIf.call,
    ).toBe('bond');
    const weaker = whatIfPair(ctx, { levers: [{ kind: 'clean', cleanId: 'CLN-RIN1', d50M: 80e-9 }] });
    expect(weaker.whatIf.call).toBe('hold');
    expect(weaker.whatIf.reasons.map((r) => r.code)).toContain('reclean-insufficient');
  });

  it('the fewest extra passes for the lot is one, within the limit of two re-cleans', () => {
    const ctx = openLotContext(db, 'TR2652', { asOfMs })!;
    const r = solveExtraPasses(ctx);
    expect(r.value).toBe(1);
    expect(r.bracket).toEqual([0, 2]);
    expect(r.forward.atAnswer?.call).toBe('bond');
    expect(r.forward.pastAnswer?.withinSpec).toBe(false);
  }, 60_000);
});

describe('nothing stored changes', () => {
  it('what-ifs, solvers, sensitivity and refused levers leave the database as it was', () => {
    const before = dumpDatabase(db);
    const ctx = openPairContext(db, 'TR2653-P01', { asOfMs, detail: 'summary' })!;
    whatIfPair(ctx, { levers: [{ kind: 'air', locationId: 'BOR-B2', isoClass: 3 }] });
    whatIfPair(ctx, { levers: [{ kind: 'parameters', parameterSetId: null }] });
    solveLongestWait(ctx, 'BOR-B2');
    sensitivity(ctx);
    for (const bad of [
      { kind: 'wait', locationId: 'NOWHERE', durationS: 60 },
      { kind: 'wait', locationId: 'BOR-B2', durationS: -1 },
      { kind: 'clean', cleanId: 'CLN-NONE', extraPasses: 1 },
      { kind: 'clean', cleanId: 'CLN-RIN1', removalAt: { diameterM: 60e-9, efficiency: 1.01 } },
      { kind: 'air', locationId: 'BOR-B2', isoClass: 10 },
    ])
      expect(() => whatIfPair(ctx, { levers: [bad as never] })).toThrow(ScenarioError);
    expect(dumpDatabase(db)).toEqual(before);
  }, 120_000);

  it('every waiting lot: TR2653 under a cleaner bay, the lots that never wait there left out with why', () => {
    const w = whatIfWaiting(db, { levers: [{ kind: 'air', locationId: 'BOR-B2', isoClass: 4 }] }, { asOfMs });
    expect(w.lots.map((l) => l.lotId)).toContain('TR2653');
    const t = w.lots.find((l) => l.lotId === 'TR2653')!;
    expect(t.delta.voids).toBeLessThan(0);
    for (const s of w.skipped) expect(s.reason).toMatch(/BOR-B2/);
    expect([...w.lots.map((l) => l.lotId), ...w.skipped.map((s) => s.lotId)].sort()).toEqual(
      ['TR2651', 'TR2652', 'TR2653'].sort(),
    );
  }, 120_000);

  it('the typed-values lever with no set adopted gives the as-is figures', () => {
    const ctx = openLotContext(db, 'TR2651', { asOfMs })!;
    const a = assessLotScenario(ctx, { levers: [{ kind: 'parameters', parameterSetId: null }] });
    expect(a.totals).toEqual(ctx.asIs.totals);
  }, 60_000);
});

describe('saved scenarios', () => {
  it('save, list, load by id and by name, export; a bad target or scenario is refused and stores nothing', () => {
    const levers = [{ kind: 'clean' as const, cleanId: 'CLN-RIN1', extraPasses: 1 }];
    const s = saveScenario(db, {
      name: 'one more rinse',
      scenario: { levers },
      target: { kind: 'lot', id: 'TR2652' },
      createdBy: 'A. Engineer',
      nowMs: Date.UTC(2026, 9, 18, 19, 30),
    });
    expect(s.scenario).toEqual({ name: 'one more rinse', levers });
    expect(listScenarios(db, { kind: 'lot', id: 'TR2652' }).map((x) => x.id)).toEqual([s.id]);
    expect(loadScenario(db, s.id)).toEqual(s);
    expect(loadScenario(db, 'one more rinse')).toEqual(s);
    expect(exportScenario(s)).toMatchObject({
      format: 'voidcast-scenario/1',
      name: 'one more rinse',
      createdAt: '2026-10-18T19:30:00.000Z',
      scenario: { levers },
    });
    const before = dumpDatabase(db);
    expect(() =>
      saveScenario(db, {
        name: 'x',
        scenario: { levers },
        target: { kind: 'pair', id: 'NO-PAIR' },
        createdBy: 'A',
      }),
    ).toThrow(/no pair NO-PAIR/);
    expect(() =>
      saveScenario(db, {
        name: 'x',
        scenario: { levers: [{ kind: 'wait', locationId: 'BOR-B2', durationS: -5 }] },
        target: null,
        createdBy: 'A',
      }),
    ).toThrow(/must be ≥ 0/);
    expect(() =>
      saveScenario(db, { name: '  ', scenario: { levers }, target: null, createdBy: 'A' }),
    ).toThrow(/1 to 200 characters/);
    expect(dumpDatabase(db)).toEqual(before);
    // append-only: the database refuses to change or delete a saved scenario
    expect(() => db.prepare("UPDATE scenarios SET name = 'y'").run()).toThrow(/append-only/);
    expect(() => db.prepare('DELETE FROM scenarios').run()).toThrow(/append-only/);
  });
});
