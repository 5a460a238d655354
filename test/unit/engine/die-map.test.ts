/**
 * The die grid of the void map: every die's kill probability from all sources — detected particles
 * at their positions, and the particles not seen at their positions (here: tool adders) spread
 * uniformly over the wafer face, their critical area cut at the wafer edge — in the same form as the
 * pair's die-loss figures, so that the map and the figures cannot disagree.
 *
 * A small product (60 mm wafer, 3 mm edge exclusion, 10 × 10 mm dies on a 10.1 mm pitch) makes every
 * die checkable by hand: one tool adds N particles per pass in one size bin K to each wafer (λ =
 * 2N / πR_w² at the interface), one particle of 2 µm is detected on the bottom wafer and a clean with
 * a stated removal curve follows its scan; the scan threshold is the tail floor (20 nm), so there is
 * no undetected tail, and the unscanned top wafer starts from a zero incoming level.
 */
import { describe, expect, it } from 'vitest';
import { dieClasses, drawKills } from '../../../src/engine/montecarlo.ts';
import { assessPair } from '../../../src/engine/pair.ts';
import type { PairAssessment } from '../../../src/engine/types.ts';
import { createRng } from '../../../src/model/rng.ts';
import { SPECTRUM_EDGES_M } from '../../../src/model/spectrum.ts';
import {
  criticalAreaOnWafer,
  criticalAreaRectangle,
  dieKillProbabilities,
  discHitsRectangle,
} from '../../../src/model/yield.ts';
import { clean, H, line, pair, product, scan, step, T0, tool, wafer } from '../../helpers/engine-inputs.ts';

const RW = 0.03;
const ALPHA = 1.5;
const N_PER_WAFER = 3;
const PARTICLE = { x: 0.004, y: -0.002, d: 2e-6 };

function smallPair(binK: number) {
  const adders = tool('ADD', 0, {
    adders: null,
    adderBands: [{ fromM: SPECTRUM_EDGES_M[binK]!, toM: SPECTRUM_EDGES_M[binK + 1]!, count: N_PER_WAFER }],
  });
  const data = line({
    products: {
      'HB-1': product({
        waferDiameterM: 2 * RW,
        die: {
          widthM: 10e-3,
          heightM: 10e-3,
          pitchXM: 10.1e-3,
          pitchYM: 10.1e-3,
          originXM: -5e-3,
          originYM: -5e-3,
          pad: null,
        },
        clusterAlpha: ALPHA,
        incoming: { countAbove: 0, atDiameterM: 45e-9, slope: 2, fromM: null },
        recleanCleanId: null,
      }),
    },
    tools: { ADD: adders },
    cleans: { C1: clean('C1', { maxEfficiency: 0.8, halfSizeM: 1e-6, widthDecades: 0.3 }) },
  });
  const route = [
    step(0, 'clean', T0 + 1 * H, T0 + 1.1 * H, { cleanId: 'C1' }),
    step(1, 'process', T0 + 2 * H, T0 + 2.1 * H, { toolId: 'ADD' }),
  ];
  const bottomScan = scan('S-B', T0, [PARTICLE.x], [PARTICLE.y], [PARTICLE.d], 20e-9);
  const p = pair('SMALL', wafer('T', null, route), wafer('B', bottomScan, route), {
    bonderToolId: null,
    bondTimeMs: T0 + 3 * H,
  });
  return { p, data };
}

/** The first bin whose void radius exceeds 6 mm (twice the 3 mm edge exclusion: edge dies are cut). */
function assessed(): { a: PairAssessment; k: number } {
  const probe = assessPair(smallPair(30).p, smallPair(30).data, { asOfMs: T0 + 4 * H });
  const k = probe.spectrum!.voidRadiusM.findIndex((r) => r > 6e-3);
  const { p, data } = smallPair(k);
  return { a: assessPair(p, data, { asOfMs: T0 + 4 * H }), k };
}

describe('void map die grid: kill probability per die from all sources', () => {
  const { a, k } = assessed();
  const grid = a.voidMap!.dieGrid!;
  const R = a.spectrum!.voidRadiusM[k]!;
  const lambda = (2 * N_PER_WAFER) / (Math.PI * RW * RW);
  const disc = a.voidMap!.discs[0]!;
  const rectOf = (d: (typeof grid.dies)[number]) => ({
    xMinM: d.xM,
    yMinM: d.yM,
    xMaxM: d.xM + grid.widthM,
    yMaxM: d.yM + grid.heightM,
  });

  it('sets up what the hand computation assumes', () => {
    expect(R).toBeGreaterThan(6e-3);
    expect(R).toBeLessThan(10e-3);
    expect(a.voidMap!.discs).toHaveLength(1);
    expect(grid.dies.length).toBeGreaterThan(8);
    expect(grid.yieldModel).toBe('negative-binomial');
    // the detected particle's survival of the clean, by hand from the logistic removal curve
    // PRE(d) = E_max / (1 + exp(−(log10 d − log10 d50)/w)); the engine reads it from a fine size
    // table (relative error ≤ 1e-5, tables.ts), hence 1e-4
    const pre = 0.8 / (1 + Math.exp(-(Math.log10(PARTICLE.d) - Math.log10(1e-6)) / 0.3));
    expect(Math.abs(disc.survival / (1 - pre) - 1)).toBeLessThan(1e-4);
  });

  it('gives every die 1 − (1 − s·[disc reaches it])·Y(λ·A_d) with A_d cut at the wafer edge (hand computation)', () => {
    let edgeDies = 0;
    for (const d of grid.dies) {
      const rect = rectOf(d);
      // Minkowski formula WH + 2R(W + H) + πR² where the grown die lies on the wafer, else the
      // model library's area cut at the wafer edge
      const corner = Math.hypot(
        Math.max(Math.abs(rect.xMinM), Math.abs(rect.xMaxM)),
        Math.max(Math.abs(rect.yMinM), Math.abs(rect.yMaxM)),
      );
      const inside = corner + R <= RW;
      const area = inside
        ? 10e-3 * 10e-3 + 2 * R * 20e-3 + Math.PI * R * R
        : criticalAreaOnWafer(rect, R, RW);
      if (!inside) edgeDies++;
      const m = lambda * area;
      const hit = discHitsRectangle(disc.xM, disc.yM, disc.rM, rect);
      const keep = hit ? 1 - disc.survival : 1;
      // relative 1e-12: the same operations in another order
      expect(d.randomKillMean).toBeCloseTo(m, 12);
      expect(d.killProbabilityDetected).toBeCloseTo(1 - keep, 12);
      expect(d.killProbabilityPoisson).toBeCloseTo(1 - keep * Math.exp(-m), 12);
      expect(d.killProbabilityNB).toBeCloseTo(1 - keep * (1 + m / ALPHA) ** -ALPHA, 12);
      expect(d.killed).toBe(d.killProbabilityNB >= 0.5);
    }
    expect(edgeDies).toBeGreaterThan(0);
    expect(edgeDies).toBeLessThan(grid.dies.length);
  });

  it('sums over the dies to the pair’s expected die loss, in both forms', () => {
    const sum = (f: (d: (typeof grid.dies)[number]) => number) => grid.dies.reduce((s, d) => s + f(d), 0);
    // relative 1e-12: the engine sums the same terms
    expect(sum((d) => d.killProbabilityNB) / a.figures.dieKillsNB!.value).toBeCloseTo(1, 12);
    expect(sum((d) => d.killProbabilityPoisson) / a.figures.dieKillsPoisson!.value).toBeCloseTo(1, 12);
    expect(1 - sum((d) => d.killProbabilityNB) / grid.dies.length).toBeCloseTo(a.figures.dieYield!.value, 12);
    // the die-loss Pareto's events: the detected hits and the random means, die by die
    const events = a.contributions.reduce((s, c) => s + c.dieKillEvents, 0);
    const hits = grid.dies.filter((d) => d.killProbabilityDetected > 0).length * disc.survival;
    expect(events / (sum((d) => d.randomKillMean) + hits)).toBeCloseTo(1, 12);
  });

  it('gives a die far from any detected particle only the uniform part', () => {
    const far = grid.dies.filter((d) => !discHitsRectangle(disc.xM, disc.yM, disc.rM, rectOf(d)));
    expect(far.length).toBeGreaterThan(0);
    for (const d of far) {
      expect(d.killProbabilityDetected).toBe(0);
      expect(d.killProbabilityPoisson).toBeCloseTo(-Math.expm1(-d.randomKillMean), 14);
    }
    // and the uniform part of a die whose grown rectangle lies on the wafer is the plane value
    const centre = grid.dies.find((d) => Math.abs(d.xM + 5e-3) < 1e-9 && Math.abs(d.yM + 5e-3) < 1e-9)!;
    expect(centre.randomKillMean).toBeCloseTo(lambda * criticalAreaRectangle(10e-3, 10e-3, R), 14);
  });

  it('treats edge dies as the model library’s per-die function does (an implementation independent of the engine)', () => {
    const layout = {
      waferDiameterM: 2 * RW,
      edgeExclusionM: 3e-3,
      dies: grid.dies.map((d) => ({ col: d.col, row: d.row, die: rectOf(d), active: rectOf(d) })),
    };
    const ref = dieKillProbabilities(
      layout,
      [{ densityPerM2: lambda, radiusM: R }],
      [{ xM: disc.xM, yM: disc.yM, radiusM: disc.rM, survival: disc.survival }],
    );
    grid.dies.forEach((d, i) => {
      expect(d.killProbabilityPoisson).toBeCloseTo(ref[i]!, 12);
    });
    // the cut matters: the outermost dies lose a few per cent of the uniform part (the (±2, 0) and
    // (0, ±2) dies' grown rectangles reach 32 mm from the centre, 2 mm past the edge)
    const m = grid.dies.map((d) => d.randomKillMean);
    expect(Math.min(...m)).toBeLessThan(0.99 * Math.max(...m));
  });
});

describe('drawKills: killed dies of one Monte Carlo draw', () => {
  /**
   * Σ Bernoulli(p_d) with p_d = 1 − S_d·e^(−c_d·m): the draws' mean and variance against the exact
   * Poisson-binomial values Σp and Σp(1 − p). Tolerances: the mean within 4 standard errors plus the
   * grouping bound (c rounded to its group moves each p by at most m/128, DieClasses); the variance
   * within 10 % (5 000 draws: its sampling error is about √(2/5000) ≈ 2 % for a near-normal count).
   */
  function check(survive: number[], share: number[], m: number, seed: number) {
    const S = Float64Array.from(survive);
    const mDie = Float64Array.from(share, (c) => c * m);
    const classes = dieClasses(S, mDie, m);
    const q = new Float64Array(classes.share.length);
    const rng = createRng(seed);
    const n = 5000;
    let s1 = 0;
    let s2 = 0;
    for (let t = 0; t < n; t++) {
      const k = drawKills(rng, m, classes, q);
      s1 += k;
      s2 += k * k;
    }
    const mean = s1 / n;
    const variance = s2 / n - mean * mean;
    let mu = 0;
    let v = 0;
    let nEdge = 0;
    survive.forEach((s, d) => {
      const p = 1 - s * Math.exp(-share[d]! * m);
      mu += p;
      v += p * (1 - p);
      if (share[d]! !== 1) nEdge++;
    });
    expect(Math.abs(mean - mu)).toBeLessThan(4 * Math.sqrt(v / n) + (nEdge * m) / 128);
    expect(Math.abs(variance / v - 1)).toBeLessThan(0.1);
    return classes;
  }

  it('draws interior and edge dies, reached or not by detected particles (normal regime)', () => {
    const nDies = 1200;
    const survive = Array.from({ length: nDies }, (_, d) => (d % 17 === 0 ? 0.3 + (d % 5) * 0.1 : 1));
    const share = Array.from({ length: nDies }, (_, d) => (d < 900 ? 1 : 0.55 + ((d * 7) % 300) / 700));
    const classes = check(survive, share, 0.08, 11);
    expect(classes.share[0]).toBe(1); // the interior group first, exactly
    expect(classes.share.length).toBeGreaterThan(5);
  });

  it('draws rare kills (Poisson regime) and few dies (one Bernoulli draw per die)', () => {
    const many = Array.from({ length: 800 }, () => 1);
    check(
      many,
      many.map((_, d) => (d < 600 ? 1 : 0.7)),
      0.004,
      12,
    );
    check([1, 1, 1, 0.5, 0.2, 1, 1, 0.9], [1, 0.8, 0.6, 1, 0.75, 1, 0.9, 0.6], 0.3, 13);
  });
});
