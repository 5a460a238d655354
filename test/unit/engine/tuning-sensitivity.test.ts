/**
 * Sensitivity of the call (src/engine/tuning/sensitivity.ts) on a pair built in code (invented data):
 * the ranges come from where they say (a parameter set's interval when one is given, else the
 * documented defaults of docs/engine.md §12), the swings are the forward runs at the ends, and a flip
 * point is re-checked forward: the call differs at it and not one tolerance short of it.
 */
import { describe, expect, it } from 'vitest';
import type { ParameterSet } from '../../../src/engine/parameter-set-types.ts';
import { emptyParameterValues } from '../../../src/engine/parameters.ts';
import {
  assessPairScenario,
  createPairContext,
  DEFAULT_RANGES,
  FLIP_TOLERANCE_DECADES,
  sensitivity,
} from '../../../src/engine/tuning/index.ts';
import type { LineData, PairInput } from '../../../src/engine/types.ts';
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
  tool,
  wafer,
} from '../../helpers/engine-inputs.ts';

const CH = [0.1e-6, 0.5e-6, 5e-6];

function subject(maxVoids: number): { pair: PairInput; line: LineData } {
  const p = someParticles(40);
  const w = (id: string) =>
    wafer(id, scan(`S-${id}`, T0, p.x, p.y, p.d), [
      step(0, 'clean', T0 + 0.5 * H, T0 + 0.6 * H, { cleanId: 'PBC' }),
      step(1, 'activation', T0 + H, T0 + 1.1 * H, { toolId: 'ACT' }),
      step(2, 'wait', T0 + 1.5 * H, T0 + 4 * H, { locationId: 'BAY', carrier: 'closed' }),
    ]);
  const l = line({
    tools: { ACT: tool('ACT', 15), BONDER: tool('BONDER', 0.5) },
    locations: { BAY: location('BAY') },
    counters: { BAY: counterSeries('BAY', T0, T0 + 5 * H, CH, () => [1e5, 1e4, 10]) },
  });
  const prod = l.products['HB-1']!;
  return {
    pair: pair('P-1', w('W-1'), w('W-2'), { bondTimeMs: T0 + 4.5 * H }),
    line: {
      ...l,
      products: {
        'HB-1': { ...prod, spec: { ...prod.spec, maxVoids, maxUnbondedFraction: null, minDieYield: null } },
      },
    },
  };
}

const ASOF = T0 + 5 * H;

describe('sensitivity', () => {
  it('default ranges, as documented, and the swings are the chain at the ends', () => {
    const s0 = subject(1000);
    const ctx = createPairContext(s0.pair, s0.line, { asOfMs: ASOF, detail: 'summary' });
    const r = sensitivity(ctx, null);
    const row = (k: string) => r.rows.find((x) => x.input === k)!;
    expect(row('interface-energy').low).toBeCloseTo(0.85 / DEFAULT_RANGES.energyFactor, 12);
    expect(row('interface-energy').high).toBeCloseTo(0.85 * DEFAULT_RANGES.energyFactor, 12);
    expect(row('interface-energy').rangeSource).toMatch(/default ×\/÷ 2/);
    expect(row('deposition-velocity').high).toBe(3); // the config's depositionUncertaintyFactor
    expect(row('carrier-isolation').low).toBe(100); // ×/÷ 10 around 1000
    expect(row('adders').high).toBe(2); // the tools' largest adder uncertainty factor (engine-inputs: 2)
    expect(row('removal-curve').high).toBe(DEFAULT_RANGES.d50Factor);
    expect(r.notVaried.map((n) => n.input)).toContain('scan-capture');
    // the swing of the adders row is the chain run at its ends (the adders-scale lever)
    const hi = assessPairScenario(ctx, { levers: [{ kind: 'adders-scale', factor: 2 }] }, 'summary');
    expect(row('adders').voidsAtHigh).toBe(hi.figures.voids.value);
    // a generous spec: no flip within any range
    for (const x of r.rows) expect(x.flip.value).toBeNull();
    // largest swing first
    for (let i = 1; i < r.rows.length; i++)
      expect(r.rows[i - 1]!.swingVoids).toBeGreaterThanOrEqual(r.rows[i]!.swingVoids);
  });

  it("a parameter set's 95 % intervals replace the defaults it fitted", () => {
    const s0 = subject(1000);
    const ctx = createPairContext(s0.pair, s0.line, { asOfMs: ASOF, detail: 'summary' });
    const values = emptyParameterValues();
    const prov = { method: 'test', data: [], n: 10, fittedAtMs: 0 };
    values.voidSize['HB-1'] = {
      ...prov,
      productId: 'HB-1',
      energyJm2: 0.6,
      energyLowJm2: 0.5,
      energyHighJm2: 0.7,
      radiusMultiplier: 1,
    };
    values.removal.PBC = {
      ...prov,
      cleanId: 'PBC',
      maxEfficiency: 0.99,
      halfSizeM: 40e-9,
      widthDecades: 0.15,
      halfSizeLowM: 32e-9,
      halfSizeHighM: 60e-9,
      widthLowDecades: 0.1,
      widthHighDecades: 0.2,
    };
    const set = { id: 7, values } as unknown as ParameterSet;
    const r = sensitivity(ctx, set);
    const e = r.rows.find((x) => x.input === 'interface-energy')!;
    expect([e.low, e.high]).toEqual([0.5, 0.7]);
    expect(e.rangeSource).toMatch(/parameter set 7/);
    const d = r.rows.find((x) => x.input === 'removal-curve')!;
    // hand computation: the wider side of [32, 60] nm around 40 nm is 60/40 = 1.5 (40/32 = 1.25)
    expect(d.high).toBeCloseTo(1.5, 12);
  });

  it('a flip point, checked forward: another call at it, the as-is call one tolerance short of it', () => {
    // a spec the as-is pair meets with room: more adders (×2 at most) will break it
    const probe = subject(1000);
    const pctx = createPairContext(probe.pair, probe.line, { asOfMs: ASOF, detail: 'summary' });
    const at = (f: number) =>
      assessPairScenario(pctx, { levers: [{ kind: 'adders-scale', factor: f }] }, 'summary');
    const limit = Math.ceil(at(1.5).figures.voids.high); // met at ×1 (fewer voids), broken by ×2
    const s1 = subject(limit);
    const ctx = createPairContext(s1.pair, s1.line, { asOfMs: ASOF, detail: 'summary' });
    const r = sensitivity(ctx, null);
    const row = r.rows.find((x) => x.input === 'adders')!;
    expect(row.callAtHigh).not.toBe(r.base.call);
    expect(row.flip.value).not.toBeNull();
    const f = row.flip.value!;
    expect(f).toBeGreaterThan(1);
    expect(f).toBeLessThanOrEqual(2);
    const call = (x: number) =>
      assessPairScenario(ctx, { levers: [{ kind: 'adders-scale', factor: x }] }, 'summary').call;
    expect(call(f)).toBe(row.flip.call);
    expect(call(f)).not.toBe(r.base.call);
    expect(call(f / 10 ** FLIP_TOLERANCE_DECADES)).toBe(r.base.call);
    expect(row.flip.text).toMatch(/the call becomes/);
    // the spec verdict flips there too (the call changes because the spec breaks), checked forward
    expect(r.base.withinSpec).toBe(true);
    expect(row.withinSpecAtHigh).toBe(false);
    const g = row.specFlip.value!;
    const within = (x: number) =>
      assessPairScenario(ctx, { levers: [{ kind: 'adders-scale', factor: x }] }, 'summary').specChecks.every(
        (c) => c.pass,
      );
    expect(within(g)).toBe(false);
    expect(within(g / 10 ** FLIP_TOLERANCE_DECADES)).toBe(true);
    expect(row.specFlip.text).toMatch(/outside spec from ×/);
  });
});
