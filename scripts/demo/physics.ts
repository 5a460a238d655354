/**
 * The model-library functions the demo's truth is drawn through, bound to the demo line's numbers:
 * clean survival (src/model/clean.ts), deposition velocity and deposition during an exposure
 * (src/model/aerosol.ts, src/model/deposition.ts), and the void radius of the product's stack
 * (src/model/void.ts) at the line's true interface energy. Using the same library as the engine keeps the planted truth and what
 * voidcast infers from the files physically consistent.
 */
import { depositionVelocity } from '../../src/model/aerosol.ts';
import { cleanSurvival } from '../../src/model/clean.ts';
import { depositDuringExposure } from '../../src/model/deposition.ts';
import {
  SPECTRUM_BIN_COUNT,
  SPECTRUM_EDGES_M,
  type Spectrum,
  zeroSpectrum,
} from '../../src/model/spectrum.ts';
import { voidRadius, workOfAdhesion } from '../../src/model/void.ts';
import { type AirPath, concentrationAbove, MINUTES } from './air.ts';
import {
  type LineClean,
  type LineLocation,
  PRODUCT,
  TRUE_INTERFACE_ENERGY_JM2,
  WINDOW_START_MS,
} from './line.ts';
import { TRUTH_FLOOR_M } from './surfaces.ts';

/**
 * Survival 1 − PRE(d) of one particle of diameter dM through a clean. The tools file states the curve
 * as PRE = E_max / (1 + exp(−(log10 d − log10 d50) / w)); the model library's form
 * E_max / (1 + (d50/d)^k) is the same curve with steepness k = 1 / (w · ln 10).
 */
export function survivalThrough(clean: LineClean, dM: number): number {
  return cleanSurvival(dM, {
    d50M: clean.halfSizeM,
    maxEfficiency: clean.maxEfficiency,
    steepness: 1 / (clean.widthDecades * Math.LN10),
  });
}

// The line's true energy, not the product file's typed one (line.ts, TRUE_INTERFACE_ENERGY_JM2).
const W = workOfAdhesion(TRUE_INTERFACE_ENERGY_JM2, 'per-surface-gamma');

/** Void radius of a particle of diameter dM between the product's two wafers, at the line's true energy, m. */
export function voidRadiusOf(dM: number): number {
  return voidRadius({
    heightM: PRODUCT.heightFactor * dM,
    workOfAdhesionJm2: W,
    model: 'two-plate',
    top: { thicknessM: PRODUCT.stack.topThicknessM, plateModulusPa: PRODUCT.stack.plateModulusPa },
    bottom: { thicknessM: PRODUCT.stack.bottomThicknessM, plateModulusPa: PRODUCT.stack.plateModulusPa },
  }).radiusM;
}

export const WAFER_AREA_M2 = Math.PI * (PRODUCT.waferDiameterM / 2) ** 2;

/**
 * Expected particles deposited per wafer (per size bin, truth floor upward) while a wafer faces the
 * air of `loc` from fromMs to toMs behind an isolation factor (1 open, 1000 closed carrier), face up.
 * The airborne dose per bin is the time integral of the truth concentration (air.ts), minute by minute.
 */
export function expectedDeposit(
  path: AirPath,
  loc: LineLocation,
  fromMs: number,
  toMs: number,
  isolation: number,
): Spectrum {
  const dose = zeroSpectrum();
  const m0 = Math.max(0, Math.floor((fromMs - WINDOW_START_MS) / 60_000));
  const m1 = Math.min(MINUTES - 1, Math.floor((toMs - WINDOW_START_MS) / 60_000));
  const lo = Math.max(TRUTH_FLOOR_M, SPECTRUM_EDGES_M[0]!);
  for (let m = m0; m <= m1; m++) {
    const a = Math.max(fromMs, WINDOW_START_MS + m * 60_000);
    const b = Math.min(toMs, WINDOW_START_MS + (m + 1) * 60_000);
    if (b <= a) continue;
    const dt = (b - a) / 1000;
    for (let k = 0; k < SPECTRUM_BIN_COUNT; k++) {
      const e0 = SPECTRUM_EDGES_M[k]!;
      const e1 = SPECTRUM_EDGES_M[k + 1]!;
      if (e1 <= lo) continue;
      const c = concentrationAbove(path, m, Math.max(e0, lo)) - concentrationAbove(path, m, e1);
      dose[k]! += Math.max(c, 0) * dt;
    }
  }
  const downflowMps = loc.airVelocityMps ?? 0.3;
  return depositDuringExposure({
    airborneDoseM3s: dose,
    areaM2: WAFER_AREA_M2,
    isolationFactor: isolation,
    velocity: (d) =>
      depositionVelocity(d, { orientation: 'faceUp', downflowMps, waferDiameterM: PRODUCT.waferDiameterM }),
  });
}
