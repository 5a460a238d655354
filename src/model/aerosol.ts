/**
 * Aerosol mechanics of a single particle in air: viscosity, mean free path, slip correction,
 * settling, Brownian diffusion, and the deposition velocity onto a wafer in a laminar downflow.
 *
 * Main source: W. C. Hinds, *Aerosol Technology*, 2nd ed., Wiley 1999 (chapters 2, 3 and 7; the
 * equation numbers quoted below are as recalled [M] — the formulas themselves are standard).
 * Reference air is 20 °C (293.15 K) and 1 atm (101 325 Pa), where Hinds gives
 * µ = 1.81 × 10⁻⁵ Pa·s and λ = 0.066 µm; both are scaled to other conditions with Sutherland's law.
 *
 * All sizes are particle diameters in metres; velocities m/s; diffusivities m²/s.
 */
import { finiteResult, ModelInputError, requireNumber, requireOneOf } from './errors.ts';

/** Boltzmann constant, J/K (exact since the 2019 SI redefinition). */
export const BOLTZMANN_J_PER_K = 1.380649e-23;
/** Molar gas constant, J/(mol·K) (= N_A·k_B, exact since 2019; CODATA 2018). */
export const GAS_CONSTANT_J_PER_MOL_K = 8.314462618;
/** Standard acceleration of gravity, m/s² (3rd CGPM, 1901). */
export const STANDARD_GRAVITY_MPS2 = 9.80665;
/** Molar mass of dry air, kg/mol (ISO 2533:1975 standard atmosphere, 28.96442 kg/kmol). */
export const AIR_MOLAR_MASS_KG_PER_MOL = 0.02896442;
/** Reference temperature of Hinds' air properties: 20 °C. */
export const REFERENCE_TEMPERATURE_K = 293.15;
/** Reference pressure: 1 atm. */
export const REFERENCE_PRESSURE_PA = 101325;
/** Viscosity of air at 20 °C, 1 atm: 1.81 × 10⁻⁵ Pa·s (Hinds 1999, ch. 2). */
export const AIR_VISCOSITY_REF_PA_S = 1.81e-5;
/** Mean free path of air molecules at 20 °C, 1 atm: 0.066 µm (Hinds 1999, ch. 2). */
export const MEAN_FREE_PATH_REF_M = 0.066e-6;
/**
 * Sutherland constant of air, K. 110.4 K is the value of the U.S. Standard Atmosphere 1976
 * (µ = 1.458e-6 T^1.5 / (T + 110.4)); Hinds uses the rounded 110 K. The difference moves µ at
 * 0–40 °C by less than 0.03 %.
 */
export const SUTHERLAND_AIR_K = 110.4;
/** Default particle density: unit density, 1000 kg/m³ — the aerosol-science convention (Hinds 1999, ch. 3). */
export const UNIT_DENSITY_KG_M3 = 1000;

const T_RANGE = { min: 200, max: 500 } as const;
const P_RANGE = { min: 1000, max: 1e6 } as const;
const D_RANGE = { min: 1e-9, max: 1e-4 } as const;

/** Air and particle conditions shared by the single-particle functions. All optional. */
export interface ParticleConditions {
  /** Particle density, kg/m³, 1–25 000; default 1000 (unit density). */
  densityKgM3?: number;
  /** Air temperature, K, 200–500; default 293.15 (20 °C). */
  temperatureK?: number;
  /** Air pressure, Pa, 1 kPa – 1 MPa; default 101 325 (1 atm). */
  pressurePa?: number;
  /** Which slip-correction constants to use; default 'hinds'. */
  slip?: SlipConstants;
}

/** Slip-correction constants: Hinds 1999 eq. 3.20 (Allen & Raabe 1985) or Davies 1945. */
export type SlipConstants = 'hinds' | 'davies';
const SLIP_OPTIONS: readonly SlipConstants[] = ['hinds', 'davies'];

function temperature(fn: string, t: unknown): number {
  return requireNumber(fn, 'temperatureK', t ?? REFERENCE_TEMPERATURE_K, 'K', T_RANGE);
}
function pressure(fn: string, p: unknown): number {
  return requireNumber(fn, 'pressurePa', p ?? REFERENCE_PRESSURE_PA, 'Pa', P_RANGE);
}
function diameter(fn: string, d: unknown): number {
  return requireNumber(fn, 'diameterM', d, 'm', D_RANGE);
}

/**
 * Dynamic viscosity of air (Sutherland's law).
 *
 *   µ(T) = µ_r · (T / T_r)^{3/2} · (T_r + S) / (T + S)
 *
 * µ_r = 1.81 × 10⁻⁵ Pa·s at T_r = 293.15 K (Hinds 1999); S = 110.4 K (U.S. Standard Atmosphere
 * 1976). Independent of pressure in the range allowed (kinetic theory, Hinds 1999 ch. 2).
 *
 * @param temperatureK air temperature, K, 200–500 (Sutherland's law is good to ~1 % there)
 * @returns µ in Pa·s
 * @throws ModelInputError when temperatureK is outside 200–500 K or not finite
 * @example airViscosity(293.15) // 1.81e-5
 */
export function airViscosity(temperatureK: number): number {
  const t = temperature('airViscosity', temperatureK);
  const tr = REFERENCE_TEMPERATURE_K;
  return AIR_VISCOSITY_REF_PA_S * (t / tr) ** 1.5 * ((tr + SUTHERLAND_AIR_K) / (t + SUTHERLAND_AIR_K));
}

/**
 * Density of dry air from the ideal-gas law: ρ = P·M / (R·T).
 *
 * @param temperatureK 200–500 K; @param pressurePa 1 kPa – 1 MPa
 * @returns ρ in kg/m³
 * @throws ModelInputError outside those ranges
 * @example airDensity(293.15, 101325) // 1.2041
 */
export function airDensity(temperatureK: number, pressurePa: number): number {
  const t = temperature('airDensity', temperatureK);
  const p = pressure('airDensity', pressurePa);
  return (p * AIR_MOLAR_MASS_KG_PER_MOL) / (GAS_CONSTANT_J_PER_MOL_K * t);
}

/**
 * Mean free path of air molecules, scaled from Hinds' reference value.
 *
 *   λ = λ_r · (P_r / P) · (T / T_r) · (1 + S/T_r) / (1 + S/T)        (Hinds 1999 eq. 2.26)
 *
 * λ_r = 0.066 µm at T_r = 293.15 K, P_r = 101 325 Pa. This is the kinetic-theory relation
 * µ = 0.499 ρ c̄ λ (c̄ = √(8RT/(πM)) mean molecular speed; Hinds 1999 ch. 2) with Sutherland's µ(T),
 * written as a ratio to the reference state, so λ ∝ T² / ((T + S) · P).
 *
 * @param temperatureK 200–500 K; @param pressurePa 1 kPa – 1 MPa
 * @returns λ in m
 * @throws ModelInputError outside those ranges
 * @example meanFreePath(293.15, 101325) // 6.6e-8
 */
export function meanFreePath(temperatureK: number, pressurePa: number): number {
  const t = temperature('meanFreePath', temperatureK);
  const p = pressure('meanFreePath', pressurePa);
  const tr = REFERENCE_TEMPERATURE_K;
  const s = SUTHERLAND_AIR_K;
  return MEAN_FREE_PATH_REF_M * (REFERENCE_PRESSURE_PA / p) * (t / tr) * ((1 + s / tr) / (1 + s / t));
}

/**
 * Cunningham slip correction factor C_c: how much easier a small particle moves through air
 * than Stokes' law predicts, because the air is not a continuum at the particle's scale.
 *
 *   'hinds':  C_c = 1 + (λ/d) · [2.34 + 1.05 · exp(−0.39 · d/λ)]          (Hinds 1999 eq. 3.20,
 *             constants of Allen & Raabe 1985)
 *   'davies': C_c = 1 + (2λ/d) · [1.257 + 0.400 · exp(−1.10 · d/(2λ))]     (Davies 1945, as used by
 *             Seinfeld & Pandis, *Atmospheric Chemistry and Physics*, 2nd ed. 2006, Table 9.3)
 *
 * Both fits hold for all Knudsen numbers; at the same λ they differ by at most 2.3 % (near 15 nm). Pair each set
 * with the λ its source used (Hinds 0.066 µm at 20 °C; Seinfeld & Pandis 0.0651 µm at 25 °C).
 *
 * @param diameterM particle diameter, 1 nm – 100 µm
 * @param meanFreePathM λ in m, 1 nm – 100 µm
 * @param constants 'hinds' (default) or 'davies'
 * @returns C_c (dimensionless, ≥ 1)
 * @throws ModelInputError for a diameter or λ out of range or an unknown constant set
 * @example cunninghamSlip(1e-7, 6.6e-8, 'hinds') // 2.928
 */
export function cunninghamSlip(
  diameterM: number,
  meanFreePathM: number,
  constants: SlipConstants = 'hinds',
): number {
  const fn = 'cunninghamSlip';
  const d = diameter(fn, diameterM);
  const l = requireNumber(fn, 'meanFreePathM', meanFreePathM, 'm', D_RANGE);
  const which = requireOneOf(fn, 'constants', constants, SLIP_OPTIONS);
  if (which === 'hinds') return 1 + (l / d) * (2.34 + 1.05 * Math.exp((-0.39 * d) / l));
  const kn = (2 * l) / d;
  return 1 + kn * (1.257 + 0.4 * Math.exp(-1.1 / kn));
}

interface Air {
  t: number;
  p: number;
  mu: number;
  cc: number;
}

function airFor(fn: string, d: number, c: ParticleConditions): Air {
  const t = temperature(fn, c.temperatureK);
  const p = pressure(fn, c.pressurePa);
  const slip = requireOneOf(fn, 'slip', c.slip ?? 'hinds', SLIP_OPTIONS);
  return { t, p, mu: airViscosity(t), cc: cunninghamSlip(d, meanFreePath(t, p), slip) };
}

function requireObject(fn: string, param: string, v: unknown): void {
  if (v === null || typeof v !== 'object') throw new ModelInputError(fn, param, '', 'an options object', v);
}

function density(fn: string, rho: unknown): number {
  return requireNumber(fn, 'densityKgM3', rho ?? UNIT_DENSITY_KG_M3, 'kg/m³', { min: 1, max: 25000 });
}

/**
 * Terminal settling velocity in still air (Stokes' law with slip correction).
 *
 *   v_s = ρ_p · d² · g · C_c / (18 µ)                                     (Hinds 1999 eq. 3.21)
 *
 * ρ_p particle density (kg/m³), d diameter (m), g = 9.80665 m/s², C_c Cunningham factor, µ air
 * viscosity (Pa·s). Buoyancy of the air (ρ_air/ρ_p ≈ 0.1 % for unit density) is neglected.
 * Valid for particle Reynolds number Re = ρ_air v_s d / µ < 1 (Hinds 1999 ch. 3): about d ≤ 60 µm
 * at unit density; above that Stokes' law overestimates v_s (≈ 10 % at Re = 1 [M]).
 *
 * @param diameterM particle diameter, 1 nm – 100 µm
 * @param conditions density (default 1000 kg/m³), temperature (293.15 K), pressure (101 325 Pa), slip constants
 * @returns v_s in m/s
 * @throws ModelInputError for any argument out of range
 * @example settlingVelocity(1e-6) // 3.48e-5 m/s
 */
export function settlingVelocity(diameterM: number, conditions: ParticleConditions = {}): number {
  return settlingFor('settlingVelocity', diameterM, conditions);
}

// The internal forms take the public function's name so that an error names the function the
// caller called (depositionVelocity, not a helper it uses).
function settlingFor(fn: string, diameterM: unknown, conditions: ParticleConditions): number {
  const d = diameter(fn, diameterM);
  requireObject(fn, 'conditions', conditions);
  const rho = density(fn, conditions.densityKgM3);
  const a = airFor(fn, d, conditions);
  return finiteResult(fn, (rho * d * d * STANDARD_GRAVITY_MPS2 * a.cc) / (18 * a.mu));
}

/**
 * Brownian diffusion coefficient of a particle (Stokes–Einstein with slip correction).
 *
 *   D_B = k_B · T · C_c / (3 π µ d)                                       (Hinds 1999 eq. 7.7)
 *
 * Independent of particle density.
 *
 * @param diameterM particle diameter, 1 nm – 100 µm
 * @param conditions temperature (default 293.15 K), pressure (101 325 Pa), slip constants; density is ignored
 * @returns D_B in m²/s
 * @throws ModelInputError for any argument out of range
 * @example brownianDiffusivity(1e-7) // 6.95e-10 m²/s
 */
export function brownianDiffusivity(diameterM: number, conditions: ParticleConditions = {}): number {
  return diffusivityFor('brownianDiffusivity', diameterM, conditions);
}

function diffusivityFor(fn: string, diameterM: unknown, conditions: ParticleConditions): number {
  const d = diameter(fn, diameterM);
  requireObject(fn, 'conditions', conditions);
  const a = airFor(fn, d, conditions);
  return finiteResult(fn, (BOLTZMANN_J_PER_K * a.t * a.cc) / (3 * Math.PI * a.mu * d));
}

/** Conditions of laminar downflow onto a wafer. */
export interface DownflowConditions {
  /** Downflow air speed far above the wafer, m/s, > 0 and ≤ 10 (cleanroom practice 0.2–0.5). */
  downflowMps: number;
  /** Wafer diameter, m, 0.01–1 (300 mm wafer: 0.3). */
  waferDiameterM: number;
  temperatureK?: number;
  pressurePa?: number;
  slip?: SlipConstants;
}

/**
 * Brownian deposition velocity onto a horizontal wafer facing a laminar downflow: mass transfer
 * through the thin concentration layer of an axisymmetric stagnation flow at high Schmidt number.
 *
 *   v_diff = 0.850 · (a ν)^{1/2} · Sc^{−2/3},   a ≈ 4U / (π D_w),   Sc = ν / D_B
 *
 * a strain rate of the stagnation flow (1/s): potential flow onto a disc of diameter D_w in a
 * stream U has radial velocity u_r = (4U / (π D_w)) r near its centre (Lamb, *Hydrodynamics*, 6th
 * ed. 1932, flow past a disc [M]); ν = µ/ρ_air kinematic viscosity (m²/s); D_B Brownian diffusivity.
 * The constant 0.850 = f''(0)^{1/3} / (3^{1/3} Γ(4/3)) with f''(0) = 1.3119 of Homann's (1936)
 * axisymmetric stagnation flow, from the Lévêque solution of the concentration layer [D].
 * Valid for Sc ≫ 1 (true above ~5 nm in air: Sc ≈ 14 at 5 nm, 2 × 10⁵ at 0.5 µm) and a concentration
 * layer thin against the wafer (a·D_w²/ν ≫ 1). Uses the centre-point strain rate over the whole wafer.
 *
 * @param diameterM particle diameter, 1 nm – 100 µm
 * @param flow downflow speed, wafer diameter, air temperature and pressure
 * @returns v_diff in m/s
 * @throws ModelInputError for any argument out of range
 * @example stagnationDiffusionVelocity(2e-7, { downflowMps: 0.3, waferDiameterM: 0.3 }) // ≈ 2.25e-6 m/s
 */
export function stagnationDiffusionVelocity(diameterM: number, flow: DownflowConditions): number {
  return diffusionVelocityFor('stagnationDiffusionVelocity', diameterM, flow);
}

function diffusionVelocityFor(fn: string, diameterM: unknown, flow: DownflowConditions): number {
  const d = diameter(fn, diameterM);
  requireObject(fn, 'flow', flow);
  const u = requireNumber(fn, 'downflowMps', flow.downflowMps, 'm/s', {
    min: 0,
    minExclusive: true,
    max: 10,
  });
  const dw = requireNumber(fn, 'waferDiameterM', flow.waferDiameterM, 'm', { min: 0.01, max: 1 });
  const t = temperature(fn, flow.temperatureK);
  const p = pressure(fn, flow.pressurePa);
  const nu = airViscosity(t) / airDensity(t, p);
  const db = diffusivityFor(fn, d, { temperatureK: t, pressurePa: p, slip: flow.slip ?? 'hinds' });
  const a = (4 * u) / (Math.PI * dw);
  return finiteResult(fn, 0.85 * Math.sqrt(a * nu) * (nu / db) ** (-2 / 3));
}

/** Which way the wafer's exposed surface faces. */
export type Orientation = 'faceUp' | 'faceDown' | 'vertical';
const ORIENTATIONS: readonly Orientation[] = ['faceUp', 'faceDown', 'vertical'];

/** Inputs of depositionVelocity. */
export interface DepositionConditions extends DownflowConditions {
  orientation: Orientation;
  densityKgM3?: number;
  /**
   * Explicit multiplier on the diffusive (Brownian boundary-layer) velocity v_diff only, before
   * it is combined with settling; default 1 (no electrostatic enhancement). Charged wafers can raise
   * sub-micron deposition by about an order of magnitude [M]. Range > 0 and ≤ 100.
   */
  electrostaticFactor?: number;
}

/**
 * Deposition velocity of particles onto a wafer surface in laminar downflow: Brownian diffusion
 * through the stagnation-flow concentration layer combined with gravitational settling.
 *
 *   v_diff' = f_e · v_diff                           (f_e = electrostaticFactor, default 1)
 *   face up:    v_d = v_s / (1 − exp(−v_s / v_diff'))
 *   face down:  v_d = v_s / (exp(v_s / v_diff') − 1)
 *   vertical:   v_d = v_diff'                        (settling is parallel to the surface)
 *
 * The face-up and face-down forms are the exact solution of one-dimensional diffusion with a
 * constant drift v_s towards (or away from) the surface through a layer of transfer velocity v_diff;
 * the same forms are used for upward- and downward-facing surfaces by Lai & Nazaroff, J. Aerosol
 * Sci. 31 (2000) 463 [M: citation details as recalled].
 * Limits: v_s ≪ v_diff' → v_d → v_diff' (all three); v_s ≫ v_diff' → face up v_d → v_s, face down → 0.
 * So face up ≥ vertical ≥ face down for every size.
 *
 * Simplifications (voidcast's choice): the same v_diff (centre-point stagnation flow) is used for
 * all three orientations; no inertial impaction (negligible at 0.2–0.5 m/s for d < ~10 µm [M]);
 * no thermophoresis. The electrostatic factor multiplies v_diff' only, so it changes sub-micron
 * deposition and leaves settling-dominated sizes (≳ 0.5 µm face up) nearly unchanged.
 *
 * @param diameterM particle diameter, 1 nm – 100 µm
 * @param c orientation, downflow speed (m/s), wafer diameter (m), optional density (kg/m³,
 *   default 1000), temperature (K), pressure (Pa), slip constants, electrostatic factor
 * @returns v_d in m/s (≥ 0, finite)
 * @throws ModelInputError for any argument out of range or an unknown orientation
 * @example depositionVelocity(2e-7, { orientation: 'faceUp', downflowMps: 0.3, waferDiameterM: 0.3 }) // ≈ 3.56e-6
 */
export function depositionVelocity(diameterM: number, c: DepositionConditions): number {
  const fn = 'depositionVelocity';
  const d = diameter(fn, diameterM);
  requireObject(fn, 'conditions', c);
  const orientation = requireOneOf(fn, 'orientation', c.orientation, ORIENTATIONS);
  const fe = requireNumber(fn, 'electrostaticFactor', c.electrostaticFactor ?? 1, '', {
    min: 0,
    minExclusive: true,
    max: 100,
  });
  const vDiff = fe * diffusionVelocityFor(fn, d, c);
  const vs = settlingFor(fn, d, {
    densityKgM3: c.densityKgM3,
    temperatureK: c.temperatureK,
    pressurePa: c.pressurePa,
    slip: c.slip ?? 'hinds',
  });
  if (orientation === 'vertical') return vDiff;
  const x = vs / vDiff;
  // expm1 keeps full precision when v_s ≪ v_diff (x → 0, where 1 − e^{−x} cancels);
  // for x beyond ~709 expm1(x) is Infinity and the face-down velocity is exactly 0.
  const v = orientation === 'faceUp' ? vs / -Math.expm1(-x) : vs / Math.expm1(x);
  return finiteResult(fn, v);
}
