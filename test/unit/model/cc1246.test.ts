import { describe, expect, it } from 'vitest';
import { CC1246_SLOPE, cc1246CountPer01m2, fitCc1246Level } from '../../../src/model/cc1246.ts';
import { ModelInputError } from '../../../src/model/errors.ts';

/** |a − b| ≤ rel·|b|, tolerance stated at each call. */
const within = (a: number, b: number, rel: number) =>
  expect(Math.abs(a - b) / Math.abs(b)).toBeLessThanOrEqual(rel);

describe('cc1246CountPer01m2 (IEST-STD-CC1246E: log10 N = 0.926 (log10² L − log10² x))', () => {
  it('level 100: 5058 at 1 µm, 1785 at 5 µm, 10.74 at 50 µm [D from the formula]', () => {
    // tolerance: half a unit of the last printed figure
    within(cc1246CountPer01m2(100, 1), 5058, 0.5 / 5058);
    within(cc1246CountPer01m2(100, 5), 1785, 0.5 / 1785);
    within(cc1246CountPer01m2(100, 50), 10.74, 0.005 / 10.74);
  });

  it('level 100 at 15 and 25 µm: 265 and 78.4, as in the standard’s level table [M]', () => {
    within(cc1246CountPer01m2(100, 15), 265, 0.5 / 265);
    within(cc1246CountPer01m2(100, 25), 78.4, 0.05 / 78.4);
  });

  it('at x = L, N = 1 — the definition of the level [V]', () => {
    for (const l of [1, 5, 25, 50, 100, 300, 750, 1000]) within(cc1246CountPer01m2(l, l), 1, 1e-12);
  });

  it('at x = 1 µm, log10 N = 0.926 log10² L (recomputed by hand for L = 1000: 10^8.334)', () => {
    within(cc1246CountPer01m2(1000, 1), 10 ** (0.926 * 9), 1e-12);
  });

  it('invariants: N falls with size and rises with level', () => {
    for (let x = 1; x < 1000; x *= 1.5)
      expect(cc1246CountPer01m2(300, x * 1.5)).toBeLessThan(cc1246CountPer01m2(300, x));
    for (let l = 1; l < 1000; l *= 2)
      expect(cc1246CountPer01m2(2 * l, 10)).toBeGreaterThan(cc1246CountPer01m2(l, 10));
  });

  it('rejects sizes below 1 µm (outside the distribution), bad levels and non-finite input', () => {
    for (const [l, x] of [
      [100, 0.5],
      [100, 0],
      [100, -1],
      [100, Number.NaN],
      [100, 2e4],
      [0.5, 5],
      [0, 5],
      [-100, 5],
      [Number.POSITIVE_INFINITY, 5],
      [2e4, 5],
    ] as const)
      expect(() => cc1246CountPer01m2(l, x)).toThrow(ModelInputError);
    expect(() => cc1246CountPer01m2(100, 0.5)).toThrow(
      'cc1246CountPer01m2: diameterUm = 0.5 µm is out of range; allowed ≥ 1 µm and ≤ 10000 µm',
    );
    expect(() => cc1246CountPer01m2(0.5, 5)).toThrow('cc1246CountPer01m2: level = 0.5 is out of range');
  });
});

describe('fitCc1246Level (least squares in log10 N with the slope 0.926 fixed)', () => {
  it('recovers level 100 from its own distribution at 1, 5, 15, 25, 50 µm [D]', () => {
    const obs = [1, 5, 15, 25, 50].map((x) => ({ diameterUm: x, countPer01m2: cc1246CountPer01m2(100, x) }));
    const fit = fitCc1246Level(obs);
    within(fit.level, 100, 1e-12);
    expect(fit.rmsLog10Residual).toBeLessThan(1e-12);
    expect(fit.n).toBe(5);
    expect(fit.atLowerBound).toBe(false);
  });

  it('recovers level 100 from the rounded check values 5058, 1785, 10.74 to 0.01 %', () => {
    const fit = fitCc1246Level([
      { diameterUm: 1, countPer01m2: 5058 },
      { diameterUm: 5, countPer01m2: 1785 },
      { diameterUm: 50, countPer01m2: 10.74 },
    ]);
    within(fit.level, 100, 1e-4);
  });

  it('one count of 1 at x gives level x (definition)', () => {
    within(fitCc1246Level([{ diameterUm: 37, countPer01m2: 1 }]).level, 37, 1e-12);
  });

  it('the fitted level minimises the squared log residual: a brute-force scan finds nothing lower (invariant)', () => {
    const obs = [
      { diameterUm: 2, countPer01m2: 800 },
      { diameterUm: 5, countPer01m2: 150 },
      { diameterUm: 25, countPer01m2: 3 },
    ];
    const sse = (l: number) =>
      obs.reduce(
        (s, o) =>
          s +
          (Math.log10(o.countPer01m2) -
            CC1246_SLOPE * (Math.log10(l) ** 2 - Math.log10(o.diameterUm) ** 2)) **
            2,
        0,
      );
    const fit = fitCc1246Level(obs);
    for (let l = 1; l <= 1000; l *= 1.001) expect(sse(l)).toBeGreaterThanOrEqual(sse(fit.level) - 1e-12);
    within(fit.rmsLog10Residual, Math.sqrt(sse(fit.level) / 3), 1e-9);
  });

  it('scaling all counts by 10^0.926·k shifts log10² L by k (linearity in w = log10² L)', () => {
    const obs = [
      { diameterUm: 3, countPer01m2: 400 },
      { diameterUm: 10, countPer01m2: 40 },
    ];
    const w0 = Math.log10(fitCc1246Level(obs).level) ** 2;
    const shifted = obs.map((o) => ({ ...o, countPer01m2: o.countPer01m2 * 10 ** (0.926 * 0.5) }));
    within(Math.log10(fitCc1246Level(shifted).level) ** 2, w0 + 0.5, 1e-12);
  });

  it('clamps to level 1 when the counts lie below even level 1 and says so', () => {
    const fit = fitCc1246Level([{ diameterUm: 10, countPer01m2: 0.01 }]); // level 1 at 10 µm gives 0.118
    expect(fit.level).toBe(1);
    expect(fit.atLowerBound).toBe(true);
  });

  it('rejects an empty list, zero or negative counts, sizes below 1 µm, non-objects', () => {
    expect(() => fitCc1246Level([])).toThrow('fitCc1246Level: observations');
    expect(() => fitCc1246Level([{ diameterUm: 5, countPer01m2: 0 }])).toThrow(
      'fitCc1246Level: observations[0].countPer01m2 = 0 per 0.1 m² is out of range; allowed > 0 per 0.1 m²',
    );
    expect(() => fitCc1246Level([{ diameterUm: 0.3, countPer01m2: 10 }])).toThrow(
      'observations[0].diameterUm',
    );
    expect(() => fitCc1246Level([{ diameterUm: 5, countPer01m2: Number.NaN }])).toThrow(ModelInputError);
    expect(() => fitCc1246Level([null as unknown as { diameterUm: number; countPer01m2: number }])).toThrow(
      ModelInputError,
    );
    expect(() => fitCc1246Level('x' as unknown as [])).toThrow(ModelInputError);
  });
});
