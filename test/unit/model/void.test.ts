import { describe, expect, it } from 'vitest';
import { ModelInputError } from '../../../src/model/errors.ts';
import {
  effectiveRigidity,
  flexuralRigidity,
  INTERFACE_ENERGY_PRESETS,
  particleHeight,
  plateModulus,
  SI100_PLATE_MODULUS_PA,
  type VoidRadiusInput,
  voidRadius,
  workOfAdhesion,
} from '../../../src/model/void.ts';

const um = 1e-6;
const mm = 1e-3;
const plate = (thicknessM: number) => ({ thicknessM });
const textbook = (tM: number, gamma: number, hM: number, extra: Partial<VoidRadiusInput> = {}) =>
  voidRadius({
    heightM: hM,
    workOfAdhesionJm2: workOfAdhesion(gamma, 'per-surface-gamma'),
    model: 'textbook',
    top: plate(tM),
    ...extra,
  });
const twoPlate = (tM: number, W: number, hM: number, extra: Partial<VoidRadiusInput> = {}) =>
  voidRadius({
    heightM: hM,
    workOfAdhesionJm2: W,
    model: 'two-plate',
    top: plate(tM),
    bottom: plate(tM),
    ...extra,
  });

describe('silicon plate modulus', () => {
  // Hall's stiffnesses as tabulated by Hopcroft, Nix & Kenny, JMEMS 19 (2010) 229.
  const C11 = 165.7;
  const C12 = 63.9;
  const C44 = 79.6;
  const det = (C11 - C12) * (C11 + 2 * C12);
  const S11 = (C11 + C12) / det;
  const S12 = -C12 / det;
  const S44 = 1 / C44;
  const S0 = S11 - S12 - S44 / 2;
  /** In-plane direction θ from [100] in the (001) plane: E(θ) and ν(θ) toward the in-plane normal. */
  const inPlane = (th: number) => {
    const l2m2 = (Math.cos(th) * Math.sin(th)) ** 2;
    const s11 = S11 - 2 * S0 * l2m2;
    const s12 = S12 + 2 * S0 * l2m2;
    return { E: 1 / s11, nu: -s12 / s11 };
  };

  it('reproduces E[100] = 130 GPa, ν = 0.28 and E[110] = 169 GPa, ν = 0.06 (Hopcroft et al. 2010) from the stiffnesses', () => {
    // Tolerance: half a unit of the last printed digit (0.5 GPa, 0.005).
    expect(Math.abs(inPlane(0).E - 130)).toBeLessThan(0.5);
    expect(Math.abs(inPlane(0).nu - 0.28)).toBeLessThan(0.005);
    expect(Math.abs(inPlane(Math.PI / 4).E - 169)).toBeLessThan(0.5);
    expect(Math.abs(inPlane(Math.PI / 4).nu - 0.06)).toBeLessThan(0.005);
  });

  it('SI100_PLATE_MODULUS_PA = 155.4 GPa is the rotational average of the (100) plate bending stiffness [D]', () => {
    // Plane-stress reduced stiffnesses of the (001) plate and the bending stiffness along θ:
    // Q̄11(θ) = Q11 cos⁴θ + 2(Q12 + 2Q66) sin²θ cos²θ + Q22 sin⁴θ (laminated-plate theory).
    const Q11 = C11 - (C12 * C12) / C11;
    const Q12 = C12 - (C12 * C12) / C11;
    const Q66 = C44;
    const qbar = (th: number) => {
      const c = Math.cos(th);
      const s = Math.sin(th);
      return Q11 * c ** 4 + 2 * (Q12 + 2 * Q66) * s * s * c * c + Q11 * s ** 4;
    };
    // Along ⟨100⟩ and ⟨110⟩ Q̄11 is exactly E/(1 − ν²) of that direction.
    for (const th of [0, Math.PI / 4]) {
      const { E, nu } = inPlane(th);
      expect(qbar(th)).toBeCloseTo(E / (1 - nu * nu), 9);
    }
    // Rotational average by the midpoint rule over a quarter turn (smooth periodic integrand:
    // 2000 points is exact to 1e-12 here).
    const n = 2000;
    let avg = 0;
    for (let i = 0; i < n; i++) avg += qbar(((i + 0.5) / n) * (Math.PI / 2)) / n;
    expect(avg).toBeCloseTo((3 * Q11 + Q12 + 2 * Q66) / 4, 9);
    // 155.4 is quoted to 4 significant figures: tolerance 0.05 GPa.
    expect(Math.abs(avg - SI100_PLATE_MODULUS_PA / 1e9)).toBeLessThan(0.05);
    // Note: the literal average of E(θ)/(1 − ν(θ)²) is lower (153.8 GPa), because between the
    // principal directions E(θ)/(1 − ν(θ)²) is not the plate's bending stiffness.
    let literal = 0;
    for (let i = 0; i < n; i++) {
      const { E, nu } = inPlane(((i + 0.5) / n) * (Math.PI / 2));
      literal += E / (1 - nu * nu) / n;
    }
    expect(literal).toBeCloseTo(153.8, 1);
  });

  it('plateModulus = E / (1 − ν²)', () => {
    expect(plateModulus(130e9, 0.28)).toBe(130e9 / (1 - 0.28 * 0.28));
    expect(plateModulus(130e9, 0.28) / 1e9).toBeCloseTo(141.059, 4); // [D] 130 / 0.9216
    expect(plateModulus(169e9, 0.06) / 1e9).toBeCloseTo(169.6106, 4); // [D] 169 / 0.9964
    expect(plateModulus(100e9, 0)).toBe(100e9);
  });
});

describe('rigidity', () => {
  it('flexuralRigidity = E′t³/12: 525 µm Si → 1.8739 N·m [D]', () => {
    expect(flexuralRigidity(SI100_PLATE_MODULUS_PA, 525 * um)).toBeCloseTo((155.4e9 * 525e-6 ** 3) / 12, 12);
    expect(flexuralRigidity(SI100_PLATE_MODULUS_PA, 525 * um)).toBeCloseTo(1.8739, 4);
  });

  it('effectiveRigidity: series sum for two plates, the plate itself against a rigid partner', () => {
    expect(effectiveRigidity(2, 2)).toBe(1);
    expect(effectiveRigidity(1, 3)).toBeCloseTo(0.75, 15);
    expect(effectiveRigidity(1.7, 'rigid')).toBe(1.7);
    // Symmetric, and below the softer plate (invariant).
    expect(effectiveRigidity(0.3, 5)).toBe(effectiveRigidity(5, 0.3));
    expect(effectiveRigidity(0.3, 5)).toBeLessThan(0.3);
  });
});

describe('voidRadius: check values (E′ = 155.4 GPa, h = 1 µm) [D from R⁴ = 8 D_eff h² / W]', () => {
  it('textbook preset, t = 525 µm, γ = 0.1 J/m² → R = 3.499 mm (R = [2E′t³/(3γ)]^¼ h^½)', () => {
    const r = textbook(525 * um, 0.1, 1 * um);
    expect(r.radiusM / mm).toBeCloseTo(3.499, 3);
    expect(r.radiusM).toBeCloseTo(((2 * 155.4e9 * 525e-6 ** 3) / (3 * 0.1)) ** 0.25 * Math.sqrt(1e-6), 12);
    expect(r.regime).toBe('thick-plate');
  });

  it('textbook preset, t = 725 µm, γ = 0.1 J/m² → 4.458 mm', () => {
    expect(textbook(725 * um, 0.1, 1 * um).radiusM / mm).toBeCloseTo(4.458, 3);
  });

  it('two flexible 525 µm wafers, W = 0.1 J/m² → 2.942 mm', () => {
    expect(twoPlate(525 * um, 0.1, 1 * um).radiusM / mm).toBeCloseTo(2.942, 3);
  });

  it('50 µm die on a rigid wafer, W = 0.1 J/m² → 0.600 mm', () => {
    const r = voidRadius({
      heightM: 1 * um,
      workOfAdhesionJm2: 0.1,
      model: 'rigid-partner',
      top: plate(50 * um),
    });
    expect(r.radiusM / mm).toBeCloseTo(0.6, 3);
    expect(r.flexibleThicknessM).toBe(50 * um);
  });

  it('crossover of the textbook preset, 525 µm, γ = 0.1: h* = (24γt/E′)^½ = 90 nm, R(h*) = 2t', () => {
    const r = textbook(525 * um, 0.1, 1 * um);
    expect(r.crossoverHeightM).toBeCloseTo(Math.sqrt((24 * 0.1 * 525e-6) / 155.4e9), 18);
    expect(r.crossoverHeightM / 1e-9).toBeCloseTo(90, 0);
    expect(r.crossoverRadiusM).toBeCloseTo(2 * 525 * um, 15);
    expect(textbook(525 * um, 0.1, r.crossoverHeightM).radiusM).toBeCloseTo(2 * 525 * um, 12);
  });

  it('small-gap regime, textbook preset, γ = 0.1, h = 10 nm → R = E′h²/(12γ) = 12.95 µm', () => {
    const r = textbook(525 * um, 0.1, 10e-9);
    expect(r.regime).toBe('small-gap');
    expect(r.radiusM / um).toBeCloseTo(12.95, 2);
    expect(r.radiusM).toBeCloseTo((155.4e9 * 1e-16) / (12 * 0.1), 15);
  });

  it('the textbook preset equals the general form for one plate on a rigid flat with W read as γ', () => {
    for (const [t, g, h] of [
      [525 * um, 0.1, 1 * um],
      [775 * um, 1.2, 0.3 * um],
      [725 * um, 0.02, 20e-9],
    ] as const) {
      const a = textbook(t, g, h).radiusM;
      const b = voidRadius({
        heightM: h,
        workOfAdhesionJm2: g,
        model: 'rigid-partner',
        top: plate(t),
      }).radiusM;
      expect(a).toBeCloseTo(b, 15);
    }
  });

  it('a particle about 1 µm leaves a void millimetres wide for every preset (fact of the trade, common practice, no source)', () => {
    // "Several millimetres" read as a void diameter between 1 and 30 mm, for standard SEMI M1
    // wafer thicknesses (525–775 µm), every preset's representative value and range ends.
    for (const preset of Object.values(INTERFACE_ENERGY_PRESETS)) {
      const gammas = [preset.gammaJm2, ...(preset.gammaRangeJm2 ?? [])];
      for (const g of gammas)
        for (const t of [525 * um, 725 * um, 775 * um]) {
          const W = workOfAdhesion(g, preset.convention);
          for (const r of [twoPlate(t, W, 1 * um), textbook(t, g, 1 * um)]) {
            expect(2 * r.radiusM).toBeGreaterThan(1 * mm);
            expect(2 * r.radiusM).toBeLessThan(30 * mm);
          }
        }
    }
  });
});

describe('voidRadius: invariants', () => {
  const heights = Array.from({ length: 60 }, (_, i) => 1e-9 * 10 ** (i / 15)); // 1 nm … ~8 µm

  it('R rises with h, for every model and small-gap factor', () => {
    for (const f of [0.3, 1, 3]) {
      let prev = 0;
      for (const h of heights) {
        const r = twoPlate(725 * um, 0.4, h, { smallGapFactor: f }).radiusM;
        expect(r).toBeGreaterThan(prev);
        prev = r;
      }
    }
  });

  it('is continuous at the crossover for any small-gap factor (both branches meet at h_c = h*·f^(−2/3), R_c = 2t·f^(−1/3))', () => {
    for (const f of [0.01, 0.3, 1, 3, 100]) {
      const ref = twoPlate(725 * um, 0.4, 1 * um, { smallGapFactor: f });
      const hc = ref.crossoverHeightM;
      const below = twoPlate(725 * um, 0.4, hc * (1 - 1e-9), { smallGapFactor: f });
      const above = twoPlate(725 * um, 0.4, hc * (1 + 1e-9), { smallGapFactor: f });
      expect(below.regime).toBe('small-gap');
      expect(above.regime).toBe('thick-plate');
      expect(Math.abs(above.radiusM / below.radiusM - 1)).toBeLessThan(1e-8);
      expect(above.radiusM / ref.crossoverRadiusM).toBeCloseTo(1, 7);
      expect(ref.crossoverRadiusM).toBeCloseTo(2 * 725 * um * f ** (-1 / 3), 12);
    }
  });

  it('scales as R ∝ h² below the crossover and R ∝ h^½ above it', () => {
    const a = textbook(525 * um, 0.1, 5e-9).radiusM;
    const b = textbook(525 * um, 0.1, 10e-9).radiusM;
    expect(b / a).toBeCloseTo(4, 12);
    const c = textbook(525 * um, 0.1, 1 * um).radiusM;
    const d = textbook(525 * um, 0.1, 4 * um).radiusM;
    expect(d / c).toBeCloseTo(2, 12);
  });

  it('smallGapFactor multiplies the small-gap radius and leaves the thick-plate branch alone', () => {
    const base = textbook(525 * um, 0.1, 10e-9).radiusM;
    expect(textbook(525 * um, 0.1, 10e-9, { smallGapFactor: 3 }).radiusM / base).toBeCloseTo(3, 12);
    expect(textbook(525 * um, 0.1, 1 * um, { smallGapFactor: 3 }).radiusM).toBe(
      textbook(525 * um, 0.1, 1 * um).radiusM,
    );
  });

  it('falls with the work of adhesion as W^(−¼) and two equal plates give 2^(−¼) of one plate', () => {
    expect(twoPlate(725 * um, 1.6, 1 * um).radiusM / twoPlate(725 * um, 0.1, 1 * um).radiusM).toBeCloseTo(
      0.5,
      12,
    );
    const one = voidRadius({
      heightM: 1 * um,
      workOfAdhesionJm2: 0.3,
      model: 'rigid-partner',
      top: plate(725 * um),
    });
    expect(twoPlate(725 * um, 0.3, 1 * um).radiusM / one.radiusM).toBeCloseTo(2 ** -0.25, 12);
  });

  it('uses the thinner plate for t and the softer one dominates D_eff (unequal two-plate stack)', () => {
    const r = voidRadius({
      heightM: 1 * um,
      workOfAdhesionJm2: 0.5,
      model: 'two-plate',
      top: { thicknessM: 100 * um, plateModulusPa: 130e9 },
      bottom: plate(775 * um),
    });
    expect(r.flexibleThicknessM).toBe(100 * um);
    const d1 = flexuralRigidity(130e9, 100 * um);
    const d2 = flexuralRigidity(SI100_PLATE_MODULUS_PA, 775 * um);
    expect(r.effectiveRigidityNm).toBeCloseTo(effectiveRigidity(d1, d2), 15);
  });
});

describe('workOfAdhesion, presets, particleHeight', () => {
  it('W = 2γ for a per-surface γ (razor-blade convention), W = W otherwise', () => {
    expect(workOfAdhesion(0.1, 'per-surface-gamma')).toBe(0.2);
    expect(workOfAdhesion(0.1, 'work-of-adhesion')).toBe(0.1);
  });

  it('every preset states its convention and provenance, and its value lies in its quoted range', () => {
    for (const p of Object.values(INTERFACE_ENERGY_PRESETS)) {
      expect(p.convention).toBe('per-surface-gamma');
      expect(p.provenance).toMatch(/\[M\]/);
      if (p.gammaRangeJm2) {
        expect(p.gammaJm2).toBeGreaterThanOrEqual(p.gammaRangeJm2[0]);
        expect(p.gammaJm2).toBeLessThanOrEqual(p.gammaRangeJm2[1]);
      }
      expect(p.state === 'annealed').toBe(p.annealCondition !== null);
    }
    // Annealing raises the energy for each preparation (the point of the anneal).
    expect(INTERFACE_ENERGY_PRESETS['hydrophilic-anneal-200-400C'].gammaJm2).toBeGreaterThan(
      INTERFACE_ENERGY_PRESETS['hydrophilic-rt'].gammaJm2,
    );
    expect(INTERFACE_ENERGY_PRESETS['hybrid-anneal-250-350C'].gammaJm2).toBeGreaterThan(
      INTERFACE_ENERGY_PRESETS['hybrid-rt'].gammaJm2,
    );
  });

  it('particleHeight = k_h · d', () => {
    expect(particleHeight(1e-6)).toBe(1e-6);
    expect(particleHeight(2e-6, 0.25)).toBe(5e-7);
  });
});

describe('bad input throws ModelInputError naming function, parameter, unit and range', () => {
  it('plateModulus', () => {
    expect(() => plateModulus(-1, 0.2)).toThrow(
      /plateModulus: youngsModulusPa = -1 Pa is out of range; allowed > 0 Pa/,
    );
    expect(() => plateModulus(Number.NaN, 0.2)).toThrow(ModelInputError);
    expect(() => plateModulus(1e11, 0.6)).toThrow(
      /plateModulus: poissonRatio = 0.6 is out of range; allowed > -1 and ≤ 0.5/,
    );
    expect(() => plateModulus(1e11, -1)).toThrow(ModelInputError);
    expect(() => plateModulus(1e11, Number.POSITIVE_INFINITY)).toThrow(ModelInputError);
  });

  it('flexuralRigidity and effectiveRigidity', () => {
    expect(() => flexuralRigidity(0, 1e-3)).toThrow(/flexuralRigidity: plateModulusPa = 0 Pa/);
    expect(() => flexuralRigidity(1e11, -1e-3)).toThrow(
      /flexuralRigidity: thicknessM = -0.001 m is out of range; allowed > 0 m/,
    );
    expect(() => flexuralRigidity(1e11, 0.5)).toThrow(/≤ 0.01 m/);
    expect(() => effectiveRigidity(0, 1)).toThrow(/effectiveRigidity: d1Nm = 0 N·m/);
    expect(() => effectiveRigidity(1, Number.NaN)).toThrow(/effectiveRigidity: d2Nm = NaN N·m/);
    expect(() => effectiveRigidity(1, 'soft' as 'rigid')).toThrow(ModelInputError);
  });

  it('workOfAdhesion and particleHeight', () => {
    expect(() => workOfAdhesion(-0.1, 'work-of-adhesion')).toThrow(/workOfAdhesion: energyJm2 = -0.1 J\/m²/);
    expect(() => workOfAdhesion(0.1, 'gamma' as 'work-of-adhesion')).toThrow(
      /workOfAdhesion: convention = "gamma" is out of range; allowed one of per-surface-gamma, work-of-adhesion/,
    );
    expect(() => particleHeight(0)).toThrow(/particleHeight: diameterM = 0 m/);
    expect(() => particleHeight(Number.NaN)).toThrow(ModelInputError);
    expect(() => particleHeight(1e-6, 1.5)).toThrow(
      /particleHeight: kh = 1.5 is out of range; allowed > 0 and ≤ 1/,
    );
    expect(() => particleHeight(1e-6, 0)).toThrow(ModelInputError);
  });

  it('voidRadius', () => {
    const ok: VoidRadiusInput = {
      heightM: 1e-6,
      workOfAdhesionJm2: 0.2,
      model: 'two-plate',
      top: plate(7e-4),
      bottom: plate(7e-4),
    };
    expect(() => voidRadius(ok)).not.toThrow();
    expect(() => voidRadius({ ...ok, heightM: -1e-6 })).toThrow(
      /voidRadius: heightM = -0.000001 m is out of range; allowed > 0 m/,
    );
    expect(() => voidRadius({ ...ok, heightM: 0 })).toThrow(ModelInputError);
    expect(() => voidRadius({ ...ok, heightM: 1e-3 })).toThrow(
      /voidRadius: heightM = 0.001 m is out of range; allowed > 0 m and ≤ 0.0007 m/,
    );
    expect(() => voidRadius({ ...ok, heightM: Number.NaN })).toThrow(ModelInputError);
    expect(() => voidRadius({ ...ok, workOfAdhesionJm2: 0 })).toThrow(
      /voidRadius: workOfAdhesionJm2 = 0 J\/m²/,
    );
    expect(() => voidRadius({ ...ok, workOfAdhesionJm2: Number.POSITIVE_INFINITY })).toThrow(ModelInputError);
    expect(() => voidRadius({ ...ok, model: 'membrane' as 'two-plate' })).toThrow(
      /voidRadius: model = "membrane"/,
    );
    expect(() => voidRadius({ ...ok, bottom: undefined })).toThrow(/voidRadius: bottom = undefined/);
    expect(() => voidRadius({ ...ok, top: plate(0) })).toThrow(/voidRadius: top.thicknessM = 0 m/);
    expect(() => voidRadius({ ...ok, top: { thicknessM: 7e-4, plateModulusPa: -5 } })).toThrow(
      /voidRadius: top.plateModulusPa = -5 Pa/,
    );
    expect(() => voidRadius({ ...ok, smallGapFactor: 0 })).toThrow(
      /voidRadius: smallGapFactor = 0 is out of range; allowed ≥ 0.01 and ≤ 100/,
    );
    expect(() => voidRadius({ ...ok, smallGapFactor: Number.NaN })).toThrow(ModelInputError);
    expect(() => voidRadius(null as unknown as VoidRadiusInput)).toThrow(/voidRadius: input = null/);
  });

  it('never returns NaN or Infinity over extreme but valid inputs', () => {
    for (const h of [1e-15, 1e-9, 1e-6, 1e-3])
      for (const W of [1e-6, 0.1, 100])
        for (const t of [1e-3, 1e-2]) {
          if (h > t) continue;
          const r = voidRadius({
            heightM: h,
            workOfAdhesionJm2: W,
            model: 'two-plate',
            top: plate(t),
            bottom: plate(t),
            smallGapFactor: 100,
          });
          expect(Number.isFinite(r.radiusM)).toBe(true);
          expect(r.radiusM).toBeGreaterThan(0);
        }
  });
});
