import { describe, expect, it } from 'vitest';
import { ModelInputError } from '../../../src/model/errors.ts';
import { createRng } from '../../../src/model/rng.ts';
import {
  booleanCoveredFraction,
  criticalAreaOnWafer,
  criticalAreaRectangle,
  type DefectTerm,
  dieKillProbabilities,
  dieLayout,
  discHitsRectangle,
  expectedDefectsOnDie,
  expectedDieKills,
  murphyYield,
  negativeBinomialYield,
  poissonYield,
} from '../../../src/model/yield.ts';

const mm = 1e-3;
const perCm2 = 1e4; // 1 cm⁻² in m⁻²

describe('criticalAreaRectangle (Minkowski sum, A_c = WH + 2R(W + H) + πR²)', () => {
  it('10 × 5 mm die, R = 1 mm → 83.1416 mm² [D]', () => {
    expect(criticalAreaRectangle(10 * mm, 5 * mm, 1 * mm) / 1e-6).toBeCloseTo(83.1416, 4);
    expect(criticalAreaRectangle(10 * mm, 5 * mm, 1 * mm) / 1e-6).toBeCloseTo(50 + 30 + Math.PI, 10);
  });

  it('has the limits WH at R = 0 and πR² for a point, and rises with R (invariants)', () => {
    expect(criticalAreaRectangle(3 * mm, 2 * mm, 0)).toBeCloseTo(6e-6, 18);
    expect(criticalAreaRectangle(0, 0, 2 * mm)).toBeCloseTo(Math.PI * 4e-6, 18);
    let prev = 0;
    for (const r of [0, 0.1, 0.5, 1, 5].map((x) => x * mm)) {
      const a = criticalAreaRectangle(3 * mm, 2 * mm, r);
      expect(a).toBeGreaterThanOrEqual(prev);
      prev = a;
    }
  });

  it('rejects bad input with ModelInputError', () => {
    expect(() => criticalAreaRectangle(-1e-3, 1e-3, 1e-3)).toThrow(
      /criticalAreaRectangle: widthM = -0.001 m is out of range; allowed ≥ 0 m and ≤ 1 m/,
    );
    expect(() => criticalAreaRectangle(1e-3, Number.NaN, 1e-3)).toThrow(
      /criticalAreaRectangle: heightM = NaN m/,
    );
    expect(() => criticalAreaRectangle(1e-3, 1e-3, Number.POSITIVE_INFINITY)).toThrow(/radiusM/);
    expect(() => criticalAreaRectangle(1e-3, 1e-3, -1)).toThrow(ModelInputError);
  });
});

describe('booleanCoveredFraction (1 − exp(−Σ λπR²))', () => {
  it('λ = 1 cm⁻², R = 1 mm → 0.030928 [D]', () => {
    expect(booleanCoveredFraction([{ densityPerM2: 1 * perCm2, radiusM: 1 * mm }])).toBeCloseTo(0.030928, 6);
  });

  it('agrees with a Monte-Carlo Boolean model of discs (seeded; 4 binomial SE)', () => {
    // Poisson discs on a 60 × 60 mm torus (periodic, so no edge effect); coverage sampled at
    // 4000 random points per realisation, 40 realisations.
    const rng = createRng(1995);
    const L = 60 * mm;
    const terms: DefectTerm[] = [
      { densityPerM2: 0.5 * perCm2, radiusM: 1.5 * mm },
      { densityPerM2: 3 * perCm2, radiusM: 0.4 * mm },
    ];
    let covered = 0;
    let samples = 0;
    for (let rep = 0; rep < 40; rep++) {
      const discs: [number, number, number][] = [];
      for (const t of terms) {
        const n = rng.poisson(t.densityPerM2 * L * L);
        for (let i = 0; i < n; i++) discs.push([rng.uniform() * L, rng.uniform() * L, t.radiusM]);
      }
      for (let s = 0; s < 4000; s++) {
        const x = rng.uniform() * L;
        const y = rng.uniform() * L;
        samples++;
        for (const [cx, cy, r] of discs) {
          let dx = Math.abs(x - cx);
          let dy = Math.abs(y - cy);
          dx = Math.min(dx, L - dx);
          dy = Math.min(dy, L - dy);
          if (dx * dx + dy * dy <= r * r) {
            covered++;
            break;
          }
        }
      }
    }
    const f = booleanCoveredFraction(terms);
    // Points within one realisation are correlated; the realisation-to-realisation spread of
    // the covered area is small on a 36 cm² window, so 4 SE of the pooled binomial plus 10 % of f
    // is a fair bound.
    expect(Math.abs(covered / samples - f)).toBeLessThan(4 * Math.sqrt((f * (1 - f)) / samples) + 0.1 * f);
  });

  it('is 0 for no particles, adds in the exponent, and tends to 1 (invariants)', () => {
    expect(booleanCoveredFraction([])).toBe(0);
    const a = { densityPerM2: 2e4, radiusM: 0.5 * mm };
    const b = { densityPerM2: 5e3, radiusM: 2 * mm };
    const both = booleanCoveredFraction([a, b]);
    expect(1 - both).toBeCloseTo((1 - booleanCoveredFraction([a])) * (1 - booleanCoveredFraction([b])), 15);
    expect(booleanCoveredFraction([{ densityPerM2: 1e9, radiusM: 1 * mm }])).toBe(1);
  });

  it('rejects bad terms with ModelInputError naming the term', () => {
    expect(() => booleanCoveredFraction([{ densityPerM2: -1, radiusM: 1e-3 }])).toThrow(
      /booleanCoveredFraction: terms\[0\]\.densityPerM2 = -1 1\/m²/,
    );
    expect(() => booleanCoveredFraction([{ densityPerM2: 1, radiusM: Number.NaN }])).toThrow(
      /terms\[0\]\.radiusM = NaN m/,
    );
    expect(() => booleanCoveredFraction(null as unknown as DefectTerm[])).toThrow(ModelInputError);
    expect(() => booleanCoveredFraction([null as unknown as DefectTerm])).toThrow(/terms\[0\]/);
  });
});

describe('yield models, named by their form', () => {
  it('AD = 0.5: Poisson 0.6065, negative binomial (α = 2) 0.6400, Murphy 0.6193 [D]', () => {
    expect(poissonYield(0.5)).toBeCloseTo(0.6065, 4);
    expect(poissonYield(0.5)).toBeCloseTo(Math.exp(-0.5), 15);
    expect(negativeBinomialYield(0.5, 2)).toBeCloseTo(0.64, 12); // (1 + 0.25)^(−2)
    expect(murphyYield(0.5)).toBeCloseTo(0.6193, 4);
    expect(murphyYield(0.5)).toBeCloseTo(((1 - Math.exp(-0.5)) / 0.5) ** 2, 15);
  });

  it('all give Y(0) = 1, fall with AD, and the negative binomial tends to Poisson as α → ∞ (invariants)', () => {
    expect(poissonYield(0)).toBe(1);
    expect(negativeBinomialYield(0, 1)).toBe(1);
    expect(murphyYield(0)).toBe(1);
    let prev = [2, 2, 2];
    for (const ad of [0.01, 0.3, 1, 3, 10, 100]) {
      const cur = [poissonYield(ad), negativeBinomialYield(ad, 1.5), murphyYield(ad)];
      cur.forEach((y, i) => {
        expect(y).toBeLessThan(prev[i]!);
        expect(y).toBeGreaterThan(0);
      });
      // Clustering and die-to-die variation of density raise yield above Poisson at equal AD.
      expect(cur[1]!).toBeGreaterThan(cur[0]!);
      expect(cur[2]!).toBeGreaterThan(cur[0]!);
      prev = cur;
    }
    expect(Math.abs(negativeBinomialYield(0.7, 1e9) - poissonYield(0.7))).toBeLessThan(1e-9);
    expect(murphyYield(1e-9)).toBeCloseTo(1 - 1e-9, 15); // Murphy ≈ 1 − AD for small AD
  });

  it('reject bad AD and α with ModelInputError', () => {
    for (const fn of [poissonYield, murphyYield]) {
      expect(() => fn(-0.1)).toThrow(
        new RegExp(`${fn.name}: expectedDefects = -0.1 defects per die is out of range`),
      );
      expect(() => fn(Number.NaN)).toThrow(ModelInputError);
      expect(() => fn(Number.POSITIVE_INFINITY)).toThrow(ModelInputError);
    }
    expect(() => negativeBinomialYield(-1, 2)).toThrow(/negativeBinomialYield: expectedDefects/);
    expect(() => negativeBinomialYield(1, 0)).toThrow(
      /negativeBinomialYield: alpha = 0 is out of range; allowed ≥ 0.001/,
    );
    expect(() => negativeBinomialYield(1, Number.NaN)).toThrow(ModelInputError);
  });
});

describe('expectedDefectsOnDie (Σ λ A_c)', () => {
  it('1 cm⁻² of 1 mm voids on a 10 × 5 mm die → 0.831416 [D]', () => {
    expect(expectedDefectsOnDie([{ densityPerM2: perCm2, radiusM: 1 * mm }], 10 * mm, 5 * mm)).toBeCloseTo(
      0.831416,
      6,
    );
  });

  it('sums over size classes and is 0 for none', () => {
    const a = { densityPerM2: 100, radiusM: 2 * mm };
    const b = { densityPerM2: 300, radiusM: 0.2 * mm };
    expect(expectedDefectsOnDie([a, b], 8 * mm, 8 * mm)).toBeCloseTo(
      expectedDefectsOnDie([a], 8 * mm, 8 * mm) + expectedDefectsOnDie([b], 8 * mm, 8 * mm),
      15,
    );
    expect(expectedDefectsOnDie([], 8 * mm, 8 * mm)).toBe(0);
  });

  it('rejects bad input', () => {
    expect(() => expectedDefectsOnDie([{ densityPerM2: 1, radiusM: 1e-3 }], -1, 1e-3)).toThrow(
      /expectedDefectsOnDie: dieWidthM = -1 m/,
    );
    expect(() => expectedDefectsOnDie([{ densityPerM2: 1, radiusM: 1e-3 }], 1e-3, Number.NaN)).toThrow(
      /dieHeightM/,
    );
    expect(() => expectedDefectsOnDie([{ densityPerM2: Number.NaN, radiusM: 1e-3 }], 1e-3, 1e-3)).toThrow(
      /terms\[0\]/,
    );
  });
});

describe('discHitsRectangle (exact; touching counts as a hit)', () => {
  const rect = { xMinM: 0, yMinM: 0, xMaxM: 0.01, yMaxM: 0.005 };

  it('hits when the centre is inside, misses when far away', () => {
    expect(discHitsRectangle(0.005, 0.002, 0, rect)).toBe(true);
    expect(discHitsRectangle(0.05, 0.05, 0.001, rect)).toBe(false);
  });

  it('a disc exactly touching an edge kills the die (convention), a hair smaller does not', () => {
    expect(discHitsRectangle(-0.25, 0.002, 0.25, { xMinM: 0, yMinM: 0, xMaxM: 0.5, yMaxM: 0.5 })).toBe(true);
    expect(
      discHitsRectangle(-0.25, 0.002, 0.25 * (1 - 1e-12), { xMinM: 0, yMinM: 0, xMaxM: 0.5, yMaxM: 0.5 }),
    ).toBe(false);
    expect(discHitsRectangle(0.015, 0.0025, 0.005, rect)).toBe(true); // right edge at x = 0.01
  });

  it('a disc exactly touching a corner kills the die (3-4-5 triangle, exact in binary)', () => {
    const r = { xMinM: 0, yMinM: 0, xMaxM: 0.5, yMaxM: 0.5 };
    expect(discHitsRectangle(-0.375, -0.5, 0.625, r)).toBe(true); // distance² = 0.390625 = r²
    expect(discHitsRectangle(-0.375, -0.5, 0.6249999, r)).toBe(false);
    // Near the corner but beyond the rounded corner, though inside the bounding box of the Minkowski sum:
    expect(discHitsRectangle(-0.09, -0.09, 0.1, r)).toBe(false);
  });

  it('rejects bad input', () => {
    expect(() => discHitsRectangle(Number.NaN, 0, 1e-3, rect)).toThrow(/discHitsRectangle: cxM = NaN m/);
    expect(() => discHitsRectangle(0, 0, -1e-3, rect)).toThrow(/discHitsRectangle: rM = -0.001 m/);
    expect(() => discHitsRectangle(0, 0, 1e-3, { xMinM: 1e-3, yMinM: 0, xMaxM: 0, yMaxM: 1e-3 })).toThrow(
      /rect.xMaxM = 0 m is out of range; allowed ≥ 0.001 m/,
    );
    expect(() => discHitsRectangle(0, 0, 1e-3, null as unknown as typeof rect)).toThrow(
      /discHitsRectangle: rect = null/,
    );
  });
});

describe('dieLayout', () => {
  it('places exactly the four dies around the centre when only they fit (hand-checked case)', () => {
    // 10 mm dies, wafer centre on a street corner (offset 5 mm); usable radius 14.2 mm ≥ √2·10 mm.
    const layout = dieLayout({
      waferDiameterM: 2 * 14.2 * mm + 2 * mm,
      edgeExclusionM: 1 * mm,
      dieWidthM: 10 * mm,
      dieHeightM: 10 * mm,
      offsetXM: 5 * mm,
      offsetYM: 5 * mm,
    });
    expect(layout.dies.map((d) => [d.col, d.row])).toEqual([
      [-1, -1],
      [0, -1],
      [-1, 0],
      [0, 0],
    ]);
    expect(layout.dies[3]!.die).toEqual({ xMinM: 0, yMinM: 0, xMaxM: 10 * mm, yMaxM: 10 * mm });
  });

  it('keeps exactly the whole dies inside the usable disc (independent brute-force count, 300 mm wafer)', () => {
    const spec = {
      waferDiameterM: 0.3,
      edgeExclusionM: 3 * mm,
      dieWidthM: 9 * mm,
      dieHeightM: 7 * mm,
      pitchXM: 9.1 * mm,
      pitchYM: 7.1 * mm,
      offsetXM: 1.3 * mm,
      offsetYM: -2 * mm,
    };
    const layout = dieLayout(spec);
    const ru = 0.15 - 3 * mm;
    let count = 0;
    for (let i = -40; i <= 40; i++)
      for (let j = -40; j <= 40; j++) {
        const cx = spec.offsetXM + i * spec.pitchXM;
        const cy = spec.offsetYM + j * spec.pitchYM;
        const corners = [
          [cx - 4.5 * mm, cy - 3.5 * mm],
          [cx + 4.5 * mm, cy - 3.5 * mm],
          [cx - 4.5 * mm, cy + 3.5 * mm],
          [cx + 4.5 * mm, cy + 3.5 * mm],
        ];
        if (corners.every(([x, y]) => Math.hypot(x!, y!) <= ru)) count++;
      }
    expect(layout.dies.length).toBe(count);
    expect(layout.dies.length * 63e-6).toBeLessThan(Math.PI * ru * ru); // area bound
    for (const d of layout.dies) {
      expect(
        Math.hypot(Math.max(-d.die.xMinM, d.die.xMaxM), Math.max(-d.die.yMinM, d.die.yMaxM)),
      ).toBeLessThanOrEqual(ru);
    }
  });

  it('places the active (pad-array) rectangle relative to each die corner', () => {
    const layout = dieLayout({
      waferDiameterM: 0.1,
      edgeExclusionM: 2 * mm,
      dieWidthM: 10 * mm,
      dieHeightM: 10 * mm,
      activeArea: { xMinM: 1 * mm, yMinM: 2 * mm, xMaxM: 9 * mm, yMaxM: 8 * mm },
    });
    for (const d of layout.dies) {
      expect(d.active.xMinM - d.die.xMinM).toBeCloseTo(1 * mm, 15);
      expect(d.die.yMaxM - d.active.yMaxM).toBeCloseTo(2 * mm, 15);
    }
    // A centred grid on a centred wafer is symmetric under x → −x.
    const cols = layout.dies.map((d) => d.col);
    expect(Math.min(...cols)).toBe(-Math.max(...cols));
  });

  it('rejects bad specs with ModelInputError', () => {
    const ok = { waferDiameterM: 0.3, edgeExclusionM: 3e-3, dieWidthM: 0.01, dieHeightM: 0.01 };
    expect(() => dieLayout({ ...ok, waferDiameterM: 0 })).toThrow(/dieLayout: waferDiameterM = 0 m/);
    expect(() => dieLayout({ ...ok, edgeExclusionM: 0.15 })).toThrow(
      /dieLayout: edgeExclusionM = 0.15 m is out of range; allowed ≥ 0 m and < 0.15 m/,
    );
    expect(() => dieLayout({ ...ok, dieWidthM: Number.NaN })).toThrow(/dieWidthM/);
    expect(() => dieLayout({ ...ok, pitchXM: 0.005 })).toThrow(
      /dieLayout: pitchXM = 0.005 m is out of range; allowed ≥ 0.01 m/,
    );
    expect(() => dieLayout({ ...ok, activeArea: { xMinM: 0, yMinM: 0, xMaxM: 0.02, yMaxM: 0.01 } })).toThrow(
      /activeArea/,
    );
    expect(() => dieLayout({ ...ok, dieWidthM: 1e-4, dieHeightM: 1e-4 })).toThrow(/at most 10⁶ dies/);
    expect(() => dieLayout(null as unknown as typeof ok)).toThrow(/dieLayout: spec = null/);
  });
});

describe('criticalAreaOnWafer (Minkowski region clipped to the wafer)', () => {
  it('equals the unclipped formula for a die well inside the wafer', () => {
    const rect = { xMinM: -5 * mm, yMinM: -5 * mm, xMaxM: 5 * mm, yMaxM: 5 * mm };
    expect(criticalAreaOnWafer(rect, 1 * mm, 0.15)).toBeCloseTo(
      criticalAreaRectangle(10 * mm, 10 * mm, 1 * mm),
      18,
    );
  });

  it('gives the circle–circle lens area for a point die near the edge (closed-form lens area)', () => {
    // Lens of two circles r and R at centre distance d: r² acos((d²+r²−R²)/(2dr)) + R² acos((d²+R²−r²)/(2dR)) − ½√(…).
    for (const [d, r, R] of [
      [0.14, 0.02, 0.15],
      [0.149, 0.005, 0.15],
      [0.05, 0.04, 0.05],
    ] as const) {
      const lens =
        r * r * Math.acos((d * d + r * r - R * R) / (2 * d * r)) +
        R * R * Math.acos((d * d + R * R - r * r) / (2 * d * R)) -
        0.5 * Math.sqrt((-d + r + R) * (d + r - R) * (d - r + R) * (d + r + R));
      const a = criticalAreaOnWafer({ xMinM: d, yMinM: 0, xMaxM: d, yMaxM: 0 }, r, R);
      expect(Math.abs(a / lens - 1)).toBeLessThan(1e-8);
    }
  });

  it('is the whole wafer when the void radius exceeds everything, and never exceeds the unclipped area (invariants)', () => {
    const rect = { xMinM: 0, yMinM: 0, xMaxM: 1 * mm, yMaxM: 1 * mm };
    expect(criticalAreaOnWafer(rect, 0.2, 0.05) / (Math.PI * 0.05 * 0.05)).toBeCloseTo(1, 8);
    for (const r of [0.5, 2, 5].map((x) => x * mm)) {
      const edge = { xMinM: 0.14, yMinM: -5 * mm, xMaxM: 0.145, yMaxM: 5 * mm };
      expect(criticalAreaOnWafer(edge, r, 0.15)).toBeLessThan(criticalAreaRectangle(5 * mm, 10 * mm, r));
    }
  });

  it('agrees with a direct integration over x of the region’s vertical extent, for dies cut by the wafer edge in every way', () => {
    // Reference: at each x the rounded rectangle spans [y0 − s, y1 + s] (s = √(R² − dx²) beside the
    // rectangle, R above it) and the wafer [−c, c], c = √(R_w² − x²); the area is the integral of the
    // overlap, by the midpoint rule on 400 000 points between the outline's kinks. Its error
    // (the square-root ends at the wafer circle dominate, ~h^1.5) stays below 10⁻⁶ of the area.
    const reference = (
      rect: { xMinM: number; yMinM: number; xMaxM: number; yMaxM: number },
      R: number,
      rw: number,
    ) => {
      const { xMinM: x0, yMinM: y0, xMaxM: x1, yMaxM: y1 } = rect;
      const a = Math.max(x0 - R, -rw);
      const b = Math.min(x1 + R, rw);
      const cuts = [a, x0, x1, b].filter((x) => x >= a && x <= b).sort((p, q) => p - q);
      let area = 0;
      for (let i = 0; i + 1 < cuts.length; i++) {
        const lo = cuts[i]!;
        const n = 100_000;
        const h = (cuts[i + 1]! - lo) / n;
        for (let j = 0; j < n; j++) {
          const x = lo + (j + 0.5) * h;
          const dx = x < x0 ? x0 - x : x > x1 ? x - x1 : 0;
          const s = Math.sqrt(Math.max(0, R * R - dx * dx));
          const c = Math.sqrt(Math.max(0, rw * rw - x * x));
          area += Math.max(0, Math.min(y1 + s, c) - Math.max(y0 - s, -c)) * h;
        }
      }
      return area;
    };
    const cases: [{ xMinM: number; yMinM: number; xMaxM: number; yMaxM: number }, number][] = [
      [{ xMinM: 0.138, yMinM: -2 * mm, xMaxM: 0.144, yMaxM: 2 * mm }, 10 * mm], // one side past the edge
      [{ xMinM: 0.095, yMinM: 0.095, xMaxM: 0.101, yMaxM: 0.099 }, 8 * mm], // a corner past the edge
      [{ xMinM: -0.01, yMinM: 0.13, xMaxM: 0.01, yMaxM: 0.14 }, 19 * mm], // a wide die near the top
      [{ xMinM: 0.12, yMinM: -0.05, xMaxM: 0.14, yMaxM: 0.05 }, 25 * mm], // cut in two places
      [{ xMinM: 0.146, yMinM: 0, xMaxM: 0.146, yMaxM: 0 }, 6 * mm], // a point (a lens)
      [{ xMinM: -0.02, yMinM: -0.02, xMaxM: 0.02, yMaxM: 0.02 }, 0.14], // covers nearly the wafer
    ];
    for (const [rect, R] of cases) {
      const ref = reference(rect, R, 0.15);
      expect(Math.abs(criticalAreaOnWafer(rect, R, 0.15) - ref)).toBeLessThan(1e-6 * ref);
    }
  });

  it('rejects bad input', () => {
    const rect = { xMinM: 0, yMinM: 0, xMaxM: 1e-3, yMaxM: 1e-3 };
    expect(() => criticalAreaOnWafer(rect, -1, 0.15)).toThrow(/criticalAreaOnWafer: radiusM = -1 m/);
    expect(() => criticalAreaOnWafer(rect, 1e-3, 0)).toThrow(/criticalAreaOnWafer: waferRadiusM = 0 m/);
    expect(() => criticalAreaOnWafer({ ...rect, yMinM: Number.NaN }, 1e-3, 0.15)).toThrow(/rect.yMinM = NaN/);
  });
});

describe('dieKillProbabilities / expectedDieKills', () => {
  const layout = dieLayout({
    waferDiameterM: 0.1,
    edgeExclusionM: 3 * mm,
    dieWidthM: 10 * mm,
    dieHeightM: 10 * mm,
  });

  it('equals the Poisson form Σ(1 − exp(−λA_c)) for dies far from the edge', () => {
    const terms = [{ densityPerM2: 200, radiusM: 1 * mm }];
    const probs = dieKillProbabilities(layout, terms);
    const centre = layout.dies.findIndex((d) => d.col === 0 && d.row === 0);
    expect(probs[centre]).toBeCloseTo(
      1 - poissonYield(200 * criticalAreaRectangle(10 * mm, 10 * mm, 1 * mm)),
      14,
    );
  });

  it('matches a Monte-Carlo bonded pair with particles over the whole wafer face (seeded; 4 SE)', () => {
    // Edge convention under test: particle centres uniform on the full wafer disc (edge
    // exclusion included), kills by exact disc–rectangle test.
    const terms = [
      { densityPerM2: 60, radiusM: 6 * mm }, // reaches past the wafer edge from the outer dies
      { densityPerM2: 400, radiusM: 0.5 * mm },
    ];
    const rw = 0.05;
    const rng = createRng(2013);
    const trials = 3000;
    let sum = 0;
    let sum2 = 0;
    for (let k = 0; k < trials; k++) {
      const discs: [number, number, number][] = [];
      for (const t of terms) {
        const n = rng.poisson(t.densityPerM2 * Math.PI * rw * rw);
        for (let i = 0; i < n; i++) {
          const rho = rw * Math.sqrt(rng.uniform());
          const phi = 2 * Math.PI * rng.uniform();
          discs.push([rho * Math.cos(phi), rho * Math.sin(phi), t.radiusM]);
        }
      }
      let killed = 0;
      for (const d of layout.dies)
        if (discs.some(([x, y, r]) => discHitsRectangle(x, y, r, d.active))) killed++;
      sum += killed;
      sum2 += killed * killed;
    }
    const mean = sum / trials;
    const se = Math.sqrt((sum2 / trials - mean * mean) / trials);
    expect(Math.abs(expectedDieKills(layout, terms) - mean)).toBeLessThan(4 * se);
    // Ignoring the wafer edge can only overestimate (invariant).
    const unclipped = layout.dies.reduce(
      (s, _d) =>
        s +
        (1 -
          Math.exp(
            -terms.reduce(
              (a, t) => a + t.densityPerM2 * criticalAreaRectangle(10 * mm, 10 * mm, t.radiusM),
              0,
            ),
          )),
      0,
    );
    expect(unclipped).toBeGreaterThanOrEqual(expectedDieKills(layout, terms));
  });

  it('clips the critical area of an edge die to the wafer (hit-or-miss Monte-Carlo area; 4 SE)', () => {
    // The outermost die on the +x axis of the 100 mm layout, R = 6 mm: its Minkowski region
    // pokes past the wafer edge at x = 50 mm.
    const d = layout.dies.reduce((best, x) => (x.die.xMaxM > best.die.xMaxM && x.row === 0 ? x : best));
    const R = 6 * mm;
    const rw = 0.05;
    const rng = createRng(51);
    const box = { x0: d.die.xMinM - R, x1: d.die.xMaxM + R, y0: d.die.yMinM - R, y1: d.die.yMaxM + R };
    const boxArea = (box.x1 - box.x0) * (box.y1 - box.y0);
    const n = 400_000;
    let inside = 0;
    for (let i = 0; i < n; i++) {
      const x = box.x0 + rng.uniform() * (box.x1 - box.x0);
      const y = box.y0 + rng.uniform() * (box.y1 - box.y0);
      if (x * x + y * y <= rw * rw && discHitsRectangle(x, y, R, d.die)) inside++;
    }
    const p = inside / n;
    const mcArea = p * boxArea;
    const se = Math.sqrt((p * (1 - p)) / n) * boxArea;
    expect(Math.abs(criticalAreaOnWafer(d.die, R, rw) - mcArea)).toBeLessThan(4 * se);
    // …and the clipping matters here: the unclipped area is far outside the Monte-Carlo band.
    expect(criticalAreaRectangle(10 * mm, 10 * mm, R) - mcArea).toBeGreaterThan(20 * se);
  });

  it('a detected particle whose void exactly touches a die kills it with its survival probability', () => {
    const d = layout.dies.find((x) => x.col === 0 && x.row === 0)!; // die [−5, 5] mm square
    const probs = dieKillProbabilities(layout, [], [{ xM: 0, yM: 0.0075, radiusM: 0.0025, survival: 0.8 }]);
    const i = layout.dies.indexOf(d);
    expect(probs[i]).toBeCloseTo(0.8, 15); // touches the top edge y = 5 mm exactly
    const above = layout.dies.findIndex((x) => x.col === 0 && x.row === 1);
    expect(probs[above]).toBeCloseTo(0.8, 15); // and reaches into the die above
    const off = dieKillProbabilities(layout, [], [{ xM: 0, yM: 0.0075, radiusM: 0.0024999, survival: 0.8 }]);
    expect(off[i]).toBe(0);
    // Two independent particles on the same die: 1 − (1 − 0.5)(1 − 0.5).
    const two = dieKillProbabilities(
      layout,
      [],
      [
        { xM: 0, yM: 0, radiusM: 1e-4, survival: 0.5 },
        { xM: 0.001, yM: 0.001, radiusM: 1e-4, survival: 0.5 },
      ],
    );
    expect(two[i]).toBeCloseTo(0.75, 15);
    expect(expectedDieKills(layout, [])).toBe(0);
  });

  it('rejects bad terms, particles and layouts with ModelInputError', () => {
    expect(() => dieKillProbabilities(layout, [{ densityPerM2: -1, radiusM: 1e-3 }])).toThrow(
      /dieKillProbabilities: terms\[0\]\.densityPerM2/,
    );
    expect(() => dieKillProbabilities(layout, [], [{ xM: 0, yM: 0, radiusM: 1e-3, survival: 1.2 }])).toThrow(
      /detected\[0\]\.survival = 1.2/,
    );
    expect(() =>
      dieKillProbabilities(layout, [], [{ xM: 0.04, yM: 0.04, radiusM: 1e-3, survival: 1 }]),
    ).toThrow(/a position on the wafer/);
    expect(() =>
      dieKillProbabilities(layout, [], [{ xM: Number.NaN, yM: 0, radiusM: 1e-3, survival: 1 }]),
    ).toThrow(/detected\[0\]\.xM = NaN/);
    expect(() => expectedDieKills({ ...layout, waferDiameterM: -1 }, [])).toThrow(/layout.waferDiameterM/);
    expect(() => expectedDieKills(null as unknown as typeof layout, [])).toThrow(/layout = null/);
  });
});
