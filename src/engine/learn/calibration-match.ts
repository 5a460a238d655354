/**
 * Matching a pair's observed voids to the predicted discs of its scanned particles (methods.md §4),
 * and the pair's observed figures.
 *
 * Frame: the inspection's voids are stored in the bond frame (the bottom wafer's; the importer maps
 * each file's declared convention there) and the discs come from the assessment, which mirrors the
 * top wafer's particles into the same frame (geometry.ts mirrorInto) — so nothing is transformed here.
 *
 * Tolerance. A void is centred on its particle; what separates the two positions is the inspection's
 * position error and the scanner's, independent, each normal per axis, so their difference has
 * σ = √(σ_insp² + σ_scan²) per axis (root-sum-square) and its length is Rayleigh: a radius
 * τ = σ √(2 ln(1/(1 − q))) holds a fraction q of true offsets (matchingRadius of the scan-matching
 * module, q = 0.99 → τ ≈ 3.03 σ).
 *
 * Rule. An observed void is a candidate for a disc when its centre lies within R + τ of the particle
 * (R the predicted void radius): the disc itself, widened by the position tolerance, so that a void
 * drawn off-centre by a merged neighbour or by a wrong energy still finds its particle. Among the
 * candidates, matches are made one to one, most probable first: the score of void i and particle j
 * is ln s_j − d²/(2σ²) (the particle's survival times the normal density of the offset), ties by
 * distance, then by index. Classes:
 * - explained: a void matched to a scanned particle;
 * - unexplained: a void inside the bonded area with no scanned particle;
 * - in the edge exclusion: a void centred farther from the centre than the wafer radius minus the
 *   product's edge exclusion; left out of every count, as the assessment's figures are (they are over
 *   the bonded area inside the edge exclusion) — bevel voids, which no particle scan can explain;
 * - not seen: a disc whose predicted void is reportable (2R ≥ the inspection's smallest void) with no
 *   void, weighed by the particle's survival (a particle that was probably removed is not a miss).
 * Chance matches: a void unrelated to the scanned particles falls in disc j's window with
 * probability ≈ π(R_j + τ)²/A_b, so E[chance] ≈ Σ_j n_obs π(R_j + τ)²/A_b (expectedChanceMatches).
 */

import { PointGrid } from '../../model/matching/grid.ts';
import { expectedChanceMatches, matchingRadius } from '../../model/matching/match.ts';
import { buildDieHits, type DieGridIndex } from '../geometry.ts';
import type { VoidDisc } from '../types.ts';
import type {
  InspectionInput,
  ObservedFigures,
  ObservedVoid,
  PairMatching,
  PredictedDisc,
} from './calibration-types.ts';

/**
 * Position error of an inspection that states none, one σ per axis: 0.2 mm. Infrared transmission
 * and acoustic imagers of 300 mm stacks resolve a few tenths of a millimetre to tens of micrometres
 * (common practice, no source); the larger end is taken so that a missing statement widens the
 * tolerance rather than losing true matches.
 */
export const DEFAULT_INSPECTION_SIGMA_M = 0.2e-3;

/**
 * Position error of a scanner (laser-scattering surface inspection), one σ per axis: 50 µm — stage
 * and coordinate errors of such tools are tens of micrometres (common practice, no source). Small
 * beside the inspections' error, so it barely moves the tolerance.
 */
export const DEFAULT_SCANNER_SIGMA_M = 50e-6;

/** Fraction of true void–particle offsets the tolerance holds. */
export const MATCH_CAPTURE = 0.99;

export interface MatchArgs {
  inspection: InspectionInput;
  /** The assessment's predicted discs of the pair's scanned particles (bond frame). */
  discs: readonly VoidDisc[];
  /** Radius of the bonded area (wafer radius − edge exclusion), m. */
  bondedRadiusM: number;
  inspectionSigmaM: number;
  scannerSigmaM: number;
}

/** Matches one inspection's voids to the predicted discs (see the module comment for the rule). */
export function matchPairVoids(a: MatchArgs): PairMatching {
  const insp = a.inspection;
  const stated = insp.positionSigmaM !== null;
  const sInsp = insp.positionSigmaM ?? a.inspectionSigmaM;
  const sigma = Math.hypot(sInsp, a.scannerSigmaM);
  const tol = matchingRadius(sigma, MATCH_CAPTURE);
  const dMin = insp.smallestVoidM;
  const rb2 = a.bondedRadiusM * a.bondedRadiusM;
  const v = insp.voids;

  const voids: ObservedVoid[] = [];
  // Voids inside the bonded area, indexed for the disc queries.
  const inside: number[] = [];
  for (let i = 0; i < v.count; i++) {
    const x = v.xM[i]!;
    const y = v.yM[i]!;
    const edge = x * x + y * y > rb2;
    voids.push({
      xM: x,
      yM: y,
      diameterM: v.diameterM[i]!,
      inspectionClass: v.classes[i] ?? 'unknown',
      match: edge ? 'edge-exclusion' : 'unexplained',
      disc: -1,
      distanceM: null,
    });
    if (!edge) inside.push(i);
  }
  const discs: PredictedDisc[] = a.discs.map((d) => ({
    xM: d.xM,
    yM: d.yM,
    rM: d.rM,
    survival: d.survival,
    diameterM: d.diameterM,
    wafer: d.wafer,
    reportable: 2 * d.rM >= dMin,
    matchedVoid: -1,
  }));

  // Candidates: (void, disc) with the void's centre within R + τ of the particle.
  const cand: { i: number; j: number; d2: number; score: number }[] = [];
  if (inside.length > 0 && discs.length > 0) {
    const xs = Float64Array.from(inside, (i) => v.xM[i]!);
    const ys = Float64Array.from(inside, (i) => v.yM[i]!);
    // Cells of the tolerance's size, at least 0.5 mm (voids are sparse; a query reads a few cells).
    const grid = new PointGrid(xs, ys, xs.length, Math.max(tol, 0.5e-3));
    const twoS2 = 2 * sigma * sigma;
    discs.forEach((d, j) => {
      if (!(d.survival > 0)) return;
      const lnS = Math.log(d.survival);
      grid.forEachWithin(d.xM, d.yM, d.rM + tol, (k, d2) => {
        cand.push({ i: inside[k]!, j, d2, score: lnS - d2 / twoS2 });
      });
    });
  }
  cand.sort((p, q) => q.score - p.score || p.d2 - q.d2 || p.i - q.i || p.j - q.j);
  for (const c of cand) {
    const o = voids[c.i]!;
    const d = discs[c.j]!;
    if (o.disc >= 0 || d.matchedVoid >= 0) continue;
    o.disc = c.j;
    o.match = 'explained';
    o.distanceM = Math.sqrt(c.d2);
    d.matchedVoid = c.i;
  }

  let explained = 0;
  let unexplained = 0;
  let edge = 0;
  for (const o of voids)
    if (o.match === 'explained') explained++;
    else if (o.match === 'unexplained') unexplained++;
    else edge++;
  let notSeen = 0;
  let notSeenExpected = 0;
  let expectedFromScanned = 0;
  let chance = 0;
  const areaB = Math.PI * rb2;
  for (const d of discs) {
    if (d.reportable) {
      expectedFromScanned += d.survival;
      if (d.matchedVoid < 0) {
        notSeen++;
        notSeenExpected += d.survival;
      }
    }
    if (d.survival > 0) chance += expectedChanceMatches(1, inside.length, d.rM + tol, areaB);
  }
  return {
    inspectionId: insp.inspectionId,
    method: insp.method,
    stage: insp.stage,
    smallestVoidM: dMin,
    inspectionSigmaM: sInsp,
    inspectionSigmaStated: stated,
    scannerSigmaM: a.scannerSigmaM,
    toleranceM: tol,
    voids,
    discs,
    explained,
    unexplained,
    inEdgeExclusion: edge,
    notSeen,
    notSeenExpected,
    expectedFromScanned,
    // At most every observed void (the window area cannot exceed the bonded area).
    chanceMatches: Math.min(chance, inside.length),
  };
}

/**
 * The inspection a pair is calibrated on: the one reporting the smallest voids (the most it can
 * tell), the latest of those on a tie. Its voids are one observation of the pair's interface; the
 * others see the same particles and are not counted again.
 */
export function calibrationInspection(list: readonly InspectionInput[]): InspectionInput | null {
  let best: InspectionInput | null = null;
  for (const x of list)
    if (
      !best ||
      x.smallestVoidM < best.smallestVoidM ||
      (x.smallestVoidM === best.smallestVoidM && x.timeMs >= best.timeMs)
    )
      best = x;
  return best;
}

/**
 * A pair's observed figures inside the bonded area: the voids counted, their area (each void's
 * equivalent diameter gives its area; overlapping voids are reported merged by the inspection), and
 * the dies whose critical rectangle (pad array, or the whole die) some void's disc touches — the
 * same geometry the assessment's die kills use (geometry.ts buildDieHits).
 */
export function observedFigures(m: PairMatching, dieGrid: DieGridIndex | null): ObservedFigures {
  const kept = m.voids.filter((o) => o.match !== 'edge-exclusion');
  let area = 0;
  for (const o of kept) area += (Math.PI * o.diameterM * o.diameterM) / 4;
  let dieKills: number | null = null;
  if (dieGrid) {
    const hits = buildDieHits(
      dieGrid,
      Float64Array.from(kept, (o) => o.xM),
      Float64Array.from(kept, (o) => o.yM),
      Float64Array.from(kept, (o) => o.diameterM / 2),
    );
    dieKills = new Set(hits.hitDie).size;
  }
  return { voids: kept.length, unbondedAreaM2: area, dieKills };
}
