/**
 * Unit conversions used at the edges of voidcast.
 *
 * Everything inside the model library is SI (m, m², m³, s, K, Pa, particles per m³). Files and
 * screens speak nm, µm, mm, cm², mm², L, ft³, min, h, °C and per-ft³ / per-L concentrations; these
 * functions are the only place those units are turned into SI and back.
 *
 * Every conversion is a multiplication by an exact factor:
 *   1 nm = 1e-9 m, 1 µm = 1e-6 m, 1 mm = 1e-3 m              (SI prefixes, BIPM SI Brochure 9th ed. 2019)
 *   1 cm² = 1e-4 m², 1 mm² = 1e-6 m², 1 L = 1e-3 m³           (SI prefixes; the litre is 1 dm³ since 1964)
 *   1 ft = 0.3048 m exactly (International Yard and Pound Agreement, 1959), so
 *   1 ft³ = 0.3048³ m³ = 0.028316846592 m³ exactly (NIST SP 811, 2008, Appendix B)
 *   1 min = 60 s, 1 h = 3600 s;  T/K = t/°C + 273.15           (BIPM SI Brochure 9th ed. 2019)
 *
 * A concentration converts with the inverse of the volume factor: n per ft³ = n / 0.028316846592 per m³.
 *
 * Quantities that cannot be negative (sizes, areas, volumes, durations, counts, concentrations) are
 * checked: a non-finite or negative argument throws ModelInputError naming the function, the
 * parameter, its unit and the allowed range.
 */
import { finiteResult, requireNonNegative, requireNumber, requirePositive } from './errors.ts';

/** Metres per nanometre (exact). */
export const M_PER_NM = 1e-9;
/** Metres per micrometre (exact). */
export const M_PER_UM = 1e-6;
/** Metres per millimetre (exact). */
export const M_PER_MM = 1e-3;
/** Square metres per square centimetre (exact). */
export const M2_PER_CM2 = 1e-4;
/** Square metres per square millimetre (exact). */
export const M2_PER_MM2 = 1e-6;
/** Cubic metres per litre (exact). */
export const M3_PER_L = 1e-3;
/** Cubic metres per cubic foot: 0.3048³, exact (International Yard and Pound Agreement 1959; NIST SP 811). */
export const M3_PER_FT3 = 0.028316846592;
/** Litres per cubic foot: 28.316846592, exact. */
export const L_PER_FT3 = 28.316846592;
/** Seconds per minute (exact). */
export const S_PER_MIN = 60;
/** Seconds per hour (exact). */
export const S_PER_H = 3600;
/** Kelvin at 0 °C (exact, SI definition of the Celsius scale). */
export const K_AT_0_C = 273.15;

// Decimal prefixes are applied by dividing or multiplying by an exact integer power of ten
// (1e3, 1e4, 1e6, 1e9 are exact doubles; 1e-6, 1e-9 are not), so that, e.g., umToM(0.5) is the
// double nearest to 5e-7 and mToUm(umToM(x)) returns x for ordinary values.
function toSi(fn: string, param: string, unit: string, value: number, perSi: number): number {
  return requireNonNegative(fn, param, value, unit) / perSi;
}
function fromSi(fn: string, param: string, unit: string, value: number, perSi: number): number {
  return finiteResult(fn, requireNonNegative(fn, param, value, unit) * perSi);
}

// ——— sizes ———

/**
 * Nanometres to metres: d/m = d/nm · 1e-9.
 * @param diameterNm length in nm, finite and ≥ 0
 * @throws ModelInputError when diameterNm is negative or not finite
 * @example nmToM(100) // 1e-7
 */
export const nmToM = (diameterNm: number): number => toSi('nmToM', 'diameterNm', 'nm', diameterNm, 1e9);

/**
 * Metres to nanometres: d/nm = d/m · 1e9.
 * @throws ModelInputError when diameterM is negative or not finite
 * @example mToNm(1e-7) // 100
 */
export const mToNm = (diameterM: number): number => fromSi('mToNm', 'diameterM', 'm', diameterM, 1e9);

/**
 * Micrometres to metres: d/m = d/µm · 1e-6.
 * @throws ModelInputError when diameterUm is negative or not finite
 * @example umToM(0.5) // 5e-7
 */
export const umToM = (diameterUm: number): number => toSi('umToM', 'diameterUm', 'µm', diameterUm, 1e6);

/**
 * Metres to micrometres: d/µm = d/m · 1e6.
 * @throws ModelInputError when diameterM is negative or not finite
 * @example mToUm(5e-7) // 0.5
 */
export const mToUm = (diameterM: number): number => fromSi('mToUm', 'diameterM', 'm', diameterM, 1e6);

/**
 * Millimetres to metres: x/m = x/mm · 1e-3.
 * @throws ModelInputError when lengthMm is negative or not finite
 * @example mmToM(300) // 0.3
 */
export const mmToM = (lengthMm: number): number => toSi('mmToM', 'lengthMm', 'mm', lengthMm, 1e3);

/**
 * Metres to millimetres: x/mm = x/m · 1e3.
 * @throws ModelInputError when lengthM is negative or not finite
 * @example mToMm(0.3) // 300
 */
export const mToMm = (lengthM: number): number => fromSi('mToMm', 'lengthM', 'm', lengthM, 1e3);

// ——— areas ———

/**
 * Square centimetres to square metres: A/m² = A/cm² · 1e-4.
 * @throws ModelInputError when areaCm2 is negative or not finite
 * @example cm2ToM2(706.86) // 0.070686
 */
export const cm2ToM2 = (areaCm2: number): number => toSi('cm2ToM2', 'areaCm2', 'cm²', areaCm2, 1e4);

/**
 * Square metres to square centimetres: A/cm² = A/m² · 1e4.
 * @throws ModelInputError when areaM2 is negative or not finite
 * @example m2ToCm2(0.1) // 1000
 */
export const m2ToCm2 = (areaM2: number): number => fromSi('m2ToCm2', 'areaM2', 'm²', areaM2, 1e4);

/**
 * Square millimetres to square metres: A/m² = A/mm² · 1e-6.
 * @throws ModelInputError when areaMm2 is negative or not finite
 * @example mm2ToM2(50) // 5e-5
 */
export const mm2ToM2 = (areaMm2: number): number => toSi('mm2ToM2', 'areaMm2', 'mm²', areaMm2, 1e6);

/**
 * Square metres to square millimetres: A/mm² = A/m² · 1e6.
 * @throws ModelInputError when areaM2 is negative or not finite
 * @example m2ToMm2(5e-5) // 50
 */
export const m2ToMm2 = (areaM2: number): number => fromSi('m2ToMm2', 'areaM2', 'm²', areaM2, 1e6);

// ——— volumes ———

/**
 * Litres to cubic metres: V/m³ = V/L · 1e-3.
 * @throws ModelInputError when volumeL is negative or not finite
 * @example lToM3(28.3) // 0.0283
 */
export const lToM3 = (volumeL: number): number => toSi('lToM3', 'volumeL', 'L', volumeL, 1e3);

/**
 * Cubic metres to litres: V/L = V/m³ · 1e3.
 * @throws ModelInputError when volumeM3 is negative or not finite
 * @example m3ToL(0.00569) // 5.69
 */
export const m3ToL = (volumeM3: number): number => fromSi('m3ToL', 'volumeM3', 'm³', volumeM3, 1e3);

/**
 * Cubic feet to cubic metres: V/m³ = V/ft³ · 0.028316846592 (exact, NIST SP 811).
 * @throws ModelInputError when volumeFt3 is negative or not finite
 * @example ft3ToM3(1) // 0.028316846592
 */
export const ft3ToM3 = (volumeFt3: number): number =>
  requireNonNegative('ft3ToM3', 'volumeFt3', volumeFt3, 'ft³') * M3_PER_FT3;

/**
 * Cubic metres to cubic feet: V/ft³ = V/m³ / 0.028316846592.
 * @throws ModelInputError when volumeM3 is negative or not finite
 * @example m3ToFt3(1) // 35.31466672148859
 */
export const m3ToFt3 = (volumeM3: number): number =>
  finiteResult('m3ToFt3', requireNonNegative('m3ToFt3', 'volumeM3', volumeM3, 'm³') / M3_PER_FT3);

// ——— times ———

/**
 * Minutes to seconds: t/s = t/min · 60.
 * @throws ModelInputError when durationMin is negative or not finite
 * @example minToS(1) // 60
 */
export const minToS = (durationMin: number): number =>
  finiteResult('minToS', requireNonNegative('minToS', 'durationMin', durationMin, 'min') * S_PER_MIN);

/**
 * Seconds to minutes: t/min = t/s / 60.
 * @throws ModelInputError when durationS is negative or not finite
 * @example sToMin(90) // 1.5
 */
export const sToMin = (durationS: number): number =>
  requireNonNegative('sToMin', 'durationS', durationS, 's') / S_PER_MIN;

/**
 * Hours to seconds: t/s = t/h · 3600.
 * @throws ModelInputError when durationH is negative or not finite
 * @example hToS(3) // 10800
 */
export const hToS = (durationH: number): number =>
  finiteResult('hToS', requireNonNegative('hToS', 'durationH', durationH, 'h') * S_PER_H);

/**
 * Seconds to hours: t/h = t/s / 3600.
 * @throws ModelInputError when durationS is negative or not finite
 * @example sToH(10800) // 3
 */
export const sToH = (durationS: number): number =>
  requireNonNegative('sToH', 'durationS', durationS, 's') / S_PER_H;

// ——— temperature ———

/**
 * Degrees Celsius to kelvin: T/K = t/°C + 273.15 (SI definition of the Celsius scale).
 * @param temperatureC finite and ≥ −273.15 °C (absolute zero)
 * @throws ModelInputError below absolute zero or when not finite
 * @example cToK(20) // 293.15
 */
export const cToK = (temperatureC: number): number =>
  requireNumber('cToK', 'temperatureC', temperatureC, '°C', { min: -K_AT_0_C }) + K_AT_0_C;

/**
 * Kelvin to degrees Celsius: t/°C = T/K − 273.15.
 * @throws ModelInputError when temperatureK is negative or not finite
 * @example kToC(293.15) // 20 (to rounding)
 */
export const kToC = (temperatureK: number): number =>
  requireNonNegative('kToC', 'temperatureK', temperatureK, 'K') - K_AT_0_C;

// ——— concentrations ———

/**
 * Number concentration from a count and the air volume it was counted in: C = n / V.
 *
 * @param count particles counted (≥ 0; a mean of several samples may be fractional)
 * @param sampledVolumeM3 sampled air volume in m³, > 0
 * @returns particles per m³
 * @throws ModelInputError when count < 0, sampledVolumeM3 ≤ 0, or either is not finite
 * @example concentrationPerM3(20, 0.00569) // ≈ 3515 per m³ (20 counts in ISO's minimum 5.69 L)
 */
export function concentrationPerM3(count: number, sampledVolumeM3: number): number {
  const n = requireNonNegative('concentrationPerM3', 'count', count, 'particles');
  const v = requirePositive('concentrationPerM3', 'sampledVolumeM3', sampledVolumeM3, 'm³');
  return finiteResult('concentrationPerM3', n / v);
}

/**
 * Particles per ft³ to particles per m³: C/m⁻³ = C/ft⁻³ / 0.028316846592.
 * @throws ModelInputError when perFt3 is negative or not finite
 * @example perFt3ToPerM3(100) // 3531.466672148859 (the old "class 100" at 0.5 µm)
 */
export const perFt3ToPerM3 = (perFt3: number): number =>
  finiteResult(
    'perFt3ToPerM3',
    requireNonNegative('perFt3ToPerM3', 'perFt3', perFt3, 'per ft³') / M3_PER_FT3,
  );

/**
 * Particles per m³ to particles per ft³: C/ft⁻³ = C/m⁻³ · 0.028316846592.
 * @throws ModelInputError when perM3 is negative or not finite
 * @example perM3ToPerFt3(3520) // 99.675...
 */
export const perM3ToPerFt3 = (perM3: number): number =>
  requireNonNegative('perM3ToPerFt3', 'perM3', perM3, 'per m³') * M3_PER_FT3;

/**
 * Particles per litre to particles per m³: C/m⁻³ = C/L⁻¹ · 1000.
 * @throws ModelInputError when perL is negative or not finite
 * @example perLToPerM3(3.52) // 3520
 */
export const perLToPerM3 = (perL: number): number =>
  finiteResult('perLToPerM3', requireNonNegative('perLToPerM3', 'perL', perL, 'per L') * 1000);

/**
 * Particles per m³ to particles per litre: C/L⁻¹ = C/m⁻³ / 1000.
 * @throws ModelInputError when perM3 is negative or not finite
 * @example perM3ToPerL(3520) // 3.52
 */
export const perM3ToPerL = (perM3: number): number =>
  requireNonNegative('perM3ToPerL', 'perM3', perM3, 'per m³') / 1000;

/**
 * Particles per ft³ to particles per litre: C/L⁻¹ = C/ft⁻³ / 28.316846592.
 * @throws ModelInputError when perFt3 is negative or not finite
 * @example perFt3ToPerL(28.316846592) // 1
 */
export const perFt3ToPerL = (perFt3: number): number =>
  requireNonNegative('perFt3ToPerL', 'perFt3', perFt3, 'per ft³') / L_PER_FT3;

/**
 * Particles per litre to particles per ft³: C/ft⁻³ = C/L⁻¹ · 28.316846592.
 * @throws ModelInputError when perL is negative or not finite
 * @example perLToPerFt3(1) // 28.316846592
 */
export const perLToPerFt3 = (perL: number): number =>
  finiteResult('perLToPerFt3', requireNonNegative('perLToPerFt3', 'perL', perL, 'per L') * L_PER_FT3);
