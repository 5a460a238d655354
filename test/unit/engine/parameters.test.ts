/**
 * Applying a parameter set: exactly the values it names change; its values are checked; the
 * unexplained-void rate is drawn through its interval.
 */
import { describe, expect, it } from 'vitest';
import type { ParameterSet } from '../../../src/engine/parameter-set-types.ts';
import {
  adderUncertaintyFromInterval,
  applyParameterSet,
  applyParameterValues,
  checkParameterValues,
  drawUnexplainedRate,
  GARWOOD_UPPER_ZERO_95,
  parameterValuesHash,
  TYPED_VALUES,
} from '../../../src/engine/parameters.ts';
import { createRng } from '../../../src/model/rng.ts';
import { clean, line, tool } from '../../helpers/engine-inputs.ts';
import {
  fittedAdders,
  fittedRemoval,
  fittedUnexplained,
  fittedVoidSize,
  values,
} from '../../helpers/parameter-values.ts';

describe('applyParameterValues', () => {
  it('changes exactly the values the set names and leaves every other object as it was', () => {
    const typed = line({
      tools: {
        ACT: tool('ACT', 1, { adders: { countAbove: 1, atDiameterM: 45e-9, slope: 2, fromM: 30e-9 } }),
        BONDER: tool('BONDER', 0.5),
      },
      cleans: { PBC: clean('PBC', { toolId: 'CLN' }), OTHER: clean('OTHER') },
    });
    const before = JSON.stringify(typed);
    const v = values({
      adders: { ACT: fittedAdders('ACT', null) },
      removal: { PBC: fittedRemoval('PBC') },
      voidSize: { 'HB-1': fittedVoidSize('HB-1') },
    });
    const out = applyParameterValues(typed, v);
    expect(JSON.stringify(typed)).toBe(before); // the typed line is not changed
    // The named values, and only they:
    expect(out.tools.ACT).toEqual({
      toolId: 'ACT',
      chamber: null,
      name: 'Tool ACT',
      adders: { countAbove: 3, atDiameterM: 45e-9, slope: 2.5, fromM: 30e-9 }, // the typed start kept
      adderBands: null,
      adderUncertaintyFactor: 1.5, // max(4.5/3, 3/2) (hand computation)
    });
    expect(out.cleans.PBC).toEqual({
      cleanId: 'PBC',
      name: 'Clean PBC',
      toolId: 'CLN',
      maxEfficiency: 0.95,
      halfSizeM: 60e-9,
      widthDecades: 0.2,
      removalBands: null,
    });
    expect(out.products['HB-1']!.surfacePrep).toEqual({
      ...typed.products['HB-1']!.surfacePrep,
      energyJm2: 1.2,
    });
    expect({ ...out.products['HB-1'], surfacePrep: null }).toEqual({
      ...typed.products['HB-1'],
      surfacePrep: null,
    });
    // Untouched entries are the very same objects.
    expect(out.tools.BONDER).toBe(typed.tools.BONDER);
    expect(out.cleans.OTHER).toBe(typed.cleans.OTHER);
    expect(out.locations).toBe(typed.locations);
    expect(out.counters).toBe(typed.counters);
    expect(Object.keys(out.tools).sort()).toEqual(['ACT', 'BONDER']);
    expect(out.parameters).toBeUndefined();
  });

  it('takes the engine floor for a level that stated no start, and adds a chamber or clean the typed values lack', () => {
    const typed = line();
    const out = applyParameterValues(
      typed,
      values({
        adders: {
          BONDER: fittedAdders('BONDER', null),
          'ACT/B': fittedAdders('ACT', 'B', { countAbove: 7, countHigh: 9 }),
        },
        removal: { NEW: fittedRemoval('NEW') },
        voidSize: { 'NO-SUCH-PRODUCT': fittedVoidSize('NO-SUCH-PRODUCT') },
      }),
    );
    expect(out.tools.BONDER!.adders!.fromM).toBeNull();
    expect(out.tools['ACT/B']).toMatchObject({ toolId: 'ACT', chamber: 'B', name: 'Tool ACT' });
    expect(out.tools['ACT/B']!.adders!.countAbove).toBe(7);
    expect(out.tools.ACT).toBe(typed.tools.ACT); // the tool-level entry stays typed
    expect(out.cleans.NEW).toMatchObject({ cleanId: 'NEW', name: 'NEW', toolId: null, halfSizeM: 60e-9 });
    expect(Object.keys(out.products)).toEqual(['HB-1']); // nothing to replace for an unknown product
    expect(out.products['HB-1']).toBe(typed.products['HB-1']);
  });

  it('names the set and carries its unexplained-void rates; no set leaves the line as it is', () => {
    const typed = line();
    expect(applyParameterSet(typed, null)).toBe(typed);
    const v = values({ unexplainedVoids: { 'HB-1': fittedUnexplained('HB-1') } });
    const set: ParameterSet = {
      id: 4,
      version: 3,
      label: 'calibration of week 41',
      state: 'adopted',
      values: v,
      notes: [],
      createdAtMs: 0,
      createdBy: 'A',
      adoptedAtMs: 1,
      adoptedBy: 'B',
      retiredAtMs: null,
      retiredBy: null,
      valuesHash: parameterValuesHash(v),
    };
    const out = applyParameterSet(typed, set);
    expect(out.parameters?.ref).toEqual({
      id: 4,
      version: 3,
      label: 'calibration of week 41',
      valuesHash: set.valuesHash,
    });
    expect(out.parameters?.unexplainedVoids['HB-1']?.ratePerPair).toBe(2);
    expect(out.tools).toEqual(typed.tools);
    expect(TYPED_VALUES).toEqual({ id: null, version: null, label: 'typed values', valuesHash: null });
  });
});

describe('adderUncertaintyFromInterval (hand computation)', () => {
  it('is the wider side of the interval as a ratio, at least 1', () => {
    expect(adderUncertaintyFromInterval({ countAbove: 2, countLow: 1, countHigh: 5 })).toBe(2.5);
    expect(adderUncertaintyFromInterval({ countAbove: 2, countLow: 0.5, countHigh: 3 })).toBe(4);
    expect(adderUncertaintyFromInterval({ countAbove: 2, countLow: 0, countHigh: 3 })).toBe(1.5);
    expect(adderUncertaintyFromInterval({ countAbove: 2, countLow: 2, countHigh: 2 })).toBe(1);
    expect(adderUncertaintyFromInterval({ countAbove: 0, countLow: 0, countHigh: 3.7 })).toBe(1);
  });
});

describe('checkParameterValues', () => {
  it('accepts a full set and fills maps left out', () => {
    const r = checkParameterValues({ adders: { ACT: fittedAdders('ACT', null) } });
    expect(r.ok).toBe(true);
    if (r.ok) expect(r.values.removal).toEqual({});
  });

  it('keeps the fields a fit adds beyond the contract (its data points), and so hashes them', () => {
    const points = [{ fromM: 45e-9, toM: 60e-9, before: 40, after: 12 }];
    const r = checkParameterValues({ removal: { PBC: { ...fittedRemoval('PBC'), points } } });
    expect(r.ok).toBe(true);
    if (!r.ok) return;
    expect((r.values.removal.PBC as unknown as { points: unknown }).points).toEqual(points);
    expect(parameterValuesHash(r.values)).not.toBe(
      parameterValuesHash(values({ removal: { PBC: fittedRemoval('PBC') } })),
    );
  });

  it('names the path of every problem', () => {
    const r = checkParameterValues({
      adders: { ACT: fittedAdders('ACT', 'B'), X: fittedAdders('X', null, { countLow: 5 }) },
      removal: { PBC: fittedRemoval('PBC', { maxEfficiency: 1.5 }) },
      unexplainedVoids: { 'HB-1': fittedUnexplained('HB-1', { meanAreaM2: -1 }) },
      extra: {},
    });
    expect(r.ok).toBe(false);
    if (r.ok) return;
    const text = r.issues.join('\n');
    expect(text).toMatch(/removal\.PBC\.maxEfficiency/);
    expect(text).toMatch(/unexplainedVoids\.HB-1\.meanAreaM2/);
    expect(text).toMatch(/adders\.X: the interval must hold the count/);
    expect(text).toMatch(/extra/);
    const keys = checkParameterValues({ adders: { ACT: fittedAdders('ACT', 'B') } });
    expect(keys).toEqual({
      ok: false,
      issues: ['adders.ACT: the key must be "ACT/B" (toolId[/chamber] of the value)'],
    });
    expect(checkParameterValues({ voidSize: { A: fittedVoidSize('A', { energyJm2: Number.NaN }) } }).ok).toBe(
      false,
    );
  });
});

describe('drawUnexplainedRate', () => {
  it('puts the interval ends at z = ±1.96 and the rate at z = 0 (hand computation)', () => {
    const z = 1.959963984540054;
    expect(drawUnexplainedRate(2, 1, 3.5, 0, 0)).toBe(2);
    expect(drawUnexplainedRate(2, 1, 3.5, z, 0)).toBeCloseTo(3.5, 12);
    expect(drawUnexplainedRate(2, 1, 3.5, -z, 0)).toBeCloseTo(1, 12);
    // No lower limit: the lower side mirrors the upper one in ratio (2/(3.5/2)).
    expect(drawUnexplainedRate(2, 0, 3.5, -z, 0)).toBeCloseTo(2 / 1.75, 12);
    expect(drawUnexplainedRate(0, 0, 0, 1, 1)).toBe(0);
  });

  it('after a count of 0 draws the exponential whose 97.5 % point is the Garwood upper limit', () => {
    // Garwood (1936): after 0 events the 95 % upper limit of the mean is ½ χ²(0.975; 2) = −ln 0.025.
    expect(GARWOOD_UPPER_ZERO_95).toBeCloseTo(3.6888794541139363, 15);
    const high = 0.05;
    const rng = createRng(7);
    const n = 200_000;
    const z = rng.normals(new Float64Array(2 * n));
    const d = Float64Array.from({ length: n }, (_, i) =>
      drawUnexplainedRate(0, 0, high, z[2 * i]!, z[2 * i + 1]!),
    );
    d.sort();
    // Tolerances: 4 binomial standard errors of an empirical quantile's probability, √(p(1−p)/n),
    // turned into the rate through the exponential's density at that point.
    const mean = high / GARWOOD_UPPER_ZERO_95;
    const q975 = d[Math.floor(0.975 * n)]!;
    const seP = Math.sqrt((0.975 * 0.025) / n);
    expect(Math.abs(q975 - high)).toBeLessThan((4 * seP) / (Math.exp(-high / mean) / mean));
    const avg = d.reduce((s, x) => s + x, 0) / n;
    expect(Math.abs(avg - mean)).toBeLessThan((4 * mean) / Math.sqrt(n)); // sd of Exp = its mean
  });

  it('for a positive rate puts 2.5 % of draws below the lower limit and 2.5 % above the upper one', () => {
    const rng = createRng(11);
    const n = 100_000;
    const z = rng.normals(new Float64Array(2 * n));
    let below = 0;
    let above = 0;
    for (let i = 0; i < n; i++) {
      const r = drawUnexplainedRate(4, 1.09, 10.24, z[2 * i]!, z[2 * i + 1]!); // Garwood 95 % of 4 events
      if (r < 1.09) below++;
      if (r > 10.24) above++;
    }
    // Tolerance: 4 binomial standard errors √(0.025·0.975/n) ≈ 0.002.
    const tol = 4 * Math.sqrt((0.025 * 0.975) / n);
    expect(Math.abs(below / n - 0.025)).toBeLessThan(tol);
    expect(Math.abs(above / n - 0.025)).toBeLessThan(tol);
  });
});
