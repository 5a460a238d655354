/**
 * Particles on the demo's wafers (truth) and what the surface scanners report of them.
 *
 * Truth per production wafer, at the post-clean inspection:
 *   - resident particles the post-CMP clean left: a negative-binomial count (wafer-to-wafer spread,
 *     cluster parameter α of the lot) with mean N(≥ 20 nm), sizes from a power-law tail
 *     P(D > d) = (d / 20 nm)^(−slope) (the form Clauset, Shalizi & Newman 2009 fit), positions uniform
 *     over the wafer;
 *   - on some wafers a cluster (a handling mark: particles in a Gaussian blob a few mm wide) or an edge
 *     signature (a ring of larger particles within 5 mm of the edge, from the cleaner's edge rollers);
 *   - non-particle defects from CMP (pits, scratches): they scatter light and are reported, but make
 *     no particle void.
 * Between the two inspections the stocker adds its handling adders (tools file level).
 *
 * A scanner with threshold x_m reports a particle when its measured LSE size (true size × a log-normal
 * sizing error of 7 %) is at least x_m and it is captured: the capture rate near threshold is
 * 1 / (1 + exp(−(s/x_m − 1)/0.085)) in the measured size s — 50 % at threshold, 95 % at 1.25 x_m
 * (scanners miss particles near their threshold; the curve's shape is the demo's choice). Positions
 * carry a 30 µm stage error.
 */
import { type AdderSpec, PRODUCT } from './line.ts';
import type { LotPlan } from './lots.ts';
import { lognormal, paretoDraw, pointInAnnulus, type Rng, stream } from './random.ts';

/** Smallest particle the demo's truth carries, m (the engine's tail floor: 20 nm). */
export const TRUTH_FLOOR_M = 20e-9;
/** Largest particle, m. */
export const TRUTH_CEILING_M = 20e-6;
const WAFER_R = PRODUCT.waferDiameterM / 2;

export type Origin =
  | 'resident'
  | 'cluster'
  | 'edge'
  | 'stocker'
  | 'activation'
  | 'rinse'
  | 'deposit'
  | 'bonder'
  | 'seeded'
  | 'monitor';

export interface TruthParticle {
  xM: number;
  yM: number;
  dM: number;
  origin: Origin;
}

export type DefectClass = 'particle' | 'pit' | 'scratch' | 'residue' | 'cluster' | 'unknown';

export interface Defect {
  xM: number;
  yM: number;
  /** Reported LSE size, m. */
  lseM: number;
  cls: DefectClass;
}

/** Draws `n` particles of a power law from `fromM`, uniform over the wafer. */
export function drawPowerLaw(
  rng: Rng,
  n: number,
  slope: number,
  origin: Origin,
  fromM = TRUTH_FLOOR_M,
): TruthParticle[] {
  const out: TruthParticle[] = [];
  for (let k = 0; k < n; k++) {
    const [xM, yM] = pointInAnnulus(rng, 0, WAFER_R);
    out.push({ xM, yM, dM: paretoDraw(rng, fromM, slope, TRUTH_CEILING_M), origin });
  }
  return out;
}

/** Adders of one pass of a tool (Poisson count of its power law above the truth floor). */
export function drawAdders(rng: Rng, a: AdderSpec, origin: Origin): TruthParticle[] {
  const from = a.fromM ?? TRUTH_FLOOR_M;
  const mean = a.countAbove * (a.atDiameterM / from) ** a.slope;
  // Pass-to-pass spread: a log-normal factor whose 95 % range is ×/÷ the stated uncertainty factor.
  const f = lognormal(rng, Math.log(a.uncertaintyFactor) / 1.96);
  return drawPowerLaw(rng, rng.poisson(mean * f), a.slope, origin, from);
}

export interface WaferSurface {
  waferId: string;
  /** Particles at the post-clean inspection. */
  postClean: TruthParticle[];
  /** Particles at the pre-bond inspection (post-clean plus the stocker's adders). */
  preBond: TruthParticle[];
  /** Pits and scratches from CMP, the same at both inspections. */
  nonParticle: Defect[];
}

export function waferSurface(
  lot: LotPlan,
  slot: number,
  waferId: string,
  stockerAdders: AdderSpec,
): WaferSurface {
  const rng = stream(`surface:${waferId}`);
  const r = lot.resident;
  const particles = drawPowerLaw(rng, rng.negativeBinomial(r.meanAbove20nm, r.alpha), r.slope, 'resident');
  for (const c of lot.clusters.filter((c) => c.slot === slot)) {
    const [cx, cy] = pointInAnnulus(rng, 20e-3, 120e-3);
    for (let k = 0; k < c.count; k++)
      particles.push({
        xM: cx + c.radiusM * 0.5 * rng.normal(),
        yM: cy + c.radiusM * 0.5 * rng.normal(),
        dM: paretoDraw(rng, 30e-9, 1.2, TRUTH_CEILING_M),
        origin: 'cluster',
      });
  }
  if (lot.edgeSlots.includes(slot)) {
    const n = 8 + rng.poisson(6);
    for (let k = 0; k < n; k++) {
      const [xM, yM] = pointInAnnulus(rng, WAFER_R - 5e-3, WAFER_R - 0.5e-3);
      particles.push({ xM, yM, dM: paretoDraw(rng, 35e-9, 1.05, TRUTH_CEILING_M), origin: 'edge' });
    }
  }
  const nonParticle: Defect[] = [];
  for (let k = rng.poisson(1.2); k > 0; k--) {
    const [xM, yM] = pointInAnnulus(rng, 0, WAFER_R - 3e-3);
    nonParticle.push({ xM, yM, lseM: paretoDraw(rng, 50e-9, 1.5, 400e-9), cls: 'pit' });
  }
  for (let k = rng.poisson(0.35); k > 0; k--) {
    const [xM, yM] = pointInAnnulus(rng, 0, WAFER_R - 3e-3);
    nonParticle.push({ xM, yM, lseM: paretoDraw(rng, 80e-9, 1.0, 2e-6), cls: 'scratch' });
  }
  const preBond = [...particles, ...drawAdders(rng, stockerAdders, 'stocker')];
  return { waferId, postClean: particles, preBond, nonParticle };
}

export interface ScanSpec {
  thresholdM: number;
  /** Scanned area ends this far inside the edge, m. */
  edgeExclusionM: number;
}

/** What a scanner reports of a surface (particles first, then the non-particle defects). */
export function scanSurface(
  key: string,
  particles: readonly TruthParticle[],
  nonParticle: readonly Defect[],
  spec: ScanSpec,
): Defect[] {
  const rng = stream(`scan:${key}`);
  const rMax = WAFER_R - spec.edgeExclusionM;
  const out: Defect[] = [];
  const jitter = () => 30e-6 * rng.normal();
  for (const p of particles) {
    const s = p.dM * lognormal(rng, 0.07);
    const captured = rng.uniform() < 1 / (1 + Math.exp(-(s / spec.thresholdM - 1) / 0.085));
    const xM = p.xM + jitter();
    const yM = p.yM + jitter();
    if (s < spec.thresholdM || !captured || Math.hypot(xM, yM) > rMax) continue;
    out.push({ xM, yM, lseM: s, cls: p.origin === 'cluster' ? 'cluster' : 'particle' });
  }
  for (const d of nonParticle) {
    const s = d.lseM * lognormal(rng, 0.05);
    if (s >= spec.thresholdM) out.push({ xM: d.xM + jitter(), yM: d.yM + jitter(), lseM: s, cls: d.cls });
  }
  return out;
}
