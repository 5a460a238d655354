/**
 * applyScenario (src/engine/tuning/scenario.ts): pure (the inputs are not changed, deep equality before
 * and after), each lever changes what it names and nothing else, and a bad lever is refused with a
 * message naming it while nothing is applied. Inputs built in code (invented data).
 */
import { describe, expect, it } from 'vitest';
import {
  applyScenario,
  curveThrough,
  type Lever,
  parseScenario,
  ScenarioError,
  type ScenarioInputs,
} from '../../../src/engine/tuning/index.ts';
import { removalEfficiency } from '../../../src/model/clean.ts';
import {
  counterSeries,
  H,
  line,
  location,
  pair,
  scan,
  someParticles,
  step,
  T0,
  wafer,
} from '../../helpers/engine-inputs.ts';

const CH = [0.1e-6, 0.5e-6, 5e-6];

function inputs(): ScenarioInputs {
  const p = someParticles(20);
  const w = (id: string) =>
    wafer(id, scan(`S-${id}`, T0, p.x, p.y, p.d), [
      step(0, 'clean', T0 + 0.5 * H, T0 + 0.6 * H, { cleanId: 'PBC', toolId: 'CLN' }),
      step(1, 'activation', T0 + H, T0 + 1.1 * H, { toolId: 'ACT' }),
      step(2, 'wait', T0 + 1.5 * H, null, { locationId: 'BAY', carrier: 'closed' }),
    ]);
  return {
    pairs: [pair('P-1', w('W-1'), w('W-2'))],
    line: line({
      locations: { BAY: location('BAY', { isoClass: 6 }) },
      counters: { BAY: counterSeries('BAY', T0, T0 + 4 * H, CH, () => [1e5, 1e4, 10]) },
    }),
  };
}

/** A deep, comparable copy (typed arrays included). */
function snapshot(x: ScenarioInputs): unknown {
  return structuredClone(x);
}

const ASOF = T0 + 3 * H;
const apply = (i: ScenarioInputs, levers: Lever[]) => applyScenario(i, { levers }, { asOfMs: ASOF });

describe('applyScenario', () => {
  it('no lever: the same inputs (the very objects: nothing copied, nothing changed)', () => {
    const i = inputs();
    const out = apply(i, []);
    expect(out.pairs[0]).toBe(i.pairs[0]);
    expect(out.line).toBe(i.line);
  });

  it('never changes what it is given (deep equality before and after, every lever kind)', () => {
    const i = inputs();
    const before = snapshot(i);
    const out = apply(i, [
      { kind: 'clean', cleanId: 'PBC', extraPasses: 2, d50M: 20e-9 },
      { kind: 'wait', locationId: 'BAY', durationS: 3600, carrier: 'open', isolation: 5 },
      { kind: 'air', locationId: 'BAY', isoClass: 4 },
      { kind: 'adders', toolKey: 'ACT', factor: 0.5 },
      { kind: 'energy', energyJm2: 1.2 },
      { kind: 'threshold', thresholdM: 60e-9 },
      { kind: 'deposition', factor: 2 },
      { kind: 'isolation', isolation: 50 },
      { kind: 'tail-slope', slope: 1.5 },
      { kind: 'removal-scale', d50Factor: 1.2 },
      { kind: 'adders-scale', factor: 3 },
    ]);
    expect(snapshot(i)).toEqual(before);
    expect(out.line).not.toBe(i.line);
  });

  it('a wait: every stay at the location gets the duration, carrier and isolation', () => {
    const out = apply(inputs(), [
      { kind: 'wait', locationId: 'BAY', durationS: 7200, carrier: 'open', isolation: 3 },
    ]);
    for (const w of [out.pairs[0]!.top, out.pairs[0]!.bottom]) {
      const s = w.ledger.find((x) => x.kind === 'wait')!;
      expect(s.scenarioDurationS).toBe(7200);
      expect(s.carrier).toBe('open');
      expect(s.scenarioIsolation).toBe(3);
      // the timeline as recorded
      expect(s.startMs).toBe(T0 + 1.5 * H);
      expect(s.endMs).toBeNull();
    }
  });

  it("air at a target class: concentrations × 10^(class − stated class) (ISO 14644-1's ten per class)", () => {
    const i = inputs();
    const out = apply(i, [{ kind: 'air', locationId: 'BAY', isoClass: 4 }]);
    const a = i.line.counters.BAY!.cumulativePerM3;
    const b = out.line.counters.BAY!.cumulativePerM3;
    // hand computation: 10^(4 − 6) = 0.01
    for (let k = 0; k < a.length; k++) expect(b[k]).toBeCloseTo(a[k]! * 0.01, 12);
    expect(out.line.locations.BAY!.isoClass).toBe(4);
  });

  it('extra passes run at the end of the route, before the bond, and count as re-cleans', () => {
    const out = apply(inputs(), [{ kind: 'clean', cleanId: 'PBC', extraPasses: 2 }]);
    const w = out.pairs[0]!.top;
    expect(w.recleanCount).toBe(2);
    expect(w.ledger.map((s) => s.kind)).toEqual(['clean', 'activation', 'wait', 'clean', 'clean']);
    expect(w.ledger.map((s) => s.seq)).toEqual([0, 1, 2, 3, 4]);
    expect(w.ledger[3]!.startMs).toBe(ASOF - 1);
  });

  it('a removal at a size: the curve passes through it (hand computation of the logistic)', () => {
    const base = { maxEfficiency: 0.99, halfSizeM: 40e-9, widthDecades: 0.15 };
    const c = curveThrough(base, 60e-9, 0.95);
    const re = removalEfficiency(60e-9, {
      d50M: c.halfSizeM,
      maxEfficiency: c.maxEfficiency,
      steepness: 1 / (c.widthDecades * Math.LN10),
    });
    expect(re).toBeCloseTo(0.95, 10);
    expect(c.widthDecades).toBe(0.15);
    // at or above E_max the plateau reaches every size (E_max raised, d50 at the model's floor)
    expect(curveThrough(base, 60e-9, 1)).toEqual({ maxEfficiency: 1, halfSizeM: 1e-10, widthDecades: 0.15 });
  });

  it('a threshold rise drops the smaller defects; a fall is refused (what lies below is unknown)', () => {
    const i = inputs();
    const out = apply(i, [{ kind: 'threshold', thresholdM: 60e-9 }]);
    const s = out.pairs[0]!.top.latestScan!;
    expect(s.thresholdM).toBe(60e-9);
    expect(Array.from(s.particles.diameterM).every((d) => d >= 60e-9)).toBe(true);
    expect(s.particles.count).toBe(
      Array.from(i.pairs[0]!.top.latestScan!.particles.diameterM).filter((d) => d >= 60e-9).length,
    );
    expect(() => apply(i, [{ kind: 'threshold', thresholdM: 30e-9 }])).toThrow(/can only rise/);
  });
});

describe('bad levers: a clear message naming the lever, nothing changed', () => {
  const bad: [string, unknown, RegExp][] = [
    [
      'an unknown location',
      { kind: 'wait', locationId: 'NOWHERE', durationS: 60 },
      /lever 1 \(wait\): no wafer of pair P-1 waits at location "NOWHERE"/,
    ],
    [
      'an unknown clean',
      { kind: 'clean', cleanId: 'XCLN', extraPasses: 1 },
      /lever 1 \(clean\): unknown clean "XCLN" \(known: PBC\)/,
    ],
    [
      'an unknown tool',
      { kind: 'adders', toolKey: 'NOPE/A', factor: 2 },
      /lever 1 \(adders\): unknown tool "NOPE\/A"/,
    ],
    [
      'a negative duration',
      { kind: 'wait', locationId: 'BAY', durationS: -60 },
      /lever 1 \(wait\): durationS: must be ≥ 0/,
    ],
    [
      'a removal above 1',
      { kind: 'clean', cleanId: 'PBC', removalAt: { diameterM: 60e-9, efficiency: 1.2 } },
      /removal above 1 is not possible/,
    ],
    [
      'a maximum removal above 1',
      { kind: 'clean', cleanId: 'PBC', maxEfficiency: 1.5 },
      /maxEfficiency: must be from 0 to 1/,
    ],
    ['a class below 1', { kind: 'air', locationId: 'BAY', isoClass: 0 }, /isoClass: must be from 1 to 9/],
    ['a class above 9', { kind: 'air', locationId: 'BAY', isoClass: 9.5 }, /isoClass: must be from 1 to 9/],
    [
      'an air lever with both a scale and a class',
      { kind: 'air', locationId: 'BAY', scale: 2, isoClass: 3 },
      /a scale or a class/,
    ],
    ['a lever of no known kind', { kind: 'weather', sunny: true }, /lever 1 \(weather\)/],
    ['an isolation below 1', { kind: 'isolation', isolation: 0.5 }, /must be ≥ 1/],
    ['a fractional pass', { kind: 'clean', cleanId: 'PBC', extraPasses: 1.5 }, /must be a whole number/],
  ];
  for (const [what, lever, message] of bad)
    it(what, () => {
      const i = inputs();
      const before = snapshot(i);
      let caught: unknown;
      try {
        // a good lever first: the bad one must stop the whole scenario
        applyScenario(i, { levers: [lever as Lever, { kind: 'energy', energyJm2: 2 }] }, { asOfMs: ASOF });
      } catch (e) {
        caught = e;
      }
      expect(caught).toBeInstanceOf(ScenarioError);
      expect((caught as Error).message).toMatch(message);
      expect((caught as ScenarioError).leverIndex).toBe(0);
      expect(snapshot(i)).toEqual(before);
    });

  it('a scenario that is not an object of levers', () => {
    expect(() => parseScenario({ levers: 'all' })).toThrow(ScenarioError);
    expect(() => parseScenario(null)).toThrow(/scenario:/);
  });

  it('a parameters lever with no such set loaded', () => {
    expect(() => apply(inputs(), [{ kind: 'parameters', parameterSetId: 42 }])).toThrow(
      /parameter set 42 is not loaded/,
    );
  });
});
