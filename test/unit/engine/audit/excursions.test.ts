/**
 * Excursion rules (src/engine/audit/excursions.ts) on planted test data: a seeded Poisson baseline
 * with an excursion planted at known hours must be found with exactly that start and end under
 * each rule; an all-zero run is an instrument finding, told apart from the air. Expected values:
 * the planted hours themselves (the rules' definitions in the module).
 */
import { describe, expect, it } from 'vitest';
import {
  type ChannelSeries,
  DEFAULT_RULES,
  findExcursions,
  HOUR_MS,
  type HourPoint,
} from '../../../../src/engine/audit/excursions.ts';
import type { LevelRecord } from '../../../../src/engine/audit/types.ts';
import { createRng } from '../../../../src/model/index.ts';

const T0 = Date.parse('2026-03-02T00:00:00Z');
const HOURS = 96;
const VOL = 1.7; // m³ per hour: 60 one-minute samples of 28.3 L

function level(locationId: string, nm: number, alert: number, action: number): LevelRecord {
  return {
    locationId,
    diameterM: nm / 1e9,
    alertPerM3: alert,
    actionPerM3: action,
    method: 'typed',
    name: 'typed',
    window: null,
    parameters: {},
    version: 0,
    setBy: 'test',
    setAtMs: null,
    basis: 'test',
  };
}

/** Counts per hour ≥ 0.1 and ≥ 0.5 µm: Poisson around base rates, times `factor` (0.5 µm: `factor05`). */
function build(
  loc: string,
  seed: number,
  plant: (h: number) => { f01: number; f05: number; zero?: boolean },
): ChannelSeries[] {
  const rng = createRng(seed);
  const s01: HourPoint[] = [];
  const s05: HourPoint[] = [];
  for (let h = 0; h < HOURS; h++) {
    const p = plant(h);
    const c01 = p.zero ? 0 : rng.poisson(2000 * VOL * p.f01);
    const c05 = p.zero ? 0 : Math.min(c01, rng.poisson(100 * VOL * p.f05));
    const base = {
      hourMs: T0 + h * HOUR_MS,
      volumeM3: VOL,
      n: 60,
      nUsable: 60,
      nFault: 0,
      nLowerBound: 0,
      nSentinel: 0,
      nZeroRun: p.zero ? 60 : 0,
      nGap: 0,
    };
    s01.push({ ...base, countSum: c01, maxPerM3: (c01 / VOL) * 1.3 });
    s05.push({ ...base, countSum: c05, maxPerM3: (c05 / VOL) * 1.3 });
  }
  return [
    { locationId: loc, diameterNm: 100, hours: s01 },
    { locationId: loc, diameterNm: 500, hours: s05 },
  ];
}

// Location A: hours 30–33 (four hours) at 20× at ≥ 0.5 µm and 2× at ≥ 0.1 µm (a flatter spectrum).
// Location B: hours 31–32 at 3× at ≥ 0.5 µm (above alert 200, below action 400). Location C: all zeros
// over hours 50–52 (a blocked inlet, flagged as a zero run).
const series = [
  ...build('A', 1, (h) => (h >= 30 && h <= 33 ? { f01: 2, f05: 20 } : { f01: 1, f05: 1 })),
  ...build('B', 2, (h) => (h >= 31 && h <= 32 ? { f01: 1, f05: 3 } : { f01: 1, f05: 1 })),
  ...build('C', 3, (h) => (h >= 50 && h <= 52 ? { f01: 1, f05: 1, zero: true } : { f01: 1, f05: 1 })),
];
const levels = ['A', 'B', 'C'].map((l) => level(l, 500, 200, 400));
const period = { fromMs: T0, toMs: T0 + HOURS * HOUR_MS };
const at = (h: number) => T0 + h * HOUR_MS;

function only(rule: string, r: typeof DEFAULT_RULES) {
  return findExcursions({ areaId: 'ROOM', series, levels, rules: r, period }).filter((e) => e.rule === rule);
}
const none = { actionPoint: false, alertRun: null, areaAlert: null, ratioShift: null, dataQuality: null };

describe('findExcursions on planted data', () => {
  it('action-point: the four planted hours at A, start 30 h, end 34 h', () => {
    const e = only('action-point', { ...none, actionPoint: true });
    expect(e.map((x) => [x.locationId, x.startMs, x.endMs])).toEqual([['A', at(30), at(34)]]);
    expect(e[0]!.channelsM).toEqual([5e-7]);
    expect(e[0]!.nature).toBe('air');
  });
  it('alert-run 2 of 3: A from 30 h to 34 h, B from 31 h to 33 h', () => {
    const e = only('alert-run', { ...none, alertRun: { m: 2, n: 3 } });
    expect(e.map((x) => [x.locationId, x.startMs, x.endMs])).toEqual([
      ['A', at(30), at(34)],
      ['B', at(31), at(33)],
    ]);
  });
  it('alert-run 3 of 3 needs three above-alert hours in a row: A only', () => {
    const e = only('alert-run', { ...none, alertRun: { m: 3, n: 3 } });
    expect(e.map((x) => [x.locationId, x.startMs, x.endMs])).toEqual([['A', at(30), at(34)]]);
  });
  it('area-alert (2 locations within 1 h): the hours both A and B are above alert, 31 h to 33 h', () => {
    const e = only('area-alert', { ...none, areaAlert: { locations: 2, windowMs: HOUR_MS } });
    expect(e.map((x) => [x.locationIds, x.startMs, x.endMs])).toEqual([[['A', 'B'], at(31), at(33)]]);
    // Within 2 h: from 31 h (B's first hour) to 34 h (A's last hour still within 2 h of B's 32 h).
    const w2 = only('area-alert', { ...none, areaAlert: { locations: 2, windowMs: 2 * HOUR_MS } });
    expect(w2.map((x) => [x.startMs, x.endMs])).toEqual([[at(31), at(34)]]);
  });
  it('ratio-shift: A’s flatter spectrum over the planted hours, 30 h to 34 h; B (both channels ×1 at 0.1 µm, ×3 at 0.5 µm) too', () => {
    const e = only('ratio-shift', {
      ...none,
      ratioShift: { smallM: 1e-7, largeM: 5e-7, k: 4, points: 2, minCount: 20 },
    });
    expect(e.map((x) => [x.locationId, x.startMs, x.endMs])).toEqual([
      ['A', at(30), at(34)],
      ['B', at(31), at(33)],
    ]);
  });
  it('data-quality: C’s all-zero hours 50–52 are an instrument finding, 50 h to 53 h; no air rule fires there', () => {
    const all = findExcursions({ areaId: 'ROOM', series, levels, rules: DEFAULT_RULES, period });
    const dq = all.filter((x) => x.rule === 'data-quality');
    expect(dq.map((x) => [x.locationId, x.startMs, x.endMs, x.nature])).toEqual([
      ['C', at(50), at(53), 'instrument'],
    ]);
    expect(dq[0]!.quality.zeroRun).toBe(180);
    expect(all.filter((x) => x.locationId === 'C' && x.rule !== 'data-quality')).toEqual([]);
    // The planted air excursion says so, and sees the spectrum change beside it.
    const ap = all.find((x) => x.rule === 'action-point')!;
    expect(ap.nature).toBe('air');
    expect(ap.natureWords).toContain('the size spectrum changed');
  });
  it('refuses bad rule settings', () => {
    expect(() => only('alert-run', { ...none, alertRun: { m: 4, n: 3 } })).toThrow('1 ≤ m ≤ n');
    expect(() => only('area-alert', { ...none, areaAlert: { locations: 1, windowMs: HOUR_MS } })).toThrow(
      'at least 2 locations',
    );
  });
});
