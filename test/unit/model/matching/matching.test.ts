/**
 * Scan matching (src/model/matching): the radius formula, frames, the grid index, one-to-one
 * matching, the stage offset, near-threshold handling and chance matches.
 *
 * Sources of expected values: the Rayleigh law of a 2-D normal displacement (hand computation of
 * r_m = σ √(2 ln(1/(1 − q))), methods.md §1 [D]); hand-built maps whose true correspondence is known
 * by construction; brute-force references written here (all pairs, sorted) for the grid and the
 * greedy assignment; a Monte Carlo of uniform random points for the chance matches.
 */
import { describe, expect, it } from 'vitest';
import { ModelInputError } from '../../../../src/model/errors.ts';
import {
  estimateStageOffset,
  expectedChanceMatches,
  greedyMatch,
  MATCH_STATUS,
  type MatchableScan,
  matchingRadius,
  matchScans,
  mirrorPoints,
  PointGrid,
  positionSigmaFromDisplacements,
  rotatePoints,
  translatePoints,
} from '../../../../src/model/matching/index.ts';
import { createRng, type Rng } from '../../../../src/model/rng.ts';

const nm = 1e-9;
const um = 1e-6;
const R = 0.147; // usable radius of a 300 mm wafer with 3 mm edge exclusion, m
const AREA = Math.PI * R * R;

/** n points uniform in the disc of radius R. */
function uniformDisc(rng: Rng, n: number, radius = R): { xM: Float64Array; yM: Float64Array } {
  const xM = new Float64Array(n);
  const yM = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    const r = radius * Math.sqrt(rng.uniform());
    const t = 2 * Math.PI * rng.uniform();
    xM[i] = r * Math.cos(t);
    yM[i] = r * Math.sin(t);
  }
  return { xM, yM };
}

/** Sizes from a cumulative power law of slope alpha above d0. */
function powerSizes(rng: Rng, n: number, d0: number, alpha: number): Float64Array {
  const d = new Float64Array(n);
  for (let i = 0; i < n; i++) d[i] = d0 * (1 - rng.uniform()) ** (-1 / alpha);
  return d;
}

function scan(
  xM: Float64Array,
  yM: Float64Array,
  diameterM: Float64Array,
  thresholdM = 40 * nm,
): MatchableScan {
  return { count: xM.length, xM, yM, diameterM, thresholdM };
}

/** Every before defect, displaced by a normal error of σ per axis. */
function jitter(rng: Rng, xM: Float64Array, yM: Float64Array, sigma: number) {
  const x = new Float64Array(xM.length);
  const y = new Float64Array(yM.length);
  for (let i = 0; i < xM.length; i++) {
    x[i] = xM[i]! + sigma * rng.normal();
    y[i] = yM[i]! + sigma * rng.normal();
  }
  return { xM: x, yM: y };
}

describe('matchingRadius (Rayleigh radius, methods.md §1)', () => {
  it('q = 0.99 gives 3.03 σ: √(2 ln 100) = 3.034854 (hand computation)', () => {
    expect(matchingRadius(1, 0.99)).toBeCloseTo(Math.sqrt(2 * Math.log(100)), 12);
    expect(matchingRadius(10 * um, 0.99) / (10 * um)).toBeCloseTo(3.034854, 5);
    // q = 1 − e^(−1/2) gives r = σ exactly (hand computation)
    expect(matchingRadius(2, 1 - Math.exp(-0.5))).toBeCloseTo(2, 12);
  });

  it('holds the fraction q of simulated 2-D normal displacements', () => {
    // 10⁵ draws: the binomial SE of the fraction is √(0.99·0.01/10⁵) = 3.1e-4; tolerance 4 SE.
    const rng = createRng(11);
    const r = matchingRadius(1, 0.99);
    let inside = 0;
    const n = 100_000;
    for (let i = 0; i < n; i++) if (Math.hypot(rng.normal(), rng.normal()) <= r) inside++;
    expect(Math.abs(inside / n - 0.99)).toBeLessThan(4 * 3.1e-4);
  });

  it('refuses σ ≤ 0 and q outside (0, 1)', () => {
    expect(() => matchingRadius(0)).toThrow(ModelInputError);
    expect(() => matchingRadius(1e-5, 1)).toThrow(/captureFraction = 1 is out of range/);
  });

  it('refuses a non-number σ and a radius that overflows a double', () => {
    expect(() => matchingRadius(Number.NaN)).toThrow(/matchingRadius: positionSigmaM = NaN m/);
    expect(() => matchingRadius('1' as unknown as number)).toThrow(ModelInputError);
    // 1e308 × 3.03 overflows: refused rather than returned as Infinity.
    expect(() => matchingRadius(1e308)).toThrow(/matchingRadius: result = Infinity/);
  });
});

describe('frame transforms', () => {
  const p = { count: 2, xM: Float64Array.of(0.01, -0.03), yM: Float64Array.of(0.02, 0.005) };

  it('mirrors about y (x → −x) and about x (y → −y); twice is the identity (exact)', () => {
    const my = mirrorPoints(p, 'y');
    expect([...my.xM]).toEqual([-0.01, 0.03]);
    expect([...my.yM]).toEqual([0.02, 0.005]);
    const mx = mirrorPoints(p, 'x');
    expect([...mx.yM]).toEqual([-0.02, -0.005]);
    expect([...mirrorPoints(my, 'y').xM]).toEqual([...p.xM]);
  });

  it('rotates counter-clockwise (exact at a quarter turn) and keeps the distance from the centre', () => {
    const q = rotatePoints({ count: 1, xM: Float64Array.of(0.01), yM: Float64Array.of(0) }, Math.PI / 2);
    expect([q.xM[0], q.yM[0]]).toEqual([0, 0.01]);
    const t = rotatePoints(p, 0.3);
    for (let i = 0; i < 2; i++)
      expect(Math.hypot(t.xM[i]!, t.yM[i]!)).toBeCloseTo(Math.hypot(p.xM[i]!, p.yM[i]!), 15);
    const back = rotatePoints(t, -0.3);
    for (let i = 0; i < 2; i++) expect(back.xM[i]).toBeCloseTo(p.xM[i]!, 15);
  });

  it('translates, and refuses a malformed point set', () => {
    const t = translatePoints(p, -0.001, 0.002);
    expect(t.xM[0]).toBeCloseTo(0.009, 15);
    expect(t.yM[1]).toBeCloseTo(0.007, 15);
    expect(() => mirrorPoints({ count: 3, xM: p.xM, yM: p.yM }, 'y')).toThrow(/points.count = 3/);
    expect(() => rotatePoints(p, Number.NaN)).toThrow(ModelInputError);
  });
});

describe('PointGrid', () => {
  it('answers "within r of (x, y)" as a brute-force scan does, across cells and hash collisions', () => {
    const rng = createRng(3);
    const n = 3000;
    const { xM, yM } = uniformDisc(rng, n, 0.01); // dense: many points per cell and query
    const cell = 2e-4;
    const g = new PointGrid(xM, yM, n, cell);
    for (let k = 0; k < 200; k++) {
      const qx = (rng.uniform() - 0.5) * 0.022;
      const qy = (rng.uniform() - 0.5) * 0.022;
      const r = rng.uniform() * 3 * cell; // radii up to three cells
      const brute: number[] = [];
      for (let i = 0; i < n; i++) if ((xM[i]! - qx) ** 2 + (yM[i]! - qy) ** 2 <= r * r) brute.push(i);
      brute.sort(
        (a, b) =>
          (xM[a]! - qx) ** 2 + (yM[a]! - qy) ** 2 - ((xM[b]! - qx) ** 2 + (yM[b]! - qy) ** 2) || a - b,
      );
      expect(g.within(qx, qy, r)).toEqual(brute);
      expect(g.nearestWithin(qx, qy, r)).toBe(brute.length ? brute[0] : -1);
    }
  });

  it('refuses a non-finite coordinate, naming it', () => {
    expect(() => new PointGrid(Float64Array.of(0, Number.NaN), Float64Array.of(0, 0), 2, 1e-5)).toThrow(
      /PointGrid: xM\[1\] = NaN m/,
    );
  });
});

/** Greedy by distance, the slow way: every pair within r, sorted by (distance², i, j). */
function bruteGreedy(bx: Float64Array, by: Float64Array, ax: Float64Array, ay: Float64Array, r: number) {
  const pairs: [number, number, number][] = [];
  for (let i = 0; i < bx.length; i++)
    for (let j = 0; j < ax.length; j++) {
      const d2 = (ax[j]! - bx[i]!) ** 2 + (ay[j]! - by[i]!) ** 2;
      if (d2 <= r * r) pairs.push([d2, i, j]);
    }
  pairs.sort((a, b) => a[0] - b[0] || a[1] - b[1] || a[2] - b[2]);
  const bm = new Int32Array(bx.length).fill(-1);
  const am = new Int32Array(ax.length).fill(-1);
  for (const [, i, j] of pairs)
    if (bm[i] === -1 && am[j] === -1) {
      bm[i] = j;
      am[j] = i;
    }
  return { bm, am };
}

describe('greedyMatch (one-to-one, greedy by distance)', () => {
  it('a hand case: the closer pair wins, the loser stays unmatched', () => {
    // before A(0), B(10 µm); after a(14 µm), b(27 µm) on the x axis, r = 15 µm.
    // Distances within r: B–a 4, A–a 14, B–b 17 (out). Greedy: B–a; A and b unmatched (hand computation).
    const m = greedyMatch(
      Float64Array.of(0, 10 * um),
      Float64Array.of(0, 0),
      2,
      Float64Array.of(14 * um, 27 * um),
      Float64Array.of(0, 0),
      2,
      15 * um,
    );
    expect([...m.beforeMatch]).toEqual([-1, 0]);
    expect([...m.afterMatch]).toEqual([1, -1]);
  });

  it('equals the brute-force greedy assignment on dense random maps (chains of rivals)', () => {
    const rng = createRng(5);
    for (let rep = 0; rep < 20; rep++) {
      const b = uniformDisc(rng, 400, 0.002);
      const a = uniformDisc(rng, 350, 0.002);
      const r = 1.5e-4; // ~ 2 rivals per defect: many conflicts
      const m = greedyMatch(b.xM, b.yM, 400, a.xM, a.yM, 350, r);
      const ref = bruteGreedy(b.xM, b.yM, a.xM, a.yM, r);
      expect([...m.beforeMatch]).toEqual([...ref.bm]);
      expect([...m.afterMatch]).toEqual([...ref.am]);
    }
  });

  it('refuses non-Float64Array positions, a count beyond the arrays, a non-finite position, r ≤ 0', () => {
    const p = Float64Array.of(0, 1e-5);
    expect(() => greedyMatch([0, 1e-5] as unknown as Float64Array, p, 2, p, p, 2, 1e-5)).toThrow(
      /greedyMatch: bx = \[0,0.00001\] m is out of range; allowed a Float64Array/,
    );
    expect(() => greedyMatch(p, p, 3, p, p, 2, 1e-5)).toThrow(/greedyMatch: nb = 3 is out of range/);
    expect(() => greedyMatch(p, p, -1, p, p, 2, 1e-5)).toThrow(/greedyMatch: nb = -1/);
    expect(() => greedyMatch(p, p, 2, Float64Array.of(0, Number.NaN), p, 2, 1e-5)).toThrow(
      /greedyMatch: ax\[1\] = NaN m/,
    );
    expect(() => greedyMatch(p, p, 2, p, p, 2, 0)).toThrow(/greedyMatch: radiusM = 0 m/);
  });
});

describe('matchScans', () => {
  const sigma = 10 * um;

  /** A wafer with 500 defects; the after scan sees them again (σ jitter) plus 40 new ones ≥ 80 nm. */
  function wafer(seed: number) {
    const rng = createRng(seed);
    const n = 500;
    const pos = uniformDisc(rng, n);
    const d = powerSizes(rng, n, 60 * nm, 1.5);
    const again = jitter(rng, pos.xM, pos.yM, sigma / Math.SQRT2);
    const added = uniformDisc(rng, 40);
    const addedD = powerSizes(rng, 40, 80 * nm, 1.5);
    const ax = Float64Array.from([...again.xM, ...added.xM]);
    const ay = Float64Array.from([...again.yM, ...added.yM]);
    const ad = Float64Array.from([...d, ...addedD]);
    return { before: scan(pos.xM, pos.yM, d), afterX: ax, afterY: ay, afterD: ad, n };
  }

  it('matches a map with itself after mirror, rotation and offset are undone', () => {
    const w = wafer(21);
    const opts = { positionSigmaM: sigma, areaM2: AREA };
    const base = matchScans(w.before, scan(w.afterX, w.afterY, w.afterD), opts);
    // A file written mirrored (seen from the back): undone by mirrorPoints about the same axis.
    const mir = mirrorPoints({ count: w.afterX.length, xM: w.afterX, yM: w.afterY }, 'y');
    const wrong = matchScans(w.before, scan(mir.xM, mir.yM, w.afterD), opts);
    const back = mirrorPoints(mir, 'y');
    const fixed = matchScans(w.before, scan(back.xM, back.yM, w.afterD), opts);
    // Rotated by 90° (a notch convention): undone by the opposite rotation.
    const rot = rotatePoints({ count: w.afterX.length, xM: w.afterX, yM: w.afterY }, Math.PI / 2);
    const unrot = rotatePoints(rot, -Math.PI / 2);
    const rotated = matchScans(w.before, scan(unrot.xM, unrot.yM, w.afterD), opts);
    // All 500 repeats lie within r_m with probability 0.99 each: expect ≥ 98 % matched (binomial:
    // mean 495, SD 2.2; 490 is 2.3 SD below) and the 40 new defects all only-after or chance-matched.
    for (const m of [base, fixed, rotated]) {
      expect(m.matched).toBeGreaterThanOrEqual(490);
      expect(m.onlyAfter + m.nearThresholdAfter).toBeGreaterThanOrEqual(40);
      expect(m.matched + m.onlyBefore + m.nearThresholdBefore).toBe(500);
    }
    expect(fixed.matched).toBe(base.matched);
    expect(rotated.matched).toBe(base.matched);
    // The mirrored map matches only by chance (expected ≈ 500·540·π r²/A ≈ 0.08).
    expect(wrong.matched).toBeLessThanOrEqual(2);
  });

  it('recovers a stage offset (median of confident matches) and then matches as without it', () => {
    const w = wafer(22);
    const dx = 45 * um;
    const dy = -28 * um; // both larger than r_m = 30 µm: without the offset nothing would match
    const shifted = translatePoints({ count: w.afterX.length, xM: w.afterX, yM: w.afterY }, dx, dy);
    const opts = { positionSigmaM: sigma, areaM2: AREA };
    const none = matchScans(w.before, scan(shifted.xM, shifted.yM, w.afterD), {
      ...opts,
      estimateOffset: false,
    });
    expect(none.matched).toBeLessThan(100);
    const m = matchScans(w.before, scan(shifted.xM, shifted.yM, w.afterD), opts);
    expect(m.offset.applied).toBe(true);
    // Median of ~500 displacements with per-axis SD σ/√2 · √2 = σ: SE ≈ 1.2533 σ/√500 = 0.56 µm;
    // tolerance 3 µm (> 5 SE).
    expect(Math.abs(m.offset.dxM - dx)).toBeLessThan(3 * um);
    expect(Math.abs(m.offset.dyM - dy)).toBeLessThan(3 * um);
    expect(m.offset.confidentMatches).toBeGreaterThan(400);
    expect(m.matched).toBeGreaterThanOrEqual(490);
    expect(m.notes.join(' ')).toMatch(/stage offset .* removed/);
  });

  it('near the threshold: a defect seen once below 1.25 × the larger threshold is neither adder nor removal', () => {
    const before = scan(
      Float64Array.of(0.01, 0.02, -0.03),
      Float64Array.of(0, 0, 0),
      Float64Array.of(45 * nm, 70 * nm, 230 * nm),
      40 * nm,
    );
    // after: the 230 nm defect again (sized 220 nm); new ones of 55 nm (near: limit 1.25 × 45 = 56.25 nm) and 90 nm.
    const after = scan(
      Float64Array.of(-0.03, 0.05, -0.05),
      Float64Array.of(0, 0.01, 0.01),
      Float64Array.of(220 * nm, 55 * nm, 90 * nm),
      45 * nm,
    );
    const m = matchScans(before, after, { positionSigmaM: sigma, areaM2: AREA, estimateOffset: false });
    expect(m.nearThresholdLimitM).toBeCloseTo(56.25 * nm, 18);
    expect(m.matched).toBe(1);
    expect([...m.beforeStatus]).toEqual([
      MATCH_STATUS.nearThreshold,
      MATCH_STATUS.only,
      MATCH_STATUS.matched,
    ]);
    expect([...m.afterStatus]).toEqual([MATCH_STATUS.matched, MATCH_STATUS.nearThreshold, MATCH_STATUS.only]);
    expect([m.onlyBefore, m.onlyAfter, m.nearThresholdBefore, m.nearThresholdAfter]).toEqual([1, 1, 1, 1]);
    expect(m.notes.join(' ')).toMatch(
      /near threshold, not counted: 1 defects seen only before and 1 only after/,
    );
    // Bands (default edges 40, 56.25, 112.5, 225, 450, 900 nm, ∞): each defect in its band.
    const sum = (k: 'matched' | 'onlyBefore' | 'onlyAfter' | 'nearThresholdBefore' | 'nearThresholdAfter') =>
      m.bands.reduce((s, b) => s + b[k], 0);
    expect([sum('matched'), sum('onlyBefore'), sum('onlyAfter')]).toEqual([1, 1, 1]);
    expect(m.bands[0]!.nearThresholdBefore + m.bands[0]!.nearThresholdAfter).toBe(2);
    // The pair (230 nm before, 220 nm after) is banded by the before size: [225, 450), not [112.5, 225).
    expect(m.bands[3]!.matched).toBe(1);
    expect(m.bands[2]!.matched).toBe(0);
    expect(m.bands[1]!.onlyAfter).toBe(1); // the new 90 nm defect: [56.25, 112.5)
    expect(m.bands[1]!.onlyBefore).toBe(1); // the vanished 70 nm defect
  });

  it('expected chance matches agree with a Monte Carlo of unrelated uniform maps', () => {
    // 2000 × 2000 defects, r = 200 µm over the 147 mm disc: n_b n_a π r²/A = 7.40 (hand computation).
    // 300 seeded repetitions: the SE of the mean count is √(7.4/300) ≈ 0.16 (Poisson); tolerance
    // 4 SE + 1 % (edge effects r/R ≈ 0.1 % and one-to-one saturation, ≈ 0.4 % at this density).
    const rng = createRng(77);
    const n = 2000;
    const r = 200 * um;
    const sigmaForR = r / matchingRadius(1, 0.99);
    const expected = expectedChanceMatches(n, n, r, AREA);
    expect(expected).toBeCloseTo((n * n * Math.PI * r * r) / AREA, 12);
    const reps = 300;
    let total = 0;
    for (let k = 0; k < reps; k++) {
      const a = uniformDisc(rng, n);
      const b = uniformDisc(rng, n);
      const d = new Float64Array(n).fill(100 * nm);
      const m = matchScans(scan(a.xM, a.yM, d), scan(b.xM, b.yM, d), {
        positionSigmaM: sigmaForR,
        areaM2: AREA,
        estimateOffset: false,
      });
      expect(m.radiusM).toBeCloseTo(r, 15);
      expect(m.expectedChanceMatches).toBeCloseTo(expected, 9);
      total += m.matched;
    }
    const mean = total / reps;
    expect(Math.abs(mean - expected)).toBeLessThan(4 * Math.sqrt(expected / reps) + 0.01 * expected);
  });

  it('refuses a malformed scan, naming the defect', () => {
    const ok = scan(Float64Array.of(0), Float64Array.of(0), Float64Array.of(50 * nm));
    const bad = scan(
      Float64Array.of(0, Number.POSITIVE_INFINITY),
      Float64Array.of(0, 0),
      Float64Array.of(50 * nm, 60 * nm),
    );
    expect(() => matchScans(ok, bad, { positionSigmaM: sigma, areaM2: AREA })).toThrow(
      /matchScans: after.xM\[1\] = Infinity m is out of range/,
    );
    const zero = scan(Float64Array.of(0), Float64Array.of(0), Float64Array.of(0));
    expect(() => matchScans(zero, ok, { positionSigmaM: sigma, areaM2: AREA })).toThrow(
      /before.diameterM\[0\]/,
    );
    expect(() =>
      matchScans(ok, ok, { positionSigmaM: sigma, areaM2: AREA, bandEdgesM: [50 * nm, 40 * nm] }),
    ).toThrow(/bandEdgesM\[1\]/);
  });
});

describe('estimateStageOffset and expectedChanceMatches: bad input', () => {
  it('estimateStageOffset refuses a missing scan, a count beyond the arrays and a non-finite position', () => {
    const ok = { count: 1, xM: Float64Array.of(0), yM: Float64Array.of(0) };
    expect(() => estimateStageOffset(null as unknown as typeof ok, ok, 1e-4)).toThrow(
      /estimateStageOffset: before = null is out of range/,
    );
    expect(() => estimateStageOffset(ok, { ...ok, count: 2 }, 1e-4)).toThrow(
      /estimateStageOffset: after.count = 2 is out of range/,
    );
    expect(() =>
      estimateStageOffset(ok, { ...ok, yM: Float64Array.of(Number.NEGATIVE_INFINITY) }, 1e-4),
    ).toThrow(/estimateStageOffset: after.yM\[0\] = -Infinity m/);
    expect(() => estimateStageOffset(ok, ok, Number.NaN)).toThrow(/searchRadiusM = NaN m/);
  });

  it('expectedChanceMatches refuses NaN and a result that overflows a double', () => {
    expect(() => expectedChanceMatches(Number.NaN, 1, 1e-5, 0.07)).toThrow(
      /expectedChanceMatches: nBefore = NaN/,
    );
    expect(() => expectedChanceMatches(1e308, 1e-9, 1, 5e-324)).toThrow(
      /expectedChanceMatches: result = Infinity/,
    );
  });
});

describe('positionSigmaFromDisplacements (robust σ from confident matches)', () => {
  it('hand computation: 1.4826 × the median absolute deviation, each group about its median', () => {
    const g = { displacementXM: Float64Array.of(-1, 0, 1), displacementYM: Float64Array.of(2, 3, 4) };
    expect(positionSigmaFromDisplacements([g], 1)).toEqual({ sigmaM: 1.4826, n: 3 });
    // Below minForOffset the raw displacements count: |−1|, 0, 1, 2, 3, 4 → median 1.5.
    expect(positionSigmaFromDisplacements([g]).sigmaM).toBeCloseTo(1.4826 * 1.5, 12);
  });

  it('recovers σ of simulated scans with their own stage offsets (within 5 %)', () => {
    // 20 wafers × 400 repeats, σ = 42 µm per axis, offsets up to ±60 µm; the robust SD of 16 000
    // values has a relative SE of about 1.3 % (MAD efficiency 37 %); tolerance 5 % ≈ 4 SE.
    const rng = createRng(31);
    const sigma = 42 * um;
    const groups = [];
    for (let w = 0; w < 20; w++) {
      const pos = uniformDisc(rng, 400);
      const moved = jitter(rng, pos.xM, pos.yM, sigma);
      const shifted = translatePoints(
        { count: 400, xM: moved.xM, yM: moved.yM },
        (rng.uniform() - 0.5) * 120 * um,
        (rng.uniform() - 0.5) * 120 * um,
      );
      groups.push(estimateStageOffset({ count: 400, ...pos }, shifted, 500 * um));
    }
    const est = positionSigmaFromDisplacements(groups);
    expect(Math.abs(est.sigmaM / sigma - 1)).toBeLessThan(0.05);
    expect(est.n).toBeGreaterThan(7000);
  });

  it('refuses an empty set', () => {
    expect(() => positionSigmaFromDisplacements([])).toThrow(/at least one displacement/);
  });

  it('refuses a non-array, a group without Float64Arrays, unequal lengths and a non-finite displacement', () => {
    expect(() => positionSigmaFromDisplacements(Number.NaN as unknown as [])).toThrow(
      /positionSigmaFromDisplacements: groups = NaN m is out of range/,
    );
    const x = Float64Array.of(1, 2);
    expect(() =>
      positionSigmaFromDisplacements([
        { displacementXM: [1, 2] as unknown as Float64Array, displacementYM: x },
      ]),
    ).toThrow(/groups\[0\].displacementXM/);
    expect(() =>
      positionSigmaFromDisplacements([{ displacementXM: x, displacementYM: Float64Array.of(1) }]),
    ).toThrow(/groups\[0\].displacementYM = .* allowed a Float64Array of 2/);
    expect(() =>
      positionSigmaFromDisplacements([{ displacementXM: x, displacementYM: Float64Array.of(1, Number.NaN) }]),
    ).toThrow(/groups\[0\].displacementYM\[1\] = NaN m/);
  });
});
