/**
 * Independent, named random streams for the demo generators.
 *
 * Every generator asks for a stream by a key ("air:BOR-B2", "scan:TR2651-07:pre-bond"), so that
 * changing one part of the scenario never shifts the random numbers of another: the files that did
 * not change keep their bytes. A stream is the model library's seeded xoshiro128** (src/model/rng.ts),
 * seeded with the demo seed mixed with a 32-bit FNV-1a hash of the key (Fowler–Noll–Vo, as
 * published by Noll: offset basis 2166136261, prime 16777619).
 */
import { createRng, type Rng } from '../../src/model/rng.ts';
import { DEMO_SEED } from './line.ts';

export type { Rng };

/** 32-bit FNV-1a hash of a string's UTF-16 code units. */
export function fnv1a32(text: string): number {
  let h = 2166136261;
  for (let i = 0; i < text.length; i++) {
    h ^= text.charCodeAt(i);
    h = Math.imul(h, 16777619) >>> 0;
  }
  return h >>> 0;
}

/** The stream for a key: the same key always gives the same sequence. */
export function stream(key: string, seed = DEMO_SEED): Rng {
  // 2^21 · seed + hash keeps the mixed seed below 2^53 for any seed < 2^32.
  return createRng((seed % 2 ** 21) * 2 ** 32 + fnv1a32(key));
}

/** A draw from a Pareto (power-law) tail: P(X > x) = (x / xMin)^(−alpha), x ≥ xMin; optional upper cut. */
export function paretoDraw(rng: Rng, xMin: number, alpha: number, xMax = Number.POSITIVE_INFINITY): number {
  // Inverse CDF of the truncated Pareto: F(x) = (1 − (x/xMin)^−α) / (1 − (xMax/xMin)^−α).
  const tailMax = Number.isFinite(xMax) ? (xMax / xMin) ** -alpha : 0;
  const u = rng.uniform();
  return xMin * (1 - u * (1 - tailMax)) ** (-1 / alpha);
}

/** A point uniform over an annulus rMin ≤ r ≤ rMax (area-uniform), as [x, y]. */
export function pointInAnnulus(rng: Rng, rMin: number, rMax: number): [number, number] {
  const r = Math.sqrt(rMin * rMin + rng.uniform() * (rMax * rMax - rMin * rMin));
  const a = 2 * Math.PI * rng.uniform();
  return [r * Math.cos(a), r * Math.sin(a)];
}

/** Log-normal multiplier with median 1 and log-standard deviation sigma. */
export function lognormal(rng: Rng, sigma: number): number {
  return Math.exp(sigma * rng.normal());
}
