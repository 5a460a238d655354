/**
 * Matching observed voids to the predicted discs of scanned particles, on hand-built maps: the top
 * wafer flipped, turned and shifted into the bond frame (positions computed by hand here, not by the
 * engine's geometry), one-to-one most-probable assignment, the edge exclusion, not-seen discs, the
 * tolerance and the chance matches (hand computations from methods.md §1 and §4).
 */
import { describe, expect, it } from 'vitest';
import { buildDieGrid } from '../../../../src/engine/geometry.ts';
import { preparePairs } from '../../../../src/engine/learn/calibration.ts';
import {
  calibrationInspection,
  DEFAULT_SCANNER_SIGMA_M,
  matchPairVoids,
  observedFigures,
} from '../../../../src/engine/learn/calibration-match.ts';
import type { InspectionInput } from '../../../../src/engine/learn/calibration-types.ts';
import type { VoidDisc } from '../../../../src/engine/types.ts';
import { H, line, pair, product, scan, step, T0, tool, wafer } from '../../../helpers/engine-inputs.ts';

function inspection(voids: [number, number, number][], over: Partial<InspectionInput> = {}): InspectionInput {
  return {
    inspectionId: 'INSP-1',
    pairId: 'P-1',
    method: 'acoustic',
    stage: 'after-anneal',
    toolId: 'SAM-1',
    smallestVoidM: 0.1e-3,
    positionSigmaM: 0.1e-3,
    timeMs: T0 + 10 * H,
    voids: {
      count: voids.length,
      xM: Float64Array.from(voids, (v) => v[0]),
      yM: Float64Array.from(voids, (v) => v[1]),
      diameterM: Float64Array.from(voids, (v) => v[2]),
      classes: voids.map(() => 'unknown'),
    },
    ...over,
  };
}

function disc(xM: number, yM: number, rM: number, survival: number, diameterM = 0.3e-6): VoidDisc {
  return { xM, yM, rM, survival, sourceKey: 'bottom:detected', wafer: 'bottom', diameterM };
}

const RB = 0.147; // bonded radius of a 300 mm wafer with 3 mm edge exclusion

describe('matchPairVoids', () => {
  it('uses τ = 3.03·√(σ_insp² + σ_scan²) (Rayleigh, q = 0.99, root-sum-square; hand computation)', () => {
    const m = matchPairVoids({
      inspection: inspection([]),
      discs: [],
      bondedRadiusM: RB,
      inspectionSigmaM: 0.2e-3,
      scannerSigmaM: 50e-6,
    });
    // √(2 ln 100) = 3.034854; √(0.1² + 0.05²) mm = 0.111803 mm → 0.339306 mm
    expect(m.toleranceM).toBeCloseTo(3.034854 * Math.hypot(0.1e-3, 50e-6), 9);
    expect(m.toleranceM * 1e3).toBeCloseTo(0.339306, 5);
    expect(m.inspectionSigmaStated).toBe(true);
    // an inspection stating no error takes the default given
    const d = matchPairVoids({
      inspection: inspection([], { positionSigmaM: null }),
      discs: [],
      bondedRadiusM: RB,
      inspectionSigmaM: 0.2e-3,
      scannerSigmaM: 50e-6,
    });
    expect(d.inspectionSigmaM).toBe(0.2e-3);
    expect(d.inspectionSigmaStated).toBe(false);
  });

  it('classes voids explained, unexplained and in the edge exclusion, and discs not seen', () => {
    const m = matchPairVoids({
      inspection: inspection([
        [0.0201, 0.03, 0.4e-3], // 0.1 mm from disc 0 → explained
        [0.08, -0.08, 0.3e-3], // nothing near → unexplained
        [0.148, 0, 0.6e-3], // 148 mm from the centre > 147 mm → edge exclusion
      ]),
      discs: [disc(0.02, 0.03, 0.15e-3, 1), disc(-0.05, 0.05, 0.2e-3, 0.4), disc(0.01, -0.1, 0.02e-3, 1)],
      bondedRadiusM: RB,
      inspectionSigmaM: 0.2e-3,
      scannerSigmaM: DEFAULT_SCANNER_SIGMA_M,
    });
    expect(m.voids.map((v) => v.match)).toEqual(['explained', 'unexplained', 'edge-exclusion']);
    expect(m.voids[0]!.disc).toBe(0);
    expect(m.voids[0]!.distanceM).toBeCloseTo(0.1e-3, 12);
    expect([m.explained, m.unexplained, m.inEdgeExclusion]).toEqual([1, 1, 1]);
    // disc 1 (2R = 0.4 mm ≥ 0.1 mm) is reportable and unmatched: not seen, weight its survival 0.4;
    // disc 2 (2R = 0.04 mm) is below the inspection's smallest void: not a miss.
    expect(m.discs.map((d) => d.reportable)).toEqual([true, true, false]);
    expect(m.notSeen).toBe(1);
    expect(m.notSeenExpected).toBeCloseTo(0.4, 15);
    expect(m.expectedFromScanned).toBeCloseTo(1.4, 15);
  });

  it('matches one to one, the most probable source first (survival × normal density of the offset)', () => {
    // σ² = 0.1² + 0.05² = 0.0125 mm². A: 0.05 mm off, s = 0.01 → ln 0.01 − 0.05²/(2σ²) = −4.705;
    // B: 0.2 mm off, s = 0.9 → ln 0.9 − 0.2²/(2σ²) = −1.705. B is the more probable source.
    const m = matchPairVoids({
      inspection: inspection([[0, 0, 0.3e-3]]),
      discs: [disc(0.05e-3, 0, 0.15e-3, 0.01), disc(0, 0.2e-3, 0.15e-3, 0.9)],
      bondedRadiusM: RB,
      inspectionSigmaM: 0.2e-3,
      scannerSigmaM: DEFAULT_SCANNER_SIGMA_M,
    });
    expect(m.voids[0]!.disc).toBe(1);
    expect(m.discs[0]!.matchedVoid).toBe(-1);
    // two voids, one particle: only one of them is explained
    const two = matchPairVoids({
      inspection: inspection([
        [0, 0, 0.3e-3],
        [0.1e-3, 0, 0.3e-3],
      ]),
      discs: [disc(0, 0, 0.15e-3, 1)],
      bondedRadiusM: RB,
      inspectionSigmaM: 0.2e-3,
      scannerSigmaM: DEFAULT_SCANNER_SIGMA_M,
    });
    expect(two.voids.map((v) => v.match)).toEqual(['explained', 'unexplained']);
  });

  it('reaches a void anywhere within R + τ of the particle and no farther', () => {
    const tol = 3.034854 * Math.hypot(0.1e-3, 50e-6);
    const at = (dx: number) =>
      matchPairVoids({
        inspection: inspection([[dx, 0, 1e-3]]),
        discs: [disc(0, 0, 1e-3, 1)],
        bondedRadiusM: RB,
        inspectionSigmaM: 0.2e-3,
        scannerSigmaM: DEFAULT_SCANNER_SIGMA_M,
      }).voids[0]!.match;
    expect(at(1e-3 + tol - 1e-7)).toBe('explained');
    expect(at(1e-3 + tol + 1e-7)).toBe('unexplained');
  });

  it('expects n_obs · Σ π(R_j + τ)²/A_b chance matches (methods.md §1; hand computation)', () => {
    const m = matchPairVoids({
      inspection: inspection([
        [0.05, 0.05, 0.3e-3],
        [-0.05, 0.05, 0.3e-3],
      ]),
      discs: [disc(0, 0, 1e-3, 0.5), disc(0.1, 0, 2e-3, 1)],
      bondedRadiusM: RB,
      inspectionSigmaM: 0.2e-3,
      scannerSigmaM: DEFAULT_SCANNER_SIGMA_M,
    });
    const tol = m.toleranceM;
    const expected = (2 * Math.PI * ((1e-3 + tol) ** 2 + (2e-3 + tol) ** 2)) / (Math.PI * RB * RB);
    expect(m.chanceMatches).toBeCloseTo(expected, 15);
    expect(m.explained).toBe(0);
  });
});

describe('calibrationInspection', () => {
  it('takes the inspection reporting the smallest voids, the latest on a tie', () => {
    const ir = inspection([], { inspectionId: 'IR', smallestVoidM: 0.5e-3, timeMs: 1 });
    const sam = inspection([], { inspectionId: 'SAM', smallestVoidM: 0.1e-3, timeMs: 0 });
    const sam2 = inspection([], { inspectionId: 'SAM-2', smallestVoidM: 0.1e-3, timeMs: 5 });
    expect(calibrationInspection([ir, sam])?.inspectionId).toBe('SAM');
    expect(calibrationInspection([sam2, ir, sam])?.inspectionId).toBe('SAM-2');
    expect(calibrationInspection([])).toBeNull();
  });
});

describe('observedFigures', () => {
  it('counts the voids inside the bonded area, their area, and the dies they touch (hand geometry)', () => {
    // Dies 10 × 10 mm on a 10.1 mm pitch, die (0, 0) at [−5, 5] mm, no pad: the whole die is critical.
    const p = product();
    const grid = buildDieGrid(p.die!, RB);
    const m = matchPairVoids({
      inspection: inspection([
        [0, 0, 1e-3], // inside die (0, 0)
        [5.05e-3, 0, 0.2e-3], // in the 0.1 mm street, r = 0.1 mm: touches dies (0, 0) and (1, 0)
        [0.1485, 0, 0.5e-3], // edge exclusion: not counted
      ]),
      discs: [],
      bondedRadiusM: RB,
      inspectionSigmaM: 0.2e-3,
      scannerSigmaM: DEFAULT_SCANNER_SIGMA_M,
    });
    const o = observedFigures(m, grid);
    expect(o.voids).toBe(2);
    expect(o.unbondedAreaM2).toBeCloseTo((Math.PI / 4) * (1e-6 + 0.04e-6), 18);
    expect(o.dieKills).toBe(2);
    expect(observedFigures(m, null).dieKills).toBeNull();
  });
});

describe('preparePairs on a pair with the top wafer flipped, turned and shifted', () => {
  it('finds the top particle where the flip puts it, not where it sat on its own wafer', () => {
    // Top particle at (10, 20) mm in its own frame. Flip about y: (−10, 20); turn +90°:
    // (x, y) → (−y, x) = (−20, −10); shift (+1, −2) mm: (−19, −12) mm in the bond frame.
    // Bottom particle at (−30, 40) mm (its frame is the bond frame). Both 1 µm: R ≈ 2 mm.
    const top = wafer('W-T', scan('S-T', T0, [0.01], [0.02], [1e-6]), [
      step(0, 'bond', T0 + 2 * H, T0 + 2.1 * H, { toolId: 'BONDER' }),
    ]);
    const bottom = wafer('W-B', scan('S-B', T0, [-0.03, 0.05], [0.04, -0.05], [1e-6, 0.5e-6]), [
      step(0, 'bond', T0 + 2 * H, T0 + 2.1 * H, { toolId: 'BONDER' }),
    ]);
    const p = pair('P-1', top, bottom, {
      rotationRad: Math.PI / 2,
      offsetXM: 1e-3,
      offsetYM: -2e-3,
      bondTimeMs: T0 + 2 * H,
    });
    const data = line({ tools: { BONDER: tool('BONDER', 0.01) } });
    const insp = inspection([
      [-0.01905, -0.01203, 3e-3], // 0.058 mm from the mirrored top particle
      [0.01, 0.02, 3e-3], // where the top particle sat unmirrored: nothing there in the bond frame
      [-0.03002, 0.04001, 3e-3], // the bottom particle
    ]);
    const { pairs } = preparePairs(
      [
        {
          lot: { lotId: 'LOT-1', productId: 'HB-1', pairs: [p] },
          line: data,
          asOfMs: T0 + 10 * H,
          inspections: { 'P-1': [insp] },
        },
      ],
      { draws: 50 },
    );
    const m = pairs[0]!.calibration.matching;
    expect(m.voids.map((v) => v.match)).toEqual(['explained', 'unexplained', 'explained']);
    const topDisc = m.discs[m.voids[0]!.disc]!;
    expect(topDisc.wafer).toBe('top');
    expect(topDisc.xM).toBeCloseTo(-0.019, 12);
    expect(topDisc.yM).toBeCloseTo(-0.012, 12);
    expect(m.discs[m.voids[2]!.disc]!.wafer).toBe('bottom');
    // the 0.5 µm bottom particle (R ≈ 1 mm, reportable) has no void: not seen, survival 1
    expect(m.notSeen).toBe(1);
    expect(m.notSeenExpected).toBeCloseTo(1, 12);
  });
});
