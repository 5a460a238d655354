/**
 * Engine defaults, one place, each with why that value.
 */
import type { AssessConfig } from './types.ts';

/** Version of the chain (bumped whenever a formula or default that changes figures changes). */
export const MODEL_VERSION = 'voidcast-chain/3';

export const DEFAULT_ASSESS_CONFIG: Readonly<AssessConfig> = Object.freeze({
  // 20 nm: about one octave below the smallest pre-bond scan thresholds in use (26–65 nm LSE), so a
  // power-law tail fitted above the threshold is never carried more than a factor ~2–3 in size past
  // the data (Clauset, Shalizi & Newman 2009 warn that a tail fit says nothing below x_min); a
  // 20 nm compact particle still holds a void of tens of µm in the small-gap regime, so stopping
  // higher would hide risk. Configurable.
  tailFloorM: 20e-9,
  // 10 particles: the exact 95 % interval of α̂ is then about [0.48 α̂, 1.71 α̂] (2αS ~ χ²(20),
  // Clauset et al. 2009); with fewer the slope is so loose that its upper end alone would hold
  // every wafer, so the product's stated incoming slope is used instead and the note says so.
  minTailParticles: 10,
  // 400 draws: the 2.5 % / 97.5 % quantiles then rest on 10 draws each side — enough for a
  // decision interval (their Monte Carlo standard error is ≈ 1.6 % of the spread), fast per pair.
  draws: 400,
  seed: 20240601,
  // Room-to-mini-environment isolation ≥ 1000 is a memory value of a published benchmark; a purged
  // carrier is taken no better than a closed one unless the site states a measured value.
  closedIsolation: 1000,
  purgedIsolation: 1000,
  depositionFactor: 1,
  // Deposition of sub-micron particles can be raised by an order of magnitude by charge (memory
  // value): 95 % within ×/÷ 3 around the nominal keeps that possibility inside the interval tail.
  depositionUncertaintyFactor: 3,
  smallGapFactor: 1,
  // The small-gap constant could not be verified in print: uncertain within a factor of about 3.
  smallGapUncertaintyFactor: 3,
  // More than a quarter of an exposure interval without usable counter samples: the air the wafer
  // saw is not known well enough to call "bond" — data missing, hold.
  maxGapFraction: 0.25,
  // Typical unidirectional cleanroom downflow 0.3–0.5 m/s (common practice, no source); 0.3 m/s
  // is the lower end (lower flow → thicker boundary layer → less diffusion, conservative for size).
  defaultAirVelocityMps: 0.3,
  fixedDepositionVelocityMps: null,
  // Unit density, the convention of aerosol size statistics (Hinds 1999).
  particleDensityKgM3: 1000,
  maxMapDiscs: 5000,
  killedDieThreshold: 0.5,
});

export function resolveConfig(partial: Partial<AssessConfig> | undefined): AssessConfig {
  return { ...DEFAULT_ASSESS_CONFIG, ...(partial ?? {}) };
}
