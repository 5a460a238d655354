/**
 * Particles deposited on a wafer from the air it is exposed to.
 *
 * Deposition is linear in the airborne concentration (deposition flux J = v_d · C, Hinds 1999
 * ch. 7): the particles of size d that land on area A during an exposure are
 *
 *   n(d) = A · v_d(d) · ∫ C(d, t) dt / I
 *
 * with v_d the deposition velocity (m/s, aerosol.ts), C the airborne concentration (particles per
 * m³), I ≥ 1 an isolation factor for a closed carrier or mini-environment (the ratio of room
 * concentration to the concentration the wafer actually sees). The time integral — the "dose",
 * particles·s/m³ — is formed first (exposureDose), so sources, exposures and samples add:
 * doubling the dose doubles the deposit, the deposit of two doses is the sum of their deposits.
 * Bin by bin, with v_d evaluated at each bin's geometric centre (the grid's convention).
 */
import { ModelInputError, requireNumber } from './errors.ts';
import {
  requireSpectrum,
  SPECTRUM_BIN_COUNT,
  SPECTRUM_CENTRES_M,
  type Spectrum,
  zeroSpectrum,
} from './spectrum.ts';

/** One airborne sample: a concentration spectrum held for a duration. */
export interface ExposureSample {
  /** Airborne particles per m³ in each bin. */
  perM3: Spectrum;
  /** How long the wafer saw this concentration, s, ≥ 0. */
  durationS: number;
}

/**
 * Airborne exposure dose: the time integral of the concentration, per bin.
 *
 *   Dose_k = Σ_j C_{j,k} · Δt_j           (particles·s/m³ in bin k)
 *
 * A piecewise-constant concentration (each counter sample holds for its duration) integrated
 * exactly. Linear: the dose of a concatenated list is the sum of the doses.
 *
 * @param samples any number of {perM3 spectrum (≥ 0 per bin), durationS ≥ 0}; an empty list is a zero dose
 * @returns the dose spectrum, particles·s/m³ per bin
 * @throws ModelInputError for a non-array, a bad spectrum, or a negative / non-finite duration
 * @example exposureDose([{ perM3: s100, durationS: 10800 }]) // s100 × 10 800 (3 h)
 */
export function exposureDose(samples: readonly ExposureSample[]): Spectrum {
  const fn = 'exposureDose';
  if (!Array.isArray(samples))
    throw new ModelInputError(fn, 'samples', '', 'an array of {perM3, durationS}', samples);
  const out = zeroSpectrum();
  samples.forEach((s, j) => {
    if (s === null || typeof s !== 'object')
      throw new ModelInputError(fn, `samples[${j}]`, '', 'an object {perM3, durationS}', s);
    const c = requireSpectrum(fn, `samples[${j}].perM3`, s.perM3);
    const dt = requireNumber(fn, `samples[${j}].durationS`, s.durationS, 's', { min: 0 });
    for (let k = 0; k < SPECTRUM_BIN_COUNT; k++) out[k]! += c[k]! * dt;
  });
  for (let k = 0; k < SPECTRUM_BIN_COUNT; k++)
    if (!Number.isFinite(out[k]!))
      throw new ModelInputError(fn, 'samples', '', 'a dose that stays finite', out[k]);
  return out;
}

/** Input of depositDuringExposure. */
export interface DepositionInput {
  /** ∫ C dt per bin, particles·s/m³ (exposureDose). */
  airborneDoseM3s: Spectrum;
  /** Exposed area, m², > 0 and ≤ 10 (300 mm wafer: 0.0707). */
  areaM2: number;
  /** Room-to-wafer isolation, ≥ 1 (1 = open to the room air the dose was measured in). */
  isolationFactor: number;
  /** Deposition velocity v_d(d) in m/s for a diameter in m; must return a finite value ≥ 0 and ≤ 10. */
  velocity: (diameterM: number) => number;
}

/**
 * Particles deposited on a surface during an exposure, per size bin.
 *
 *   n_k = A · v_d(d_k) · Dose_k / I
 *
 * n_k particles in bin k on the area; A area (m²); v_d(d_k) deposition velocity at the bin's
 * geometric centre (m/s); Dose_k = ∫ C_k dt (particles·s/m³); I isolation factor (≥ 1).
 * Linear in the dose and in A, inversely proportional to I — so the deposits of separate sources
 * or exposure intervals add exactly (attribution stays exact). Source: the deposition-flux
 * definition J = v_d C (Hinds 1999 ch. 7); isolation factor as a divisor is voidcast's form of a
 * measured room-to-enclosure concentration ratio.
 *
 * @param input dose spectrum, area, isolation factor, velocity function
 * @returns particles per bin on the area (per wafer when A is the wafer's area)
 * @throws ModelInputError for a bad dose spectrum, area ≤ 0 or > 10 m², isolation < 1, or a
 *   velocity that is not finite, negative or above 10 m/s at some bin centre
 * @example
 *   // 300 mm wafer, 3 h open in 100 /m³ (≥ 0.1 µm) air, v_d = 2e-5 m/s → ≈ 1.53 particles
 *   depositDuringExposure({ airborneDoseM3s: dose, areaM2: 0.070686, isolationFactor: 1, velocity: () => 2e-5 })
 */
export function depositDuringExposure(input: DepositionInput): Spectrum {
  const fn = 'depositDuringExposure';
  if (input === null || typeof input !== 'object')
    throw new ModelInputError(
      fn,
      'input',
      '',
      'an object {airborneDoseM3s, areaM2, isolationFactor, velocity}',
      input,
    );
  const dose = requireSpectrum(fn, 'airborneDoseM3s', input.airborneDoseM3s);
  const area = requireNumber(fn, 'areaM2', input.areaM2, 'm²', { min: 0, minExclusive: true, max: 10 });
  const iso = requireNumber(fn, 'isolationFactor', input.isolationFactor, '', { min: 1 });
  if (typeof input.velocity !== 'function')
    throw new ModelInputError(fn, 'velocity', '', 'a function diameterM → m/s', input.velocity);
  const out = zeroSpectrum();
  for (let k = 0; k < SPECTRUM_BIN_COUNT; k++) {
    const d = SPECTRUM_CENTRES_M[k]!;
    const v = input.velocity(d);
    // the parameter's name is built only for the message of a bad value
    if (!(typeof v === 'number' && v >= 0 && v <= 10))
      requireNumber(fn, `velocity(${d.toPrecision(3)} m)`, v, 'm/s', { min: 0, max: 10 });
    out[k] = (area * v * dose[k]!) / iso;
  }
  for (let k = 0; k < SPECTRUM_BIN_COUNT; k++)
    if (!Number.isFinite(out[k]!))
      throw new ModelInputError(fn, 'airborneDoseM3s', '', 'a deposit that stays finite', out[k]);
  return out;
}
