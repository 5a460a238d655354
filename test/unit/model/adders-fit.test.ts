/**
 * fitAddersPerPass: adders per pass (Garwood), size slope (Hill), dispersion.
 * Sources: hand computation for the small example; Garwood (1936) through garwoodInterval (tested
 * against its published values in stats/garwood.test.ts); recovery of a known count and slope from
 * adders simulated with the model library's seeded generator (200 repetitions: bias and coverage).
 */
import { describe, expect, it } from 'vitest';
import { fitAddersPerPass } from '../../../src/model/adders-fit.ts';
import { createRng, type Rng } from '../../../src/model/rng.ts';
import { garwoodInterval } from '../../../src/model/stats/garwood.ts';

const nm = 1e-9;

function passSizes(rng: Rng, mean: number, slope: number, ref: number, below = 0): number[] {
  const out: number[] = [];
  for (let i = rng.poisson(mean); i > 0; i--) out.push(ref * (1 - rng.uniform()) ** (-1 / slope));
  for (let i = 0; i < below; i++) out.push(ref * 0.9);
  return out;
}

describe('fitAddersPerPass', () => {
  it('hand computation: 2 passes, sizes 50, 100 | 60 nm at d_ref 50 nm (one 45 nm size left out)', () => {
    const f = fitAddersPerPass([[50 * nm, 100 * nm, 45 * nm], [60 * nm]], 50 * nm);
    expect(f.countsPerPass).toEqual([2, 1]);
    expect(f.total).toBe(3);
    expect(f.excluded).toBe(1);
    expect(f.meanPerPass).toBe(1.5);
    const g = garwoodInterval(3);
    expect(f.lowerPerPass).toBeCloseTo(g.lower / 2, 14);
    expect(f.upperPerPass).toBeCloseTo(g.upper / 2, 14);
    // α̂ = 3 / (ln 1 + ln 2 + ln 1.2)
    expect(f.slope).toBeCloseTo(3 / (Math.log(2) + Math.log(1.2)), 12);
    expect(f.slopeSe).toBeCloseTo(f.slope! / Math.sqrt(3), 12);
    expect(f.dispersion!.mean).toBe(1.5);
  });

  it('no adders: mean 0 with the Garwood upper limit, no slope', () => {
    const f = fitAddersPerPass([[], []], 50 * nm);
    expect(f.meanPerPass).toBe(0);
    expect(f.upperPerPass).toBeCloseTo(garwoodInterval(0).upper / 2, 14);
    expect(f.slope).toBeNull();
    expect(f.dispersion!.index).toBeNull();
  });

  it('recovers a known count and slope (200 repetitions of 6 passes, 8 adders per pass, α = 1.4)', () => {
    // Coverage band for 200 repetitions: 0.95 ± 3·0.0154. Garwood is conservative (≥ 95 %), so only its
    // lower side is checked. Hill's α̂ = N/S has E[α̂] = α·N/(N − 1) for N adders (S is a gamma sum),
    // so the bias check compares the mean with α·E[N/(N − 1)] ≈ α·1.021 at N ≈ 48 (hand computation),
    // within 3 SE of the mean.
    const rng = createRng(1234);
    const reps = 200;
    const mu = 8;
    const alpha = 1.4;
    let covCount = 0;
    let covSlope = 0;
    const slopes: number[] = [];
    let expectFactor = 0;
    for (let r = 0; r < reps; r++) {
      const passes = Array.from({ length: 6 }, () => passSizes(rng, mu, alpha, 50 * nm, 1));
      const f = fitAddersPerPass(passes, 50 * nm);
      if (f.lowerPerPass <= mu && mu <= f.upperPerPass) covCount++;
      if (f.slopeLow! <= alpha && alpha <= f.slopeHigh!) covSlope++;
      slopes.push(f.slope!);
      expectFactor += f.total / (f.total - 1);
    }
    expect(covCount / reps).toBeGreaterThanOrEqual(0.95 - 3 * 0.0154);
    expect(covSlope / reps).toBeGreaterThanOrEqual(0.95 - 3 * 0.0154);
    expect(covSlope / reps).toBeLessThanOrEqual(0.95 + 3 * 0.0154);
    const mean = slopes.reduce((s, v) => s + v, 0) / reps;
    const sd = Math.sqrt(slopes.reduce((s, v) => s + (v - mean) ** 2, 0) / (reps - 1));
    expect(Math.abs(mean - (alpha * expectFactor) / reps)).toBeLessThan((3 * sd) / Math.sqrt(reps));
  });

  it('flags overdispersed passes: negative-binomial counts (k = 1.5) give a dispersion index well above 1', () => {
    const rng = createRng(99);
    const passes = Array.from({ length: 40 }, () => {
      const n = rng.negativeBinomial(10, 1.5);
      return Array.from({ length: n }, () => 60 * nm);
    });
    const f = fitAddersPerPass(passes, 50 * nm);
    // Var = m + m²/k ≈ 10 + 67: index ≈ 7.7 expected; > 3 and p < 0.001 is far from Poisson's 1.
    expect(f.dispersion!.index!).toBeGreaterThan(3);
    expect(f.dispersion!.pValue!).toBeLessThan(1e-3);
  });

  it('refuses no pass and a bad size, naming it', () => {
    expect(() => fitAddersPerPass([], 50 * nm)).toThrow(/fitAddersPerPass: passes/);
    expect(() => fitAddersPerPass([[50 * nm, 0]], 50 * nm)).toThrow(/passes\[0\]\[1\] = 0 m/);
  });
});
