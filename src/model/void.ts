/**
 * Void radius around a particle trapped between two bonded plates (plate mechanics).
 *
 * A particle of height h held between two bonded wafers (or a die and a wafer) keeps an unbonded
 * ring of radius R around it. The energy balance of a clamped circular plate with central
 * deflection h against the work of adhesion W gives, for R ≳ 2t and h ≪ t,
 *
 *   R⁴ = 8 D_eff h² / W,   D = E' t³ / 12,   E' = E / (1 − ν²),
 *
 * consistent with Q.-Y. Tong & U. Gösele, *Semiconductor Wafer Bonding: Science and Technology*,
 * Wiley 1999; R. Stengl et al., J. Appl. Phys. (1989); and G. G. Adams, J. Appl. Mech. 80 (2013)
 * 051016. The razor-blade convention for γ is that of W. P. Maszara et al., J. Appl. Phys. 64
 * (1988) 4943 [M]. Two flexible plates bend in series:
 * D_eff = D₁D₂/(D₁ + D₂); against a rigid partner D_eff is the flexible plate's D.
 *
 * Below the crossover (R < 2t) the void no longer depends on thickness and R ∝ h². voidcast's
 * small-gap branch is its own modelling choice, documented in docs/models.md and at
 * `voidRadius`.
 */
import { finiteResult, ModelInputError, requireNumber, requireOneOf, requirePositive } from './errors.ts';

/**
 * Plate modulus E' of a (100) silicon wafer, Pa: 155.4 GPa.
 *
 * The in-plane rotational average of the plate's reduced bending stiffness Q̄₁₁(θ) (which equals
 * E/(1 − ν²) along ⟨100⟩ and ⟨110⟩) from Hall's stiffnesses C₁₁ = 165.7, C₁₂ = 63.9, C₄₄ = 79.6 GPa
 * as tabulated by M. A. Hopcroft, W. D. Nix & T. W. Kenny, J. Microelectromech. Syst. 19 (2010)
 * 229: ⟨Q̄₁₁⟩ = (3Q₁₁ + Q₁₂ + 2Q₆₆)/4 with Q₁₁ = C₁₁ − C₁₂²/C₁₁, Q₁₂ = C₁₂ − C₁₂²/C₁₁, Q₆₆ = C₄₄
 * (recomputed in test/unit/model/void.test.ts). Not the biaxial modulus (180 GPa), which is for
 * biaxial stress, not bending.
 */
export const SI100_PLATE_MODULUS_PA = 155.4e9;

/**
 * Plate (plane-strain bending) modulus E' = E / (1 − ν²).
 *
 * @param youngsModulusPa E, Pa, 0 < E ≤ 10¹³
 * @param poissonRatio ν, dimensionless, −1 < ν ≤ 0.5
 * @returns E' in Pa
 * @throws ModelInputError for non-finite or out-of-range input
 * @example plateModulus(130e9, 0.28) // 1.4106e11 Pa (Si along [100], Hopcroft et al. 2010)
 */
export function plateModulus(youngsModulusPa: number, poissonRatio: number): number {
  const E = requireNumber('plateModulus', 'youngsModulusPa', youngsModulusPa, 'Pa', {
    min: 0,
    minExclusive: true,
    max: 1e13,
  });
  const nu = requireNumber('plateModulus', 'poissonRatio', poissonRatio, '', {
    min: -1,
    minExclusive: true,
    max: 0.5,
  });
  return E / (1 - nu * nu);
}

/**
 * Flexural rigidity of a plate, D = E' t³ / 12 (S. Timoshenko & S. Woinowsky-Krieger, *Theory
 * of Plates and Shells*, 2nd ed., McGraw-Hill 1959, ch. 1).
 *
 * @param plateModulusPa E', Pa, 0 < E' ≤ 10¹³
 * @param thicknessM t, m, 0 < t ≤ 0.01
 * @returns D in N·m (J)
 * @throws ModelInputError for non-finite or out-of-range input
 * @example flexuralRigidity(155.4e9, 525e-6) // 1.8740 N·m
 */
export function flexuralRigidity(plateModulusPa: number, thicknessM: number): number {
  const E = requireNumber('flexuralRigidity', 'plateModulusPa', plateModulusPa, 'Pa', {
    min: 0,
    minExclusive: true,
    max: 1e13,
  });
  const t = requireNumber('flexuralRigidity', 'thicknessM', thicknessM, 'm', {
    min: 0,
    minExclusive: true,
    max: 0.01,
  });
  return (E * t * t * t) / 12;
}

/**
 * Effective rigidity of two plates bending together around a trapped particle: the two
 * deflections add (springs in series), D_eff = D₁D₂ / (D₁ + D₂); with a rigid partner D_eff = D₁.
 *
 * @param d1Nm D₁ of the (first) flexible plate, N·m, > 0
 * @param d2Nm D₂ of the partner, N·m, > 0, or 'rigid'
 * @returns D_eff in N·m
 * @throws ModelInputError for non-finite or non-positive rigidities
 * @example effectiveRigidity(1.874, 1.874) // 0.937 N·m (two equal wafers: half of one)
 */
export function effectiveRigidity(d1Nm: number, d2Nm: number | 'rigid'): number {
  const d1 = requirePositive('effectiveRigidity', 'd1Nm', d1Nm, 'N·m');
  if (d2Nm === 'rigid') return d1;
  const d2 = requirePositive('effectiveRigidity', 'd2Nm', d2Nm, 'N·m');
  // The product overflows for rigidities near the largest double: refused, never Infinity out.
  return finiteResult('effectiveRigidity', (d1 * d2) / (d1 + d2));
}

/**
 * Which convention an interface energy is stated in.
 * - 'per-surface-gamma': γ, the per-surface energy of the razor-blade (Maszara) test; W = 2γ.
 * - 'work-of-adhesion': W itself, the energy to separate unit area of the bonded interface.
 */
export type InterfaceEnergyConvention = 'per-surface-gamma' | 'work-of-adhesion';

/**
 * Work of adhesion W (J/m²) from an interface energy stated in either convention:
 * W = 2γ for a per-surface γ (razor-blade / Maszara convention), W = W otherwise.
 *
 * @param energyJm2 the stated energy, J/m², 0 < value ≤ 100
 * @param convention 'per-surface-gamma' or 'work-of-adhesion'
 * @returns W in J/m²
 * @throws ModelInputError for a bad value or an unknown convention
 * @example workOfAdhesion(0.1, 'per-surface-gamma') // 0.2 J/m²
 */
export function workOfAdhesion(energyJm2: number, convention: InterfaceEnergyConvention): number {
  const v = requireNumber('workOfAdhesion', 'energyJm2', energyJm2, 'J/m²', {
    min: 0,
    minExclusive: true,
    max: 100,
  });
  const c = requireOneOf('workOfAdhesion', 'convention', convention, [
    'per-surface-gamma',
    'work-of-adhesion',
  ] as const);
  return c === 'per-surface-gamma' ? 2 * v : v;
}

export type SurfacePreparation =
  | 'hydrophilic'
  | 'hydrophobic-hf-last'
  | 'plasma-activated-oxide'
  | 'hybrid-dielectric';

export interface InterfaceEnergyPreset {
  preparation: SurfacePreparation;
  state: 'room-temperature' | 'annealed';
  /** Anneal condition as usually quoted, e.g. '200–400 °C'; null at room temperature. */
  annealCondition: string | null;
  /** Representative per-surface γ, J/m² (midpoint of the quoted range where a range is quoted). */
  gammaJm2: number;
  /** Quoted range of γ, J/m², or null where one approximate value is quoted. */
  gammaRangeJm2: readonly [number, number] | null;
  /** Always 'per-surface-gamma': feed gammaJm2 through workOfAdhesion(γ, 'per-surface-gamma'). */
  convention: 'per-surface-gamma';
  /** Where the number comes from. */
  provenance: string;
}

const MEMORY =
  '[M] from memory of the bonding literature (consistent with Tong & Gösele 1999 and later reviews); not re-verified — a changeable default';

/**
 * Interface-energy presets per surface preparation, as per-surface γ (razor-blade convention).
 * Values are from memory of the literature [M]: defaults the user should replace with their own
 * razor-blade measurements.
 */
export const INTERFACE_ENERGY_PRESETS = {
  'hydrophilic-rt': p('hydrophilic', 'room-temperature', null, 0.1, null),
  'hydrophilic-anneal-200-400C': p('hydrophilic', 'annealed', '200–400 °C', 0.85, [0.5, 1.2]),
  'hydrophilic-anneal-1000C': p('hydrophilic', 'annealed', '≥ 1000 °C', 2.25, [2, 2.5]),
  'hydrophobic-rt': p('hydrophobic-hf-last', 'room-temperature', null, 0.02, [0.01, 0.03]),
  'hydrophobic-anneal-700C': p('hydrophobic-hf-last', 'annealed', '≥ 700 °C', 2, null),
  'plasma-rt': p('plasma-activated-oxide', 'room-temperature', null, 1, [0.5, 1.5]),
  'plasma-anneal-200-300C': p('plasma-activated-oxide', 'annealed', '200–300 °C', 2, [1.5, 2.5]),
  'hybrid-rt': p('hybrid-dielectric', 'room-temperature', null, 0.85, [0.5, 1.2]),
  'hybrid-anneal-250-350C': p('hybrid-dielectric', 'annealed', '250–350 °C', 2.25, [1.5, 3]),
} as const satisfies Record<string, InterfaceEnergyPreset>;

export type InterfaceEnergyPresetId = keyof typeof INTERFACE_ENERGY_PRESETS;

function p(
  preparation: SurfacePreparation,
  state: InterfaceEnergyPreset['state'],
  annealCondition: string | null,
  gammaJm2: number,
  gammaRangeJm2: readonly [number, number] | null,
): InterfaceEnergyPreset {
  return {
    preparation,
    state,
    annealCondition,
    gammaJm2,
    gammaRangeJm2,
    convention: 'per-surface-gamma',
    provenance: MEMORY,
  };
}

/**
 * Particle height from its diameter, h = k_h · d: k_h = 1 for compact particles (the default),
 * below 1 for flakes lying flat.
 *
 * @param diameterM d, m, 0 < d ≤ 0.01 (the scanner's LSE diameter in practice)
 * @param kh k_h, dimensionless, 0 < k_h ≤ 1
 * @returns h in m
 * @throws ModelInputError for non-finite or out-of-range input
 * @example particleHeight(1e-6) // 1e-6 m
 */
export function particleHeight(diameterM: number, kh = 1): number {
  const d = requireNumber('particleHeight', 'diameterM', diameterM, 'm', {
    min: 0,
    minExclusive: true,
    max: 0.01,
  });
  const k = requireNumber('particleHeight', 'kh', kh, '', { min: 0, minExclusive: true, max: 1 });
  return k * d;
}

/**
 * - 'two-plate': two flexible plates, D_eff = D₁D₂/(D₁ + D₂) (the default for wafer-to-wafer).
 * - 'textbook': Tong & Gösele's form R = [2E't³/(3γ)]^¼ h^½, one flexible wafer on a rigid flat
 *   with the per-surface γ = W/2 standing where the energy balance has W.
 * - 'rigid-partner': one flexible plate (a thin die) on an effectively rigid partner (the wafer).
 */
export type VoidModel = 'two-plate' | 'textbook' | 'rigid-partner';

export interface PlateSpec {
  /** Plate thickness t, m. */
  thicknessM: number;
  /** Plate modulus E', Pa (default SI100_PLATE_MODULUS_PA). */
  plateModulusPa?: number;
}

export interface VoidRadiusInput {
  /** Particle height h, m (see particleHeight). */
  heightM: number;
  /**
   * Work of adhesion W, J/m², in the work-of-adhesion convention (W = 2γ for a razor-blade γ;
   * convert with workOfAdhesion). The 'textbook' model uses γ = W/2 as its published form does.
   */
  workOfAdhesionJm2: number;
  model: VoidModel;
  /** The flexible plate: the top wafer, or the die for 'rigid-partner', or the wafer for 'textbook'. */
  top: PlateSpec;
  /** The second flexible plate; required for 'two-plate', ignored (rigid) otherwise. */
  bottom?: PlateSpec;
  /** Calibration factor on the small-gap branch (default 1: continuous at R = 2t). 0.01 – 100. */
  smallGapFactor?: number;
}

export interface VoidRadiusResult {
  /** Void radius R, m. */
  radiusM: number;
  regime: 'thick-plate' | 'small-gap';
  model: VoidModel;
  /** Height at which the two branches meet, h_c = h*·f^(−2/3), m. */
  crossoverHeightM: number;
  /** Radius at the crossover, R_c = 2t·f^(−1/3), m. */
  crossoverRadiusM: number;
  /** D_eff used, N·m. */
  effectiveRigidityNm: number;
  /** The energy in the balance, J/m²: W, or γ = W/2 for 'textbook'. */
  balanceEnergyJm2: number;
  /** t, the thinner flexible plate's thickness, m. */
  flexibleThicknessM: number;
  /** h / t; the plate model assumes h ≪ t and loses accuracy as this approaches 1. */
  heightToThickness: number;
}

function plateRigidity(fn: string, name: string, plate: PlateSpec | undefined): { d: number; t: number } {
  if (typeof plate !== 'object' || plate === null)
    throw new ModelInputError(fn, name, '', 'an object { thicknessM, plateModulusPa? }', plate);
  const t = requireNumber(fn, `${name}.thicknessM`, plate.thicknessM, 'm', {
    min: 0,
    minExclusive: true,
    max: 0.01,
  });
  const e = requireNumber(
    fn,
    `${name}.plateModulusPa`,
    plate.plateModulusPa ?? SI100_PLATE_MODULUS_PA,
    'Pa',
    {
      min: 0,
      minExclusive: true,
      max: 1e13,
    },
  );
  return { d: (e * t * t * t) / 12, t };
}

/**
 * Void radius around a trapped particle, with the thick-plate and small-gap regimes.
 *
 * Thick-plate branch (valid for R ≳ 2t and h ≪ t; Tong & Gösele 1999, Adams 2013):
 *   R_thick = (8 D_eff h² / W_b)^¼
 * Small-gap branch (R < 2t: thickness no longer matters, R ∝ h²). Matching the thick-plate form
 * at R = 2t gives the crossover height h* = t²·(2W_b/D_eff)^½ and, with the calibration factor f,
 *   R_small = f · 2t · (h/h*)² = f · D_eff h² / (W_b t³)
 * The published constant of this branch could not be verified (uncertain within a factor of about
 * 3), hence f. voidcast takes R = min(R_thick, R_small): because R_small ∝ h² and R_thick ∝ h^½,
 * the two cross exactly once, so R is continuous for every f; the crossover moves to
 * h_c = h*·f^(−2/3) with R_c = 2t·f^(−1/3) (f = 1: exactly R = 2t). Regime 'small-gap' when
 * h < h_c, 'thick-plate' from h_c up.
 *
 * Symbols: h particle height (m); W_b the energy in the balance (J/m²): W for 'two-plate' and
 * 'rigid-partner', γ = W/2 for 'textbook'; D_eff (N·m): D₁D₂/(D₁ + D₂) for 'two-plate', D of
 * `top` otherwise; t (m): the thinner flexible plate ('two-plate') or `top`.
 * For one flexible plate on a rigid flat the forms reduce to R = [2E't³/(3γ)]^¼ h^½ (textbook,
 * with γ for W), h* = (24γt/E')^½ and R_small = E'h²/(12γ).
 *
 * No hard cut-off: R → 0 continuously as h → 0 (whether a void is *seen* or *kills* is decided
 * downstream against inspection resolution and die geometry).
 *
 * @param input.heightM h, m, 0 < h ≤ t (the plate model needs h ≪ t; h > t is refused)
 * @param input.workOfAdhesionJm2 W, J/m², 0 < W ≤ 100 (work-of-adhesion convention)
 * @param input.model 'two-plate' | 'textbook' | 'rigid-partner'
 * @param input.top flexible plate { thicknessM (0, 0.01] m, plateModulusPa (0, 10¹³] Pa, default 155.4 GPa }
 * @param input.bottom second flexible plate, required for 'two-plate'
 * @param input.smallGapFactor f, 0.01 ≤ f ≤ 100, default 1
 * @throws ModelInputError for any non-finite or out-of-range field, unknown model, or missing bottom
 * @example voidRadius({ heightM: 1e-6, workOfAdhesionJm2: 0.2, model: 'textbook', top: { thicknessM: 525e-6 } })
 *   // radiusM ≈ 3.499e-3 (γ = 0.1 J/m²), regime 'thick-plate'
 */
export function voidRadius(input: VoidRadiusInput): VoidRadiusResult {
  const fn = 'voidRadius';
  if (typeof input !== 'object' || input === null)
    throw new ModelInputError(fn, 'input', '', 'an object', input);
  const model = requireOneOf(fn, 'model', input.model, ['two-plate', 'textbook', 'rigid-partner'] as const);
  const W = requireNumber(fn, 'workOfAdhesionJm2', input.workOfAdhesionJm2, 'J/m²', {
    min: 0,
    minExclusive: true,
    max: 100,
  });
  const f = requireNumber(fn, 'smallGapFactor', input.smallGapFactor ?? 1, '', { min: 0.01, max: 100 });
  const top = plateRigidity(fn, 'top', input.top);
  let dEff: number;
  let t: number;
  if (model === 'two-plate') {
    const bottom = plateRigidity(fn, 'bottom', input.bottom);
    dEff = (top.d * bottom.d) / (top.d + bottom.d);
    t = Math.min(top.t, bottom.t);
  } else {
    dEff = top.d;
    t = top.t;
  }
  const h = requireNumber(fn, 'heightM', input.heightM, 'm', { min: 0, minExclusive: true, max: t });
  const wb = model === 'textbook' ? W / 2 : W;

  const rThick = Math.sqrt(h) * ((8 * dEff) / wb) ** 0.25;
  const rSmall = (f * dEff * h * h) / (wb * t * t * t);
  const hStar = t * t * Math.sqrt((2 * wb) / dEff);
  const small = rSmall < rThick; // ⇔ h < h_c (the branches cross once)
  return {
    radiusM: small ? rSmall : rThick,
    regime: small ? 'small-gap' : 'thick-plate',
    model,
    crossoverHeightM: hStar * f ** (-2 / 3),
    crossoverRadiusM: 2 * t * f ** (-1 / 3),
    effectiveRigidityNm: dEff,
    balanceEnergyJm2: wb,
    flexibleThicknessM: t,
    heightToThickness: h / t,
  };
}
