/**
 * The audit's choice of control chart and its flags (src/engine/audit/charts.ts), on seeded
 * simulated counts with known dispersion; limits against the NIST/SEMATECH §6.3.3.1 formulas.
 */
import { describe, expect, it } from 'vitest';
import { type ChartInputPoint, controlChart } from '../../../../src/engine/audit/charts.ts';
import { createRng } from '../../../../src/model/index.ts';

function hours(counts: number[], volume = 1.7): ChartInputPoint[] {
  return counts.map((count, i) => ({ startMs: i * 3_600_000, count, volumeM3: volume, excluded: false }));
}

describe('controlChart', () => {
  const rng = createRng(11);
  it('Poisson counts on equal volumes: the c chart, c̄ ± 3√c̄ (NIST/SEMATECH §6.3.3.1)', () => {
    const counts = Array.from({ length: 200 }, () => rng.poisson(30));
    const ch = controlChart('L', 5e-7, hours(counts));
    expect(ch.kind).toBe('c');
    const cBar = counts.reduce((a, b) => a + b, 0) / counts.length;
    expect(ch.centre).toBeCloseTo(cBar, 12);
    expect(ch.points[0]!.ucl).toBeCloseTo(cBar + 3 * Math.sqrt(cBar), 12);
    expect(ch.decidedBy).toMatch(/^c chart/);
  });
  it('unequal volumes: the u chart, ū ± 3√(ū/nᵢ)', () => {
    const pts = Array.from({ length: 100 }, (_, i) => {
      const v = i % 2 ? 1 : 2;
      return { startMs: i, count: rng.poisson(10 * v), volumeM3: v, excluded: false };
    });
    const ch = controlChart('L', 5e-7, pts);
    expect(ch.kind).toBe('u');
    expect(ch.points[1]!.ucl).toBeCloseTo(ch.centre + 3 * Math.sqrt(ch.centre / 1), 12);
    expect(ch.points[0]!.ucl).toBeCloseTo(ch.centre + 3 * Math.sqrt(ch.centre / 2), 12);
  });
  it('overdispersed counts (gamma-mixed rates): Laney u′, limits widened by σ_z > 1', () => {
    const counts = Array.from({ length: 300 }, () => rng.negativeBinomial(30, 3));
    const ch = controlChart('L', 5e-7, hours(counts));
    expect(ch.kind).toBe('laney-u');
    expect(ch.sigmaZ).toBeGreaterThan(1.5);
    const p = ch.points[0]!;
    expect(p.ucl - ch.centre).toBeCloseTo(3 * Math.sqrt(ch.centre / 1.7) * ch.sigmaZ, 9);
    // With u limits (σ_z = 1) many points of such data would be flagged; with u′ few are
    // (for NB with size 3 and σ_z ≈ the between-hour spread, under 3 % beyond the limits).
    const beyond = ch.points.filter((q) => q.rules.includes('beyond-limit')).length;
    expect(beyond / ch.points.length).toBeLessThan(0.03);
  });
  it('a planted spike is flagged beyond the limit; excluded hours stay out of the centre', () => {
    const counts = Array.from({ length: 48 }, () => rng.poisson(20));
    counts[30] = 120;
    const pts = hours(counts);
    pts[10] = { ...pts[10]!, count: 0, excluded: true };
    const ch = controlChart('L', 5e-7, pts);
    expect(ch.points[30]!.rules).toContain('beyond-limit');
    expect(ch.points[10]!.rules).toEqual([]);
    expect(ch.excludedPoints).toBe(1);
  });
  it('too few points: no limits, said so', () => {
    const ch = controlChart('L', 5e-7, hours([3]));
    expect(ch.notes[0]).toContain('no control limits: 1 usable point');
  });
});
