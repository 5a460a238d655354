/**
 * Intervals by seeded Monte Carlo over the uncertain inputs together with counting noise.
 *
 * Each draw:
 * - the deposition velocity factor ~ lognormal, median 1, 95 % within ×/÷ depositionUncertaintyFactor
 *   (one factor for all waits of the pair: the uncertainty is in the physics, common to every wait);
 * - the small-gap void constant ~ lognormal around its nominal, 95 % within ×/÷ smallGapUncertaintyFactor,
 *   taken at the nearest point of a fixed grid of 41 log-spaced values (physics.ts caches the radii
 *   there; the grid step is 0.112 in ln f, i.e. at most ±5.8 % in f, small against a factor-3 spread);
 * - each tool's adder level ~ lognormal, median its stated level, 95 % within ×/÷ its uncertainty factor
 *   (one factor per tool per draw: a tool's mean level is what is uncertain);
 * - each scan tail's Hill slope α ~ Gamma(n, 1/S): the distribution of the exact pivot 2αS ~ χ²(2n)
 *   of Clauset, Shalizi & Newman (2009), so α lands in its exact interval with the stated probability
 *   (a tail with too few particles for a fit keeps the assumed slope);
 * then counting noise: reportable voids ~ Poisson(expected voids) (detected particles' Bernoulli
 * survivals are taken as Poisson: the same mean and a variance at least as large, the conservative
 * side); for the unbonded area the discs of each bin are a Poisson count and the Boolean exponent is
 * taken over the drawn discs (ExponentSampler); each die is killed with its probability (drawKills;
 * an edge die's random mean is its share of the wafer-level one, DieClasses), the random part of
 * the negative-binomial form drawn with the die mean scaled by a wafer-level Gamma(α, 1/α) factor —
 * the gamma–Poisson mixture that defines it (Stapper).
 * Detected particles keep their nominal radii (their positions are fixed).
 * Voids no scanned particle explains (an adopted set's rate per pair): the rate is drawn from its
 * 95 % interval (drawUnexplainedRate in parameters.ts), then counted like the rest — Poisson voids,
 * discs of their fitted area in the Boolean sum, their critical area in the die-kill mean.
 */
import { quantileSorted } from 'simple-statistics';
import { createRng, type Rng } from '../model/rng.ts';
import { SPECTRUM_BIN_COUNT, SPECTRUM_EDGES_M } from '../model/spectrum.ts';
import type { Evaluation, VoidPhysics } from './evaluate.ts';
import { fractionAbove } from './evaluate.ts';
import { drawUnexplainedRate, GARWOOD_UPPER_ZERO_95 } from './parameters.ts';
import type { Contribution } from './propagate.ts';
import type { AssessConfig, Estimate } from './types.ts';

const Z975 = 1.959963984540054;

/** The small-gap factor grid (ln-spaced, 41 points over ±4σ) shared by the Monte Carlo and physics.ts. */
export function smallGapGrid(cfg: AssessConfig): Float64Array {
  const sigma = Math.log(Math.max(cfg.smallGapUncertaintyFactor, 1)) / Z975;
  const out = new Float64Array(41);
  for (let i = 0; i < 41; i++) out[i] = cfg.smallGapFactor * Math.exp(sigma * (-4 + (8 * i) / 40));
  return out;
}

export interface DrawSet {
  voids: Float64Array;
  unbondedFraction: Float64Array;
  killsPoisson: Float64Array | null;
  killsNB: Float64Array | null;
}

/** Void physics at each point of the small-gap grid (radii, reportable fraction, critical areas). */
export interface GridPhysics {
  radii: Float64Array[];
  frac: Float64Array[];
  acrit: Float64Array[];
}

export function buildGridPhysics(physics: VoidPhysics, grid: Float64Array, hasDies: boolean): GridPhysics {
  const radii: Float64Array[] = [];
  const frac: Float64Array[] = [];
  const acrit: Float64Array[] = [];
  for (const f of grid) {
    const r = physics.binRadii(f);
    radii.push(r);
    frac.push(fractionAbove(physics.reportableParticleM(f)));
    const a = new Float64Array(SPECTRUM_BIN_COUNT);
    if (hasDies) for (let k = 0; k < SPECTRUM_BIN_COUNT; k++) a[k] = physics.criticalArea(r[k]!);
    acrit.push(a);
  }
  return { radii, frac, acrit };
}

/**
 * The bins a tail between `floor` and its threshold x_m covers, [k0, k0 + m), and ln(e/x_m) at
 * their m + 1 edges clipped to [floor, x_m] — fixed per tail, so a draw needs one exp per edge.
 */
export interface TailShape {
  k0: number;
  lnRatio: Float64Array;
}

export function tailShape(xm: number, floor: number): TailShape {
  let k0 = 0;
  while (k0 < SPECTRUM_BIN_COUNT && SPECTRUM_EDGES_M[k0 + 1]! <= floor) k0++;
  let k1 = k0;
  while (k1 < SPECTRUM_BIN_COUNT && SPECTRUM_EDGES_M[k1]! < xm) k1++;
  const lnRatio = new Float64Array(Math.max(k1 - k0, 0) + 1);
  for (let i = 0; i < lnRatio.length; i++) {
    const e = Math.min(Math.max(SPECTRUM_EDGES_M[k0 + i]!, floor), xm);
    lnRatio[i] = Math.log(e / xm);
  }
  return { k0, lnRatio };
}

/**
 * Tail spectrum of one draw: N(≥ d) = n·(d/x_m)^(−α) placed in the bins between the floor and the
 * threshold — the same power law as the model's powerLawSpectrum (test/unit/engine/montecarlo.test.ts
 * checks the two agree), written out here without its argument checks because it runs once per
 * draw per tail. Writes the counts into out[k0 … k0 + m − 1] (the other bins are left as they are).
 */
export function tailBinsOf(shape: TailShape, n: number, alpha: number, out: Float64Array): Float64Array {
  const a = Math.min(Math.max(alpha, 0), 10);
  const { k0, lnRatio } = shape;
  let prev = Math.exp(-a * lnRatio[0]!); // (lo/x_m)^(−α)
  for (let i = 1; i < lnRatio.length; i++) {
    const next = Math.exp(-a * lnRatio[i]!);
    out[k0 + i - 1] = Math.max(n * (prev - next), 0);
    prev = next;
  }
  return out;
}

/**
 * The dies of a scenario grouped for the kill draws. A die's random die-kill mean is a fixed share c
 * of the wafer-level mean m (c = m_d / m from the nominal evaluation: 1 for a die whose critical
 * regions lie on the wafer, less for an edge die the wafer edge cuts), so in a draw whose mean is m
 * the die is killed with p_d = 1 − S_d·e^(−c·m) (S_d: no detected particle kills it). Dies are
 * grouped by c in steps of 1/64 (c = 1 exactly is a group of its own), each group drawn with the
 * mean c of its dies. **Choice:** the share c is taken at the nominal inputs in every draw (the
 * draws move m, not the mix of sizes between the dies), and rounding c to its group moves an edge
 * die's mean by at most 1/128 of m — for the interval only; the expected value uses every die's
 * own m_d.
 */
export interface DieClasses {
  /** Per group: c, the number of dies no detected particle reaches, and its reached dies' S_d. */
  share: Float64Array;
  free: Int32Array;
  /** Group j's reached dies: hitS[hitStart[j] … hitStart[j+1] − 1]. */
  hitStart: Int32Array;
  hitS: Float64Array;
  /** Per group: ΣS_d, ΣS_d², min S_d, max S_d over its reached dies. */
  sumS: Float64Array;
  sumS2: Float64Array;
  minS: Float64Array;
  maxS: Float64Array;
  /** Dies a detected particle kills for certain (S_d < 1e-12), in no group. */
  certain: number;
  nDies: number;
}

export function dieClasses(
  survive: Float64Array,
  randomMeanDie: Float64Array | null,
  randomMean: number,
): DieClasses {
  const nDies = survive.length;
  const groups = new Map<number, { c: number; n: number; free: number; hit: number[] }>();
  let certain = 0;
  for (let d = 0; d < nDies; d++) {
    const s = survive[d]!;
    if (s < 1e-12) {
      certain++;
      continue;
    }
    const c = randomMeanDie && randomMean > 0 ? Math.min(randomMeanDie[d]! / randomMean, 1) : 1;
    const key = c === 1 ? -1 : Math.round(c * 64);
    let g = groups.get(key);
    if (!g) {
      g = { c: 0, n: 0, free: 0, hit: [] };
      groups.set(key, g);
    }
    g.c += c;
    g.n++;
    if (s < 1) g.hit.push(s);
    else g.free++;
  }
  // the c = 1 group first, then by key, so that the order (and the draws) do not depend on die order
  const list = [...groups.entries()].sort((a, b) => a[0] - b[0]).map((e) => e[1]);
  const k = list.length;
  const out: DieClasses = {
    share: new Float64Array(k),
    free: new Int32Array(k),
    hitStart: new Int32Array(k + 1),
    hitS: new Float64Array(list.reduce((a, g) => a + g.hit.length, 0)),
    sumS: new Float64Array(k),
    sumS2: new Float64Array(k),
    minS: new Float64Array(k).fill(1),
    maxS: new Float64Array(k),
    certain,
    nDies,
  };
  let o = 0;
  list.forEach((g, j) => {
    out.share[j] = g.c / g.n;
    out.free[j] = g.free;
    out.hitStart[j] = o;
    for (const x of g.hit) {
      out.hitS[o++] = x;
      out.sumS[j]! += x;
      out.sumS2[j]! += x * x;
      if (x < out.minS[j]!) out.minS[j] = x;
      if (x > out.maxS[j]!) out.maxS[j] = x;
    }
  });
  out.hitStart[k] = o;
  return out;
}

/**
 * Killed dies in one draw whose wafer-level random die-kill mean is `mean`: Σ over dies of
 * Bernoulli(p_d), p_d = 1 − S_d·q_j with q_j = e^(−c_j·mean) for the die's group j (see DieClasses).
 * Exact Bernoulli draws where the count is small; otherwise:
 * - dies no detected particle reaches: Σ_j Binomial(n_j, p_j), p_j = 1 − q_j, drawn as
 *   Poisson(Σ n_j p_j) when every p_j ≤ 0.01 (total-variation error ≤ Σ n_j p_j² / Σ n_j p_j ≤ max p_j,
 *   Barbour & Hall 1984) or as a rounded normal with its mean and variance Σ n_j p_j (1 − p_j) when
 *   that variance is ≥ 9 (the usual rule of thumb for the normal approximation);
 * - the dies that detected particles reach: Poisson(Σp) when every p ≤ 0.01, the complement as
 *   Poisson(Σ(1 − p)) when every p ≥ 0.99 (the same bound, Barbour & Hall 1984), a rounded normal
 *   with their mean and variance when that variance is ≥ 9, else one Bernoulli draw per die.
 * `q` is a scratch array with room for one value per group.
 */
export function drawKills(rng: Rng, mean: number, g: DieClasses, q: Float64Array): number {
  const nG = g.share.length;
  for (let j = 0; j < nG; j++) q[j] = Math.exp(-g.share[j]! * mean);
  let k = 0;
  let nFree = 0;
  let mu = 0;
  let v = 0;
  let pMax = 0;
  for (let j = 0; j < nG; j++) {
    const f = g.free[j]!;
    if (f === 0) continue;
    const p = 1 - q[j]!;
    nFree += f;
    mu += f * p;
    v += f * p * (1 - p);
    if (p > pMax) pMax = p;
  }
  if (nFree > 0 && pMax > 0) {
    if (pMax <= 0.01) k += Math.min(rng.poisson(mu), nFree);
    else if (v >= 9) k += Math.min(Math.max(Math.round(mu + Math.sqrt(v) * rng.normal()), 0), nFree);
    else
      for (let j = 0; j < nG; j++) {
        const t = (1 - q[j]!) * 4294967296;
        for (let i = 0; i < g.free[j]!; i++) if (rng.nextUint32() < t) k++;
      }
  }
  const h = g.hitS.length;
  if (h > 0) {
    // Σ p_d = H − Σ_j q_j ΣS and Σ p_d(1 − p_d) = Σ_j (q_j ΣS − q_j² ΣS²), from sums kept per group.
    let muH = h;
    let vH = 0;
    let pMinH = 1; // smallest kill probability among these dies
    let pMaxH = 0;
    for (let j = 0; j < nG; j++) {
      if (g.hitStart[j + 1]! === g.hitStart[j]!) continue;
      const qj = q[j]!;
      muH -= qj * g.sumS[j]!;
      vH += qj * g.sumS[j]! - qj * qj * g.sumS2[j]!;
      pMinH = Math.min(pMinH, 1 - qj * g.maxS[j]!);
      pMaxH = Math.max(pMaxH, 1 - qj * g.minS[j]!);
    }
    if (pMaxH <= 0.01) k += Math.min(rng.poisson(muH), h);
    else if (pMinH >= 0.99) k += h - Math.min(rng.poisson(h - muH), h);
    else if (vH >= 9) k += Math.min(Math.max(Math.round(muH + Math.sqrt(vH) * rng.normal()), 0), h);
    else
      for (let j = 0; j < nG; j++) {
        const qj = q[j]!;
        for (let i = g.hitStart[j]!; i < g.hitStart[j + 1]!; i++)
          if (rng.nextUint32() < (1 - g.hitS[i]! * qj) * 4294967296) k++;
      }
  }
  return g.certain + Math.min(k, g.nDies - g.certain);
}

/** Entries of the unbonded-area sum expected to hold fewer discs than this are drawn disc by disc. */
export const EXACT_BELOW_COUNT = 20;
/** Entries whose expected area is below this share of the sum's total add their mean only. */
export const NEGLIGIBLE_SHARE = 1e-6;

/** How one entry of the unbonded-area sum is drawn (see ExponentSampler). */
export type EntryClass = 'none' | 'mean' | 'normal' | 'exact';

/** Classifies an entry of expected disc count u and disc area a against the sum's total Σμa. */
export function entryClass(u: number, a: number, total: number): EntryClass {
  if (!(u > 0)) return 'none';
  if (u * a < NEGLIGIBLE_SHARE * total) return 'mean';
  return u >= EXACT_BELOW_COUNT ? 'normal' : 'exact';
}

/**
 * Unbonded area exponent of one draw, Σ (drawn disc areas) / A_b, as a compound Poisson sum over
 * entries (a bin of random particles, or a bin of detected particles with their mean disc area):
 * - entries with an expected count ≥ 20 contribute through a normal with the compound mean Σμa and
 *   variance Σμa² (many discs: the central limit applies);
 * - entries whose expected area is below 10⁻⁶ of the total add their mean (their noise cannot move
 *   the total);
 * - the others are drawn exactly: their total count ~ Poisson(Σμ), each disc's entry in proportion
 *   to the entries' means (a Poisson number of discs with independent marks, Kingman, Poisson
 *   Processes, 1993, §5.1).
 * Which entry is which is decided once per scenario from its nominal count and area (simulate);
 * the draws keep it. The detected entries do not change between draws at all, so an alias table
 * for picking among them (Walker 1977, in Vose's stable form, IEEE Trans. Softw. Eng. 17 (1991) 972)
 * is built once; the random exact entries change with every draw and are picked by inverse CDF
 * through a guide table (Chen & Asau 1974; Devroye, Non-Uniform Random Variate Generation, 1986,
 * §III.2.4), one 32-bit uniform per disc.
 */
/** An alias table (Walker 1977, in Vose's stable form, IEEE Trans. Softw. Eng. 17 (1991) 972). */
export interface AliasTable {
  prob: Float64Array;
  other: Int32Array;
}

/** The alias table of positive weights (index i drawn with probability w_i / Σw). */
export function aliasTable(weights: ArrayLike<number>): AliasTable {
  const m = weights.length;
  let sum = 0;
  for (let i = 0; i < m; i++) sum += weights[i]!;
  const prob = new Float64Array(m);
  const other = new Int32Array(m);
  const scaled = Float64Array.from({ length: m }, (_, i) => (weights[i]! * m) / sum);
  const small: number[] = [];
  const large: number[] = [];
  for (let i = 0; i < m; i++) (scaled[i]! < 1 ? small : large).push(i);
  while (small.length && large.length) {
    const l = small.pop()!;
    const g = large.pop()!;
    prob[l] = scaled[l]!;
    other[l] = g;
    scaled[g] = scaled[g]! + scaled[l]! - 1;
    (scaled[g]! < 1 ? small : large).push(g);
  }
  for (const i of [...small, ...large]) {
    prob[i] = 1; // left over only by rounding: the column is its own
    other[i] = i;
  }
  return { prob, other };
}

/** One draw from an alias table with one 32-bit output: the column from its high part, the coin from the rest. */
export function aliasPick(rng: Rng, t: AliasTable): number {
  const cols = t.prob.length;
  const x = rng.nextUint32() * (cols / 4294967296);
  const c = Math.min(Math.floor(x), cols - 1);
  return x - c < t.prob[c]! ? c : t.other[c]!;
}

export class ExponentSampler {
  private readonly detMean: number;
  private readonly detVar: number;
  private readonly detExactMu: number;
  private readonly alias: AliasTable;
  private readonly aliasArea: Float64Array;
  private readonly cdf: Float64Array;
  private readonly guide: Int32Array;

  /**
   * @param detMu, detArea the detected entries (expected surviving count, mean disc area m²)
   * @param total the whole sum's nominal Σμa (random and detected), m², for the 10⁻⁶ rule
   * @param maxExact the most random exact entries a draw will pass
   */
  constructor(
    detMu: Float64Array,
    detArea: Float64Array,
    total: number,
    private readonly ab: number,
    maxExact: number,
  ) {
    let mean = 0;
    let variance = 0;
    const exact: number[] = [];
    for (let k = 0; k < detMu.length; k++) {
      const u = detMu[k]!;
      const a = detArea[k]!;
      const c = entryClass(u, a, total);
      if (c === 'mean') mean += u * a;
      else if (c === 'normal') {
        mean += u * a;
        variance += u * a * a;
      } else if (c === 'exact') exact.push(k);
    }
    this.detMean = mean;
    this.detVar = variance;
    // the alias table over the exact entries, weights μ_k
    let sumMu = 0;
    for (const k of exact) sumMu += detMu[k]!;
    this.detExactMu = sumMu;
    this.alias = aliasTable(exact.map((k) => detMu[k]!));
    this.aliasArea = Float64Array.from(exact, (k) => detArea[k]!);
    this.cdf = new Float64Array(Math.max(maxExact, 1));
    this.guide = new Int32Array(Math.max(maxExact, 1));
  }

  /**
   * One draw's exponent. The random entries come as the normal part's compound mean and variance
   * (m², m⁴: Σμa and Σμa² over the 'normal' entries, plus Σμa of the 'mean' ones) and the first
   * `nExact` of `muExact`/`areaExact` (expected count, disc area m²).
   */
  draw(
    rng: Rng,
    bigMean: number,
    bigVar: number,
    muExact: Float64Array,
    areaExact: Float64Array,
    nExact: number,
  ): number {
    const mean = bigMean + this.detMean;
    const variance = bigVar + this.detVar;
    let total = mean > 0 ? Math.max(mean + Math.sqrt(variance) * rng.normal(), 0) : 0;
    const cdf = this.cdf;
    let smallMu = 0;
    for (let i = 0; i < nExact; i++) {
      const u = muExact[i]!;
      if (u > 0) smallMu += u;
      cdf[i] = smallMu;
    }
    if (smallMu > 0) {
      const n = rng.poisson(smallMu);
      if (n > 0) {
        // guide[c] is the first entry whose CDF exceeds c·Σμ/m, so a search starts at most a step
        // or two before its answer.
        const m = nExact;
        const guide = this.guide;
        let i = 0;
        for (let c = 0; c < m; c++) {
          const t = (c * smallMu) / m;
          while (i < m - 1 && cdf[i]! <= t) i++;
          guide[c] = i;
        }
        const toCell = m / 4294967296;
        const toMu = smallMu / m;
        for (let j = 0; j < n; j++) {
          const u = rng.nextUint32() * toCell; // in [0, m)
          const x = u * toMu; // in [0, Σμ)
          let k = guide[Math.floor(u)]!;
          while (k < m - 1 && cdf[k]! <= x) k++;
          total += areaExact[k]!;
        }
      }
    }
    if (this.detExactMu > 0 && this.aliasArea.length > 0) {
      const n = rng.poisson(this.detExactMu);
      for (let j = 0; j < n; j++) total += this.aliasArea[aliasPick(rng, this.alias)]!;
    }
    return total / this.ab;
  }
}

/**
 * The draws of one scenario. Every random-particle quantity a draw needs is linear in the bin
 * densities λ_k = Σ_s f_s·D_sk (sources s: the sum of everything without uncertainty, with f = 1,
 * and one group per uncertain factor — the waits' deposition factor, each tool's adder factor) plus
 * the drawn tails. So for each small-gap grid point a draw lands on, the per-source sums
 *   V_s = Σ_k D_sk·A_b·f_k (reportable voids),  M_s = Σ_k D_sk·A_crit,k (die-kill mean of a die
 *   wholly on the wafer; an edge die takes its share of it, DieClasses),
 *   BM_s = Σ D_sk·A_b·a_k over 'normal' and 'mean' entries, BV_s = Σ D_sk·A_b·a_k² over 'normal' ones
 * are made once; a draw then combines them with its factors, adds its tails bin by bin, and keeps
 * per-bin densities only for the 'exact' entries (the bins holding few discs).
 */
export function simulate(args: {
  contributions: Contribution[];
  evaluation: Evaluation;
  physics: VoidPhysics;
  grid: GridPhysics;
  config: AssessConfig;
  clusterAlpha: number;
  /** Sub-seed so that scenarios of one pair draw independent streams (deterministic). */
  stream: number;
}): DrawSet {
  const { contributions, evaluation: ev, physics, grid, config: cfg } = args;
  const rng = createRng((cfg.seed * 1009 + args.stream) % Number.MAX_SAFE_INTEGER);
  const nDraws = cfg.draws;
  const ab = physics.bondedAreaM2;
  const sigDep = Math.log(Math.max(cfg.depositionUncertaintyFactor, 1)) / Z975;
  const sigGap = Math.log(Math.max(cfg.smallGapUncertaintyFactor, 1)) / Z975;
  const gridN = grid.radii.length;
  const B = SPECTRUM_BIN_COUNT;

  // Fixed densities (per m², per bin) summed per factor group: waits (deposition factor), each tool
  // (its adder factor), everything else (incoming: no factor). Tails are drawn separately.
  const groupKeys: string[] = ['wait', 'fixed'];
  const groupSigma: number[] = [sigDep, 0];
  const groupDens: Float64Array[] = [new Float64Array(B), new Float64Array(B)];
  const tails: {
    v: Extract<Contribution['variation'], { type: 'tail' }>;
    /** Survival of the later cleans over the area basis, per bin (tail count → density). */
    weight: Float64Array;
    shape: TailShape;
  }[] = [];
  // Voids no scanned particle explains (at most one such source per pair; evaluate.ts).
  let unexplained: Extract<Contribution['variation'], { type: 'unexplained' }> | null = null;
  contributions.forEach((c, i) => {
    const v = c.variation;
    if (c.detected) return;
    if (v.type === 'unexplained') {
      unexplained = v;
      return;
    }
    if (v.type === 'tail') {
      const weight = new Float64Array(B);
      for (let k = 0; k < B; k++) weight[k] = c.survivalBins[k]! / c.areaBasisM2;
      tails.push({ v, weight, shape: tailShape(v.thresholdM, v.floorM) });
      return;
    }
    let g = v.type === 'wait' ? 0 : v.type === 'tool' ? groupKeys.indexOf(`tool:${v.toolKey}`) : 1;
    if (g < 0) {
      g = groupKeys.length;
      groupKeys.push(`tool:${(v as { toolKey: string }).toolKey}`);
      groupSigma.push(Math.log(Math.max((v as { uncertaintyFactor: number }).uncertaintyFactor, 1)) / Z975);
      groupDens.push(new Float64Array(B));
    }
    const s = ev.perContribution[i]!.spectrum;
    const d = groupDens[g]!;
    for (let k = 0; k < B; k++) d[k]! += s[k]! / c.areaBasisM2;
  });
  const nGroups = groupKeys.length;
  // Sources: 0 = every group without uncertainty (factor 1 in every draw), then the uncertain groups.
  const sourceDens: Float64Array[] = [new Float64Array(B)];
  const sourceGroup: number[] = [-1];
  for (let g = 0; g < nGroups; g++) {
    if (groupSigma[g]! > 0) {
      sourceDens.push(groupDens[g]!);
      sourceGroup.push(g);
    } else for (let k = 0; k < B; k++) sourceDens[0]![k]! += groupDens[g]![k]!;
  }
  const nSources = sourceDens.length;

  // Each bin's class from its nominal count and disc area (the evaluation's densities, the
  // nominal small-gap point); the detected entries are classified against the same total.
  const mid = (gridN - 1) >> 1;
  const nominalArea = (k: number) => Math.PI * grid.radii[mid]![k]! ** 2;
  let total = 0;
  for (let k = 0; k < B; k++) {
    total += ev.lambdaBins[k]! * ab * nominalArea(k);
    total += ev.detectedCountBins[k]! * ev.detectedAreaPerParticleBins[k]!;
  }
  // The unexplained voids are one more entry of the area sum: an expected count (the fitted rate, or
  // for a rate of 0 the mean of its draws) of discs of one area; classified like the bins.
  const ux = unexplained as Extract<Contribution['variation'], { type: 'unexplained' }> | null;
  const uxNominal = ux ? (ux.ratePerPair > 0 ? ux.ratePerPair : ux.rateHigh / GARWOOD_UPPER_ZERO_95) : 0;
  if (ux) total += uxNominal * ux.areaM2;
  const binClass: EntryClass[] = [];
  const exactIndex = new Int32Array(B).fill(-1);
  const exactBins: number[] = [];
  for (let k = 0; k < B; k++) {
    const c = entryClass(ev.lambdaBins[k]! * ab, nominalArea(k), total);
    binClass.push(c);
    if (c === 'exact') {
      exactIndex[k] = exactBins.length;
      exactBins.push(k);
    }
  }
  const nExact = exactBins.length;
  const uxClass: EntryClass = ux ? entryClass(uxNominal, ux.areaM2, total) : 'none';
  // An exact unexplained entry is the last one, after the bins' (index nExact).
  const nExactAll = nExact + (uxClass === 'exact' ? 1 : 0);
  const uxAcrit = ux && ev.dieCount > 0 ? physics.criticalArea(ux.radiusM) : 0;
  // Per source, its density in the exact bins (× A_b: expected discs per pair): row s holds source
  // s's density in every exact bin. Only the sources with a density in some exact bin are kept
  // (`exactSources`): a draw sums f_s·D_se over s in ascending order, and a source whose D_se are
  // all zero would add +0 to a sum of non-negative terms, which changes no bit of it.
  const exactDens = new Float64Array(nSources * nExact);
  const exactSources: number[] = [];
  sourceDens.forEach((d, si) => {
    let any = false;
    for (let e = 0; e < nExact; e++) {
      const x = d[exactBins[e]!]! * ab;
      exactDens[si * nExact + e] = x;
      if (x !== 0) any = true;
    }
    if (any) exactSources.push(si);
  });
  const exponent = new ExponentSampler(
    ev.detectedCountBins,
    ev.detectedAreaPerParticleBins,
    total,
    ab,
    nExactAll,
  );

  // Per small-gap grid point (made when a draw first lands there): V, M, BM, BV per source.
  const sums: (Float64Array | null)[] = new Array(gridN).fill(null);
  const sumsAt = (gi: number): Float64Array => {
    const hit = sums[gi];
    if (hit) return hit;
    const r = grid.radii[gi]!;
    const frac = grid.frac[gi]!;
    const acrit = grid.acrit[gi]!;
    const out = new Float64Array(4 * nSources);
    for (let s = 0; s < nSources; s++) {
      const d = sourceDens[s]!;
      let v = 0;
      let m = 0;
      let bm = 0;
      let bv = 0;
      for (let k = 0; k < B; k++) {
        const x = d[k]!;
        if (x === 0) continue;
        v += x * ab * frac[k]!;
        m += x * acrit[k]!;
        const c = binClass[k]!;
        if (c === 'normal' || c === 'mean' || c === 'none') {
          const a = Math.PI * r[k]! * r[k]!;
          bm += x * ab * a;
          if (c === 'normal') bv += x * ab * a * a;
        }
      }
      out[4 * s] = v;
      out[4 * s + 1] = m;
      out[4 * s + 2] = bm;
      out[4 * s + 3] = bv;
    }
    sums[gi] = out;
    return out;
  };

  const det = ev.detSurvivePerDie;
  const classes = det ? dieClasses(det, ev.randomMeanDie, ev.randomMeanPerDie) : null;
  const qScratch = new Float64Array(classes ? classes.share.length : 0);
  const voids = new Float64Array(nDraws);
  const unb = new Float64Array(nDraws);
  const kP = det ? new Float64Array(nDraws) : null;
  const kNB = det ? new Float64Array(nDraws) : null;
  const tailTmp = new Float64Array(B);
  const factor = new Float64Array(nSources);
  const muExact = new Float64Array(Math.max(nExactAll, 1));
  const exactAreas: (Float64Array | undefined)[] = new Array(gridN); // per grid point, disc areas of the exact bins
  const binAreas: (Float64Array | undefined)[] = new Array(gridN); // per grid point, π r_k² of every bin (tails)
  const alpha = args.clusterAlpha;

  // The per-draw normals of the group factors and the small-gap constant, drawn in one block.
  const zStride = nGroups + 1;
  const zs = rng.normals(new Float64Array(nDraws * zStride));
  // Two more normals per draw for the unexplained-void rate, only when there is one (so that the
  // streams of an assessment without it are what they were).
  const zu = ux ? rng.normals(new Float64Array(2 * nDraws)) : null;
  for (let t = 0; t < nDraws; t++) {
    const z0 = t * zStride;
    factor[0] = 1;
    for (let s = 1; s < nSources; s++) {
      const g = sourceGroup[s]!;
      factor[s] = Math.exp(groupSigma[g]! * zs[z0 + g]!);
    }
    const z = zs[z0 + nGroups]!;
    const gi = Math.min(gridN - 1, Math.max(0, Math.round(((sigGap > 0 ? z : 0) + 4) * ((gridN - 1) / 8))));
    const sv = sumsAt(gi);
    let meanVoids = ev.detectedVoids;
    let m = 0;
    let bigMean = 0;
    let bigVar = 0;
    for (let s = 0; s < nSources; s++) {
      const f = factor[s]!;
      meanVoids += f * sv[4 * s]!;
      m += f * sv[4 * s + 1]!;
      bigMean += f * sv[4 * s + 2]!;
      bigVar += f * sv[4 * s + 3]!;
    }
    const radii = grid.radii[gi]!;
    // μ_e = Σ_s f_s·D_se, accumulated source by source (the same additions, in the same order, for
    // every bin as a per-bin loop over the sources)
    muExact.fill(0, 0, nExact);
    for (const s of exactSources) {
      const f = factor[s]!;
      for (let e = 0, o = s * nExact; e < nExact; e++, o++) muExact[e]! += f * exactDens[o]!;
    }
    let areaExact = exactAreas[gi];
    if (!areaExact) {
      areaExact = new Float64Array(Math.max(nExactAll, 1));
      for (let e = 0; e < nExact; e++) {
        const r = radii[exactBins[e]!]!;
        areaExact[e] = Math.PI * r * r;
      }
      if (ux && uxClass === 'exact') areaExact[nExact] = ux.areaM2;
      exactAreas[gi] = areaExact;
    }
    if (ux && zu) {
      // The void area and the critical area of these voids do not depend on the small-gap constant.
      const rt = drawUnexplainedRate(ux.ratePerPair, ux.rateLow, ux.rateHigh, zu[2 * t]!, zu[2 * t + 1]!);
      meanVoids += rt;
      m += (rt / ab) * uxAcrit;
      if (uxClass === 'exact') muExact[nExact] = rt;
      else if (uxClass !== 'none') {
        bigMean += rt * ux.areaM2;
        if (uxClass === 'normal') bigVar += rt * ux.areaM2 * ux.areaM2;
      }
    }
    if (tails.length > 0) {
      const frac = grid.frac[gi]!;
      const acrit = grid.acrit[gi]!;
      let areas = binAreas[gi];
      if (!areas) {
        areas = new Float64Array(B);
        for (let k = 0; k < B; k++) areas[k] = Math.PI * radii[k]! * radii[k]!;
        binAreas[gi] = areas;
      }
      for (const tl of tails) {
        const a = tl.v.fixedAlpha ?? rng.gamma(tl.v.n, 1 / tl.v.sumLog);
        tailBinsOf(tl.shape, tl.v.n, a, tailTmp);
        const k1 = tl.shape.k0 + tl.shape.lnRatio.length - 1;
        for (let k = tl.shape.k0; k < k1; k++) {
          const x = tailTmp[k]! * tl.weight[k]!; // density, per m²
          meanVoids += x * ab * frac[k]!;
          m += x * acrit[k]!;
          const c = binClass[k]!;
          if (c === 'exact') muExact[exactIndex[k]!]! += x * ab;
          else {
            const ar = areas[k]!;
            bigMean += x * ab * ar;
            if (c === 'normal') bigVar += x * ab * ar * ar;
          }
        }
      }
    }
    voids[t] = rng.poisson(meanVoids);
    unb[t] = -Math.expm1(-exponent.draw(rng, bigMean, bigVar, muExact, areaExact, nExactAll));
    if (classes && kP && kNB) {
      const g = alpha > 0 ? rng.gamma(alpha, 1 / alpha) : 1;
      kP[t] = drawKills(rng, m, classes, qScratch);
      kNB[t] = drawKills(rng, m * g, classes, qScratch);
    }
  }
  return { voids, unbondedFraction: unb, killsPoisson: kP, killsNB: kNB };
}

/** Sorted copy. */
export function sorted(a: Float64Array): Float64Array {
  return a.slice().sort();
}

/**
 * simple-statistics' quantileSorted reads only `length` and indexed elements, so it takes the sorted
 * draws as they are (a copy into a plain array would cost an iterator step per draw).
 */
function quantileOf(sortedDraws: Float64Array, p: number): number {
  return quantileSorted(sortedDraws as unknown as number[], p);
}

/** Two-sided interval [q((1−c)/2), q((1+c)/2)] around an analytic value. */
export function estimateFrom(value: number, sortedDraws: Float64Array, confidence: number): Estimate {
  return {
    value,
    low: Math.min(value, quantileOf(sortedDraws, (1 - confidence) / 2)),
    high: Math.max(value, quantileOf(sortedDraws, (1 + confidence) / 2)),
    confidence,
  };
}

/** One-sided bound: the upper c-quantile (upper = true) or the lower (1 − c)-quantile. */
export function boundFrom(sortedDraws: Float64Array, confidence: number, upper: boolean): number {
  return quantileOf(sortedDraws, upper ? confidence : 1 - confidence);
}
