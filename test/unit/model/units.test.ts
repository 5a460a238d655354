import { describe, expect, it } from 'vitest';
import { ModelInputError } from '../../../src/model/errors.ts';
import * as u from '../../../src/model/units.ts';

// Relative tolerance for conversions by an exact factor: a few units in the last place of a
// double (2.2e-16 each), i.e. 1e-15. Anything larger would be a wrong factor, not rounding.
const EXACT = 1e-15;
const close = (a: number, b: number, rel = EXACT) =>
  expect(Math.abs(a - b)).toBeLessThanOrEqual(rel * Math.abs(b));

type Conv = [name: string, fn: (x: number) => number, back: (x: number) => number];
const pairs: Conv[] = [
  ['nmToM', u.nmToM, u.mToNm],
  ['umToM', u.umToM, u.mToUm],
  ['mmToM', u.mmToM, u.mToMm],
  ['cm2ToM2', u.cm2ToM2, u.m2ToCm2],
  ['mm2ToM2', u.mm2ToM2, u.m2ToMm2],
  ['lToM3', u.lToM3, u.m3ToL],
  ['ft3ToM3', u.ft3ToM3, u.m3ToFt3],
  ['minToS', u.minToS, u.sToMin],
  ['hToS', u.hToS, u.sToH],
  ['perFt3ToPerM3', u.perFt3ToPerM3, u.perM3ToPerFt3],
  ['perLToPerM3', u.perLToPerM3, u.perM3ToPerL],
  ['perFt3ToPerL', u.perFt3ToPerL, u.perLToPerFt3],
];

describe('unit conversions against their defining factors', () => {
  it('SI prefixes (BIPM SI Brochure, 9th ed. 2019)', () => {
    expect(u.nmToM(100)).toBe(1e-7);
    expect(u.mToNm(1e-7)).toBe(100);
    expect(u.umToM(0.5)).toBe(5e-7);
    expect(u.mToUm(5e-7)).toBe(0.5);
    expect(u.mmToM(300)).toBe(0.3);
    expect(u.mToMm(0.3)).toBe(300);
    expect(u.cm2ToM2(1)).toBe(1e-4);
    expect(u.m2ToCm2(1)).toBe(1e4);
    expect(u.mm2ToM2(1)).toBe(1e-6);
    expect(u.m2ToMm2(1)).toBe(1e6);
    expect(u.lToM3(1)).toBe(1e-3);
    expect(u.m3ToL(1)).toBe(1000);
  });

  it('1 ft³ = 0.3048³ m³ = 0.028316846592 m³ exactly (1959 yard and pound agreement; NIST SP 811 App. B)', () => {
    expect(u.ft3ToM3(1)).toBe(0.028316846592);
    close(u.ft3ToM3(1), 0.3048 ** 3); // 0.3048³ in floating point differs in the last bit only
    close(u.m3ToFt3(1), 35.31466672148859); // 1 / 0.028316846592, NIST SP 811
    expect(u.L_PER_FT3).toBe(28.316846592);
  });

  it('time: 1 min = 60 s, 1 h = 3600 s (SI Brochure Table 8)', () => {
    expect(u.minToS(1)).toBe(60);
    expect(u.sToMin(90)).toBe(1.5);
    expect(u.hToS(3)).toBe(10800);
    expect(u.sToH(10800)).toBe(3);
  });

  it('temperature: T/K = t/°C + 273.15 (SI Brochure §2.3.1)', () => {
    expect(u.cToK(20)).toBe(293.15);
    expect(u.cToK(-273.15)).toBe(0);
    close(u.kToC(293.15), 20, 1e-13); // 293.15 is not exact in binary; the difference keeps its rounding
  });

  it('concentrations: the old "class 100" (100 per ft³ at 0.5 µm) is 3531 per m³ (FED-STD-209E ↔ ISO class 5 correspondence, common practice)', () => {
    close(u.perFt3ToPerM3(100), 3531.466672148859);
    close(u.perM3ToPerFt3(3520), 99.67530000384); // 3520 × 0.028316846592, by hand
    close(u.perLToPerM3(3.52), 3520);
    close(u.perM3ToPerL(3520), 3.52);
    close(u.perFt3ToPerL(28.316846592), 1);
    close(u.perLToPerFt3(1), 28.316846592);
  });

  it('concentrationPerM3 divides a count by its sampled volume', () => {
    // ISO 14644-1:2015 A.4.4: 20 particles in the minimum volume 5.69 L at the ISO 5 limit at 0.5 µm
    close(u.concentrationPerM3(20, u.lToM3(5.69)), 20 / 0.00569);
    expect(u.concentrationPerM3(0, 0.0283)).toBe(0); // a true zero count stays zero (practice: zeros are data)
    // a 1 CFM counter for 1 min samples 1 ft³: 35 counts → 1236 per m³ (1 CFM = 1 ft³/min; common practice)
    close(u.concentrationPerM3(35, u.ft3ToM3(1)), 35 / 0.028316846592);
  });
});

describe('unit conversion invariants', () => {
  it.each(pairs)('%s and its inverse round-trip', (_name, fn, back) => {
    for (const x of [0, 1e-9, 0.1, 1, 3.7, 52, 1e6]) close(back(fn(x)), x, 4 * EXACT);
  });

  it.each(pairs)('%s is linear: f(a + b) = f(a) + f(b), f(k a) = k f(a)', (_name, fn) => {
    const a = 0.37;
    const b = 11.2;
    close(fn(a + b), fn(a) + fn(b), 4 * EXACT);
    close(fn(7 * a), 7 * fn(a), 4 * EXACT);
  });

  it('ft³ → L → m³ agrees with ft³ → m³', () => {
    close(u.lToM3(u.m3ToL(u.ft3ToM3(2.5))), u.ft3ToM3(2.5), 4 * EXACT);
    close(u.perM3ToPerL(u.perFt3ToPerM3(10)), u.perFt3ToPerL(10), 4 * EXACT);
  });
});

describe('unit conversions reject bad input with ModelInputError', () => {
  const all: [string, (x: number) => number, string][] = [
    ...pairs.flatMap(([n, f, b]): [string, (x: number) => number, string][] => [
      [n, f, n],
      [`inverse of ${n}`, b, ''],
    ]),
    ['kToC', u.kToC, 'kToC'],
  ];
  it.each(all)('%s rejects NaN, ±Infinity and negatives', (_label, fn) => {
    for (const bad of [Number.NaN, Number.POSITIVE_INFINITY, Number.NEGATIVE_INFINITY, -1]) {
      expect(() => fn(bad)).toThrow(ModelInputError);
    }
  });

  it('the message names function, parameter, unit and allowed range', () => {
    expect(() => u.umToM(-1)).toThrow('umToM: diameterUm = -1 µm is out of range; allowed ≥ 0 µm');
    expect(() => u.perFt3ToPerM3(Number.NaN)).toThrow('perFt3ToPerM3: perFt3 = NaN per ft³');
    expect(() => u.cToK(-300)).toThrow('cToK: temperatureC = -300 °C is out of range; allowed ≥ -273.15 °C');
  });

  it('concentrationPerM3 rejects a negative count and a zero or negative volume', () => {
    expect(() => u.concentrationPerM3(-1, 1)).toThrow('concentrationPerM3: count');
    expect(() => u.concentrationPerM3(1, 0)).toThrow('concentrationPerM3: sampledVolumeM3 = 0 m³');
    expect(() => u.concentrationPerM3(1, -1)).toThrow(ModelInputError);
    expect(() => u.concentrationPerM3(Number.NaN, 1)).toThrow(ModelInputError);
  });

  it('no Infinity leaves a conversion that enlarges its argument', () => {
    for (const fn of [u.mToNm, u.m2ToMm2, u.m3ToFt3, u.hToS, u.perFt3ToPerM3, u.perLToPerFt3]) {
      expect(() => fn(Number.MAX_VALUE)).toThrow(ModelInputError);
    }
    expect(() => u.concentrationPerM3(1e300, 1e-300)).toThrow(ModelInputError);
  });
});
