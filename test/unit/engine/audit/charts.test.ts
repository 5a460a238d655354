/**
 * The audit's choice of control chart and its flags (src/engine/audit/charts.ts), on seeded
 * simulated counts with known dispersion; limits against the NIST/SEMATECH e-Handbook §6.3.3.1
 * formulas (c chart c̄ ± 3√c̄, u chart ū ± 3√(ū/nᵢ)) and hand computations. With a Phase I baseline
 * (§6.3.1: limits from a reference period, then applied), a planted excursion is flagged and the
 * clean hours are not; from the period itself, the excursion drags the centre up.
 */
import { describe, expect, it } from 'vitest';
import { type ChartInputPoint, controlChart } from '../../../../src/engine/audit/charts.ts';
import { createRng, laneyUPrime } from '../../../../src/model/index.ts';

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

describe('controlChart with a Phase I baseline', () => {
  // A clean hour pattern around 20 counts (mean exactly 20 per 6 hours: 17 + 23 + 20 + 19 + 21 + 20 = 120).
  const CLEAN = [17, 23, 20, 19, 21, 20];
  const clean = (n: number) => Array.from({ length: n }, (_, i) => CLEAN[i % 6]!);
  // The charted period: 48 such hours with an excursion of 200 counts in hours 18–25 (hour 26 reads
  // 20, on the centre, and ends the run above it).
  const period = clean(48).map((c, i) => (i >= 18 && i < 26 ? 200 : c));
  const EXCURSION = Array.from({ length: 8 }, (_, i) => 18 + i);
  const flagged = (ch: ReturnType<typeof controlChart>) =>
    ch.points.flatMap((p, i) => (p.rules.length ? [i] : []));
  const window = { fromMs: -48 * 3_600_000, toMs: 0 };

  it('from a clean baseline: c̄ and c̄ ± 3√c̄ of the baseline (NIST/SEMATECH §6.3.3.1); the excursion flagged, the clean hours not', () => {
    const baseline = {
      points: hours(clean(48)),
      source: 'chosen' as const,
      window,
      words: 'the chosen window',
    };
    const ch = controlChart('L', 5e-7, hours(period), baseline);
    // Hand computation: the baseline's 48 counts sum to 8 × 120 = 960, c̄ = 20; its Pearson X² is
    // 8 × (9 + 9 + 0 + 1 + 1 + 0)/20 = 8 on 47 degrees of freedom, no overdispersion: the c chart.
    expect(ch.kind).toBe('c');
    expect(ch.centre).toBe(20);
    expect(ch.points[0]!.ucl).toBeCloseTo(20 + 3 * Math.sqrt(20), 12);
    expect(ch.points[0]!.lcl).toBeCloseTo(20 - 3 * Math.sqrt(20), 12);
    expect(flagged(ch)).toEqual(EXCURSION);
    for (const i of EXCURSION) expect(ch.points[i]!.rules).toContain('beyond-limit');
    expect(ch.baseline).toEqual({ source: 'chosen', window, points: 48, words: 'the chosen window' });
    expect(ch.notes).toEqual([]);
  });

  it('from the period itself the excursion raises the centre and flags clean hours below it; the chart says so', () => {
    const ch = controlChart('L', 5e-7, hours(period));
    // Hand computation: (40 × 20 + 8 × 200)/48 = 50 per hour, overdispersed: Laney u′ per m³ of 1.7 m³.
    expect(ch.kind).toBe('laney-u');
    expect(ch.centre).toBeCloseTo(50 / 1.7, 12);
    expect(flagged(ch).filter((i) => !EXCURSION.includes(i)).length).toBeGreaterThan(20);
    expect(ch.points.some((p) => p.rules.includes('run-of-8-below'))).toBe(true);
    expect(ch.baseline.source).toBe('period');
    expect(ch.notes[0]).toContain('limits from the charted period itself');
  });

  it('u chart from a baseline of unequal volumes: ū of the baseline ± 3√(ū/nᵢ) at each charted hour’s volume', () => {
    // Baseline: 30 hours alternating 1 m³ with 20 counts and 2 m³ with 40: ū = 900/45 = 20 per m³ (hand computation).
    const base = Array.from({ length: 30 }, (_, i) => ({
      startMs: i,
      count: i % 2 ? 40 : 20,
      volumeM3: i % 2 ? 2 : 1,
      excluded: false,
    }));
    const charted = [
      { startMs: 100, count: 22, volumeM3: 1.5, excluded: false },
      { startMs: 101, count: 200, volumeM3: 1.5, excluded: false },
    ];
    const ch = controlChart('L', 5e-7, charted, { points: base, source: 'levels', window, words: 'w' });
    expect(ch.kind).toBe('u');
    expect(ch.centre).toBeCloseTo(20, 12);
    expect(ch.points[0]!.ucl).toBeCloseTo(20 + 3 * Math.sqrt(20 / 1.5), 12);
    expect(ch.points[0]!.rules).toEqual([]);
    expect(ch.points[1]!.rules).toContain('beyond-limit');
    expect(ch.baseline.source).toBe('levels');
  });

  it('Laney u′ from an overdispersed baseline: σ_z of the baseline (laneyUPrime on its hours) widens the limits', () => {
    const r = createRng(5);
    const base = Array.from({ length: 200 }, () => r.negativeBinomial(30, 3));
    const ch = controlChart('L', 5e-7, hours([30, 31]), {
      points: hours(base),
      source: 'chosen',
      window,
      words: 'w',
    });
    const ref = laneyUPrime(
      base,
      base.map(() => 1.7),
    );
    expect(ch.kind).toBe('laney-u');
    expect(ch.sigmaZ).toBe(ref.sigmaZ);
    expect(ch.centre).toBe(ref.centre);
    expect(ch.points[0]!.ucl - ch.centre).toBeCloseTo(3 * Math.sqrt(ref.centre / 1.7) * ref.sigmaZ, 9);
  });

  it('a baseline with fewer than 20 usable hours is not used: the period’s own limits, said with the reason', () => {
    const ch = controlChart('L', 5e-7, hours(period), {
      points: hours(clean(19)),
      source: 'chosen',
      window,
      words: 'the chosen baseline window',
    });
    expect(ch.baseline.source).toBe('period');
    expect(ch.centre).toBeCloseTo(50 / 1.7, 12);
    expect(ch.notes[0]).toBe(
      'the chosen baseline window holds 19 usable hours (at least 20 are needed): limits from the charted period itself; an excursion in the period raises the centre line and widens the limits',
    );
  });
});
