/**
 * The worked chain of a bonding fab's sanity check, computed by hand and through the engine:
 * a 300 mm wafer waiting 3 h open in ISO 2 air (100 /m³ ≥ 0.1 µm, ISO 14644-1:2015 class 2 limit)
 * at v_d = 2×10⁻⁵ m/s collects 100 · 2e-5 · 10 800 · π·0.15² = 1.5268 particles ≥ 0.1 µm; 8 scanned
 * particles ≥ 45 nm after a rinse of 70 % efficiency leave 8 · 0.3 = 2.4; with 1 bonder adder per
 * pass a pair carries 2 · (1.5268 + 2.4 + 1) = 9.854 particles at its interface (hand computation).
 */
import { describe, expect, it } from 'vitest';
import { assessPair } from '../../../src/engine/pair.ts';
import { isoClassLimit } from '../../../src/model/iso14644.ts';
import { cumulativeAbove } from '../../../src/model/spectrum.ts';
import {
  clean,
  counterSeries,
  H,
  line,
  location,
  pair,
  product,
  scan,
  step,
  T0,
  tool,
  wafer,
} from '../../helpers/engine-inputs.ts';

const AREA = Math.PI * 0.15 ** 2;
const WAIT_HAND = 100 * 2e-5 * 3 * 3600 * AREA; // 1.52681 particles ≥ 0.1 µm per wafer

function chainPair() {
  const parts = {
    x: [0.01, 0.02, 0.03, -0.01, -0.02, -0.03, 0.05, -0.05],
    y: [0, 0.01, -0.01, 0.02, -0.02, 0.03, 0, 0],
  };
  const d = [45e-9, 50e-9, 60e-9, 70e-9, 80e-9, 100e-9, 120e-9, 150e-9];
  const w = (id: string) =>
    wafer(id, scan(`S-${id}`, T0, parts.x, parts.y, d), [
      // A rinse of flat 70 % efficiency: the logistic's half size far below the grid makes PRE = 0.7 at every size.
      step(0, 'clean', T0 + 0.5 * H, T0 + 0.6 * H, { cleanId: 'RINSE' }),
      step(1, 'wait', T0 + 1 * H, T0 + 4 * H, { locationId: 'ISO2' }),
      step(2, 'bond', T0 + 4.1 * H, T0 + 4.2 * H, { toolId: 'BONDER' }),
    ]);
  const data = line({
    products: { 'HB-1': product({ recleanCleanId: null }) },
    tools: {
      BONDER: tool('BONDER', 1, { adders: { countAbove: 1, atDiameterM: 0.1e-6, slope: 2, fromM: 0.1e-6 } }),
    },
    cleans: { RINSE: clean('RINSE', { maxEfficiency: 0.7, halfSizeM: 1e-10, widthDecades: 0.05 }) },
    locations: { ISO2: location('ISO2', { isoClass: 2 }) },
    counters: {
      ISO2: counterSeries('ISO2', T0, T0 + 6 * H, [0.1e-6], () => [isoClassLimit(2, 0.1e-6)]),
    },
  });
  return { p: pair('P-CHAIN', w('TOP'), w('BOT'), { bondTimeMs: T0 + 4.2 * H, bonderToolId: null }), data };
}

describe('worked chain (hand computation)', () => {
  it('reproduces 1.53 deposited + 2.4 surviving + 1 adder per wafer, ≈ 9.85 per pair', () => {
    const { p, data } = chainPair();
    // No tail below the scan threshold (floor = threshold) and the fixed effective deposition velocity.
    const a = assessPair(p, data, {
      asOfMs: T0 + 5 * H,
      config: { tailFloorM: 45e-9, fixedDepositionVelocityMps: 2e-5 },
    });
    expect(isoClassLimit(2, 0.1e-6)).toBeCloseTo(100, 10); // ISO 14644-1:2015: 10^N at 0.1 µm
    const by = (k: string) => a.contributions.find((c) => c.key === k)!;
    const series = (k: string) =>
      Float64Array.from(a.spectrum!.series.find((s) => s.sourceKey === k)!.counts);
    for (const role of ['top', 'bottom']) {
      // 8 detected particles, each surviving the 70 % rinse with probability 0.3 (hand: 8 × 0.3)
      expect(by(`${role}:detected`).particles).toBeCloseTo(2.4, 10);
      // deposition ≥ 0.1 µm over 3 h (tolerance: the 0.1 µm bin edge is 10 nm·10^(12/12) in floating point)
      expect(cumulativeAbove(series(`${role}:wait:1`), 0.1e-6)).toBeCloseTo(WAIT_HAND, 6);
      // one adder per pass ≥ 0.1 µm; the power law N(≥ d) = (d / 0.1 µm)^−2 ends at the grid's 100 µm top,
      // so the grid holds 1 − 1000^−2 of it (hand computation)
      expect(by(`${role}:tool:2`).particles).toBeCloseTo(1 - 1e-6, 10);
    }
    let atLeast01 = 0;
    for (const s of a.spectrum!.series)
      atLeast01 +=
        s.kind === 'detected'
          ? s.counts.reduce((x, y) => x + y, 0)
          : cumulativeAbove(Float64Array.from(s.counts), 0.1e-6);
    expect(WAIT_HAND).toBeCloseTo(1.5268, 4);
    // ≈ 9.854, "≈ 10" in the worked chain (the 2e-6 is the adders above the grid's 100 µm top)
    expect(atLeast01).toBeCloseTo(2 * (WAIT_HAND + 2.4 + 1 - 1e-6), 6);
  });

  it('wires the void model with W = 2γ and two equal flexible plates (plate mechanics, Tong & Gösele 1999)', () => {
    const { p, data } = chainPair();
    const a = assessPair(p, data, {
      asOfMs: T0 + 5 * H,
      config: { tailFloorM: 45e-9, fixedDepositionVelocityMps: 2e-5 },
    });
    const sp = a.spectrum!;
    const E = 155.4e9;
    const t = 775e-6;
    const W = 2 * 0.85; // per-surface γ = 0.85 J/m² → work of adhesion
    const dEff = (E * t ** 3) / 12 / 2; // two equal plates: D_eff = D/2
    // Hand computation at the bin centres: small-gap branch R = D_eff h²/(W t³) = E'h²/(24 W) below
    // h* = t²(2W/D_eff)^½ = 0.638 µm, thick-plate R = (8 D_eff h²/W)^¼ above it.
    const k01 = sp.centresM.findIndex((c) => c > 0.1e-6);
    const h01 = sp.centresM[k01]!;
    expect(sp.voidRadiusM[k01]!).toBeCloseTo((E * h01 * h01) / (24 * W), 12);
    const k1 = sp.centresM.findIndex((c) => c > 1e-6);
    const h1 = sp.centresM[k1]!;
    expect(sp.voidRadiusM[k1]! / ((8 * dEff * h1 * h1) / W) ** 0.25).toBeCloseTo(1, 12);
    // Fact of the trade (common practice, no source): a ~1 µm particle leaves a void millimetres wide.
    expect(2 * sp.voidRadiusM[k1]!).toBeGreaterThan(2e-3);
    expect(2 * sp.voidRadiusM[k1]!).toBeLessThan(10e-3);
  });
});
