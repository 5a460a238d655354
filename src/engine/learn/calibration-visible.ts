/**
 * The assessment's prediction as an inspection sees it: what a void inspection can be compared with.
 *
 * An inspection reports only voids of at least its smallest size D_min. The assessment's reportable
 * voids are counted at that size already (the pair is assessed at its inspection's D_min), but its
 * unbonded area and die kills are physical totals — every void, down to the microns a 20 nm particle
 * holds open, and in hybrid bonding any void on a pad array kills the die. Those small voids are real
 * and invisible to the inspection, so observed area and die kills can only be compared with the part
 * of the prediction made of voids ≥ D_min. That part is taken from the assessment's own output:
 * - scanned particles: the void map's discs with 2R ≥ D_min, each present with its survival s_j;
 * - every other source: its expected particles per size bin at the interface (the assessment's
 *   stacked spectrum) × the part of the bin whose void is reportable (evaluate.ts fractionAbove, at
 *   the assessment's reportable particle size), scaled so that their sum is the source's expected
 *   reportable voids (which carries its area basis), at the bin's void radius;
 * - voids no scanned particle explains (a source of its own when a calibration is applied): its
 *   reportable voids at the radius of their fitted mean area, as the assessment draws them.
 * A seeded Monte Carlo draws the visible voids — scanned particles by Bernoulli(s_j), the rest by
 * Poisson per bin, placed uniformly over the bonded area as the assessment's random part is — and
 * sums their areas and counts the dies whose critical rectangle a drawn disc touches (geometry.ts
 * buildDieHits). Its intervals are counting noise only (the engine's intervals of the reportable
 * voids also carry the uncertain inputs); the reportable-void figure itself is the engine's.
 */
import { createRng } from '../../model/rng.ts';
import { fractionAbove } from '../evaluate.ts';
import { buildDieHits, type DieGridIndex } from '../geometry.ts';
import { estimateFrom, sorted } from '../montecarlo.ts';
import type { PairAssessment } from '../types.ts';
import type { PredictedFigures } from './calibration-types.ts';

/** Draws behind the visible figures' intervals. */
export const VISIBLE_DRAWS = 400;

/** Random (position-unknown) visible voids: expected count per radius. */
interface RandomVoids {
  radiusM: number[];
  mean: number[];
}

function randomVisible(a: PairAssessment, unexplainedRadiusM: number | null): RandomVoids {
  const out: RandomVoids = { radiusM: [], mean: [] };
  const sp = a.spectrum;
  const frac = fractionAbove(a.reportableParticleM);
  const add = (r: number, m: number) => {
    if (!(m > 0) || !(r > 0)) return;
    out.radiusM.push(r);
    out.mean.push(m);
  };
  for (const c of a.contributions) {
    if (c.kind === 'detected' || !(c.expectedVoids > 0)) continue;
    if (c.kind === 'unexplained') {
      // No size spectrum: its reportable voids at the radius of the fitted mean void area (as the
      // assessment draws them), else at the smallest reportable size.
      add(unexplainedRadiusM ?? a.smallestReportableVoidM / 2, c.expectedVoids);
      continue;
    }
    const series = sp?.series.find((s) => s.sourceKey === c.key);
    if (!sp || !series) continue;
    let base = 0;
    for (let k = 0; k < series.counts.length; k++) base += series.counts[k]! * frac[k]!;
    if (!(base > 0)) continue;
    const scale = c.expectedVoids / base;
    for (let k = 0; k < series.counts.length; k++)
      add(sp.voidRadiusM[k]!, series.counts[k]! * frac[k]! * scale);
  }
  return out;
}

/**
 * Predicted figures of the voids an inspection with smallest void `a.smallestReportableVoidM` sees
 * (see the module comment). Needs the assessment's 'full' detail (void map and spectrum).
 */
export function visibleFigures(
  a: PairAssessment,
  dieGrid: DieGridIndex | null,
  bondedRadiusM: number,
  seed: number,
  /** Radius of the mean area of the voids no scanned particle explains (that source's void), m. */
  unexplainedRadiusM: number | null = null,
  draws = VISIBLE_DRAWS,
): PredictedFigures {
  const dMin = a.smallestReportableVoidM;
  const det = (a.voidMap?.discs ?? []).filter((d) => 2 * d.rM >= dMin && d.survival > 0);
  const rnd = randomVisible(a, unexplainedRadiusM);
  let areaMean = 0;
  for (const d of det) areaMean += d.survival * Math.PI * d.rM * d.rM;
  for (let k = 0; k < rnd.mean.length; k++) areaMean += rnd.mean[k]! * Math.PI * rnd.radiusM[k]! ** 2;

  const rng = createRng(seed);
  const area = new Float64Array(draws);
  const kills = dieGrid ? new Float64Array(draws) : null;
  const xs: number[] = [];
  const ys: number[] = [];
  const rs: number[] = [];
  const seen = dieGrid ? new Uint8Array(dieGrid.count) : null;
  for (let t = 0; t < draws; t++) {
    xs.length = 0;
    ys.length = 0;
    rs.length = 0;
    let sum = 0;
    for (const d of det)
      if (rng.uniform() < d.survival) {
        sum += Math.PI * d.rM * d.rM;
        xs.push(d.xM);
        ys.push(d.yM);
        rs.push(d.rM);
      }
    for (let k = 0; k < rnd.mean.length; k++) {
      const r = rnd.radiusM[k]!;
      for (let n = rng.poisson(rnd.mean[k]!); n > 0; n--) {
        sum += Math.PI * r * r;
        // uniform over the bonded disc
        const rho = bondedRadiusM * Math.sqrt(rng.uniform());
        const phi = 2 * Math.PI * rng.uniform();
        xs.push(rho * Math.cos(phi));
        ys.push(rho * Math.sin(phi));
        rs.push(r);
      }
    }
    area[t] = sum;
    if (dieGrid && kills && seen) {
      if (xs.length === 0) continue;
      const hits = buildDieHits(dieGrid, Float64Array.from(xs), Float64Array.from(ys), Float64Array.from(rs));
      seen.fill(0);
      let n = 0;
      for (const h of hits.hitDie)
        if (!seen[h]) {
          seen[h] = 1;
          n++;
        }
      kills[t] = n;
    }
  }
  const conf = a.figures.voids.confidence;
  let killMean = 0;
  if (kills) for (const k of kills) killMean += k / draws;
  return {
    voids: a.figures.voids,
    unbondedAreaM2: estimateFrom(areaMean, sorted(area), conf),
    dieKills: kills ? estimateFrom(killMean, sorted(kills), conf) : null,
  };
}
