/**
 * From the particles at the interface to the pair's figures (analytic expectations), per
 * contribution, per size bin and per die.
 *
 * Random (position-unknown) particles of contribution c, bin k: N_ck per wafer spread over the
 * contribution's area basis A_c, density λ_ck = N_ck / A_c (per m²). With void radius R_k:
 *   reportable voids          V = Σ λ_ck · A_b · f_k                   (f_k: part of bin k whose void is reportable)
 *   unbonded fraction         U = 1 − exp(−E),   E = Σ λ_ck π R_k²    (Boolean model of discs)
 *   die kill mean per die     m = Σ λ_ck · A_c(R_k)                    (critical area of the pad/die rectangle)
 * Detected particles j at (x_j, y_j) with survival s_j and radius R(d_j) (models.md §5 form
 * "Σ s·[disc hits die]"): their voids Σ s_j [2R_j ≥ D_min]; their Boolean exponent Σ s_j π R_j² / A_b;
 * per die the probability that none of them is there: Π_j (1 − s_j [disc j hits die]).
 * A die is killed unless no detected particle hits it and no random one does:
 *   Poisson   P_kill = 1 − (1 − P_det) · e^(−m)
 *   NB        P_kill = 1 − (1 − P_det) · (1 + m/α)^(−α)          (Stapper's cluster parameter α)
 * Voids no scanned particle explains (an adopted parameter set's rate u per pair, each of area a and
 * equivalent radius r = √(a/π), uniform over the bonded area A_b): V += u, E += u·a/A_b,
 * m += (u/A_b)·A_c(r) — the same Boolean-model and critical-area terms as a size bin of random
 * particles whose voids have that area.
 * Every linear term (V, E, m, Σ s·hits) is a sum over contributions, so shares are exact.
 */
import { SPECTRUM_BIN_COUNT, SPECTRUM_EDGES_M } from '../model/spectrum.ts';
import type { DieGridIndex } from './geometry.ts';
import { type Contribution, interfaceSpectrum } from './propagate.ts';

/** Per-product void and yield helpers (physics.ts builds them from the model library). */
export interface VoidPhysics {
  /** Void radius at each bin centre, m, for a small-gap factor (1: nominal). */
  binRadii(smallGapFactor: number): Float64Array;
  /** Particle diameter whose void diameter equals the reportable size, m, for a small-gap factor. */
  reportableParticleM(smallGapFactor: number): number;
  /** Critical area of the pad/die rectangle for a disc of radius R, m² (0 without dies). */
  criticalArea(radiusM: number): number;
  /** Poisson and negative-binomial die yield for a defect mean λA (dies). */
  poissonYield(meanKills: number): number;
  negativeBinomialYield(meanKills: number, alpha: number): number;
  /** Bonded area inside the edge exclusion, m². */
  bondedAreaM2: number;
  smallestReportableVoidM: number;
}

/** Fraction of each bin at or above diameter dStar (uniform in log d within a bin). */
export function fractionAbove(dStar: number): Float64Array {
  const f = new Float64Array(SPECTRUM_BIN_COUNT);
  for (let i = 0; i < SPECTRUM_BIN_COUNT; i++) {
    const lo = SPECTRUM_EDGES_M[i]!;
    const hi = SPECTRUM_EDGES_M[i + 1]!;
    f[i] = dStar <= lo ? 1 : dStar >= hi ? 0 : Math.log(hi / dStar) / Math.log(hi / lo);
  }
  return f;
}

/** Detected particles of both wafers in the bond frame, flattened, with their source index. */
export interface DetectedFlat {
  xM: Float64Array;
  yM: Float64Array;
  rM: Float64Array;
  survival: Float64Array;
  /** Index into the contributions array. */
  source: Uint16Array;
  /**
   * Per contribution, where its particles start in these arrays (−1: none), so that particle j is
   * particle j − sourceStart[source[j]] of its contribution (its diameter, say).
   */
  sourceStart: Int32Array;
  /** Spectrum bin of each particle. */
  bin: Uint8Array;
  /**
   * Dies each particle's disc reaches, compressed rows (hitDie[hitStart[j] … hitStart[j+1]−1]); null
   * without a die grid. Positions and radii do not change between scenarios, so this is built once.
   */
  hitStart: Int32Array | null;
  hitDie: Int32Array | null;
}

export interface ContributionFigures {
  particles: number;
  voids: number;
  /** Boolean exponent share E_c (dimensionless); unbonded area linearised = E_c · A_b. */
  exponent: number;
  dieEvents: number;
  /** Interface spectrum (count per bin per wafer). */
  spectrum: Float64Array;
}

export interface Evaluation {
  perContribution: ContributionFigures[];
  /** Random part: density per bin summed over contributions, per m². */
  lambdaBins: Float64Array;
  /** Detected part per bin (particle size bin): expected surviving count and mean π R² per surviving particle. */
  detectedCountBins: Float64Array;
  detectedAreaPerParticleBins: Float64Array;
  /** Per-bin metrics summed over every source (for the size-band Pareto). */
  voidsBins: Float64Array;
  exponentBins: Float64Array;
  eventsBins: Float64Array;
  detectedVoids: number;
  voids: number;
  exponent: number;
  /** Random die-kill mean per die. */
  randomMeanPerDie: number;
  /** Per die: probability that no detected particle kills it, and the expected detected hits. */
  detSurvivePerDie: Float64Array | null;
  detEventsPerDie: Float64Array | null;
  dieCount: number;
  dieKillsPoisson: number | null;
  dieKillsNB: number | null;
  particles: number;
}

/**
 * Analytic figures. `contributions` are both wafers' (their detected particles already in the bond
 * frame via `detected`). `radiiNominal` = physics.binRadii(config.smallGapFactor).
 */
export function evaluate(
  contributions: Contribution[],
  detected: DetectedFlat,
  physics: VoidPhysics,
  radiiNominal: Float64Array,
  reportableParticleM: number,
  grid: DieGridIndex | null,
  clusterAlpha: number,
  /**
   * false: only what the figures and the Monte Carlo need — the detected particles' shares per
   * source, per size bin and per die (for attribution, Paretos and maps) are left at 0 (a
   * modelled re-clean, whose figures are shown but not attributed).
   */
  attribution = true,
): Evaluation {
  const frac = fractionAbove(reportableParticleM);
  const ab = physics.bondedAreaM2;
  const acrit = new Float64Array(SPECTRUM_BIN_COUNT);
  if (grid) for (let k = 0; k < SPECTRUM_BIN_COUNT; k++) acrit[k] = physics.criticalArea(radiiNominal[k]!);
  const lambdaBins = new Float64Array(SPECTRUM_BIN_COUNT);
  const voidsBins = new Float64Array(SPECTRUM_BIN_COUNT);
  const exponentBins = new Float64Array(SPECTRUM_BIN_COUNT);
  const eventsBins = new Float64Array(SPECTRUM_BIN_COUNT);
  const nDies = grid ? grid.count : 0;
  /** Die-kill mean per die of the sources without a size spectrum (unexplained voids). */
  let uniformMeanPerDie = 0;
  const per: ContributionFigures[] = contributions.map((c) => {
    const spectrum = interfaceSpectrum(c);
    let particles = 0;
    for (let k = 0; k < SPECTRUM_BIN_COUNT; k++) particles += spectrum[k]!;
    const fig: ContributionFigures = { particles, voids: 0, exponent: 0, dieEvents: 0, spectrum };
    if (c.detected) return fig; // counted particle by particle below
    if (c.variation.type === 'unexplained') {
      // Voids with no particle behind them: u per pair over the bonded area, each of area a.
      const u = c.variation;
      const lam = u.ratePerPair / ab;
      const ac = grid ? physics.criticalArea(u.radiusM) : 0;
      fig.voids = u.ratePerPair;
      fig.exponent = lam * u.areaM2;
      fig.dieEvents = lam * ac * nDies;
      uniformMeanPerDie += lam * ac;
      return fig;
    }
    for (let k = 0; k < SPECTRUM_BIN_COUNT; k++) {
      const lam = spectrum[k]! / c.areaBasisM2;
      if (lam === 0) continue;
      const r = radiiNominal[k]!;
      lambdaBins[k]! += lam;
      const v = lam * ab * frac[k]!;
      const e = lam * Math.PI * r * r;
      const ev = lam * acrit[k]! * nDies;
      fig.voids += v;
      fig.exponent += e;
      fig.dieEvents += ev;
      voidsBins[k]! += v;
      exponentBins[k]! += e;
      eventsBins[k]! += ev;
    }
    return fig;
  });

  // Detected particles at their positions.
  const detectedCountBins = new Float64Array(SPECTRUM_BIN_COUNT);
  const detAreaSum = new Float64Array(SPECTRUM_BIN_COUNT);
  const detSurvivePerDie = grid ? new Float64Array(nDies).fill(1) : null;
  const detEventsPerDie = grid ? new Float64Array(nDies) : null;
  const dMinR = physics.smallestReportableVoidM / 2;
  const invAb = 1 / ab;
  // Per-source sums kept in arrays inside the loop, added to the contributions' figures after it.
  const nSources = per.length;
  const srcExponent = new Float64Array(nSources);
  const srcVoids = new Float64Array(nSources);
  const srcEvents = new Float64Array(nSources);
  const { survival, rM, source, bin: binOfParticle, hitStart, hitDie } = detected;
  const withDies =
    detSurvivePerDie !== null && detEventsPerDie !== null && hitStart !== null && hitDie !== null;
  let detectedVoids = 0;
  let detectedExponent = 0;
  for (let j = 0; j < survival.length; j++) {
    const s = survival[j]!;
    if (s <= 0) continue;
    const r = rM[j]!;
    const bin = binOfParticle[j]!;
    detectedCountBins[bin]! += s;
    const sa = s * Math.PI * r * r;
    detAreaSum[bin]! += sa;
    const e = sa * invAb;
    detectedExponent += e;
    const reportable = r >= dMinR;
    if (reportable) detectedVoids += s;
    const h0 = withDies ? hitStart[j]! : 0;
    const h1 = withDies ? hitStart[j + 1]! : 0;
    const keep = 1 - s;
    for (let h = h0; h < h1; h++) detSurvivePerDie![hitDie![h]!]! *= keep;
    if (!attribution) continue;
    const src = source[j]!;
    srcExponent[src]! += e;
    exponentBins[bin]! += e;
    if (reportable) {
      srcVoids[src]! += s;
      voidsBins[bin]! += s;
    }
    if (withDies) {
      for (let h = h0; h < h1; h++) detEventsPerDie![hitDie![h]!]! += s;
      const ev = s * (h1 - h0);
      srcEvents[src]! += ev;
      eventsBins[bin]! += ev;
    }
  }
  for (let c = 0; c < nSources; c++) {
    const fig = per[c]!;
    fig.exponent += srcExponent[c]!;
    fig.voids += srcVoids[c]!;
    fig.dieEvents += srcEvents[c]!;
  }
  const detectedAreaPerParticleBins = new Float64Array(SPECTRUM_BIN_COUNT);
  for (let k = 0; k < SPECTRUM_BIN_COUNT; k++)
    detectedAreaPerParticleBins[k] = detectedCountBins[k]! > 0 ? detAreaSum[k]! / detectedCountBins[k]! : 0;

  let voids = 0;
  let exponent = 0;
  let particles = 0;
  // the random contributions' figures, then the detected particles' (their per-source shares, when
  // kept, are in the figures too, so they are not summed from there)
  for (let c = 0; c < per.length; c++) {
    const f = per[c]!;
    particles += f.particles;
    if (contributions[c]!.detected) continue;
    voids += f.voids;
    exponent += f.exponent;
  }
  voids += detectedVoids;
  exponent += detectedExponent;
  let randomMeanPerDie = uniformMeanPerDie;
  for (let k = 0; k < SPECTRUM_BIN_COUNT; k++) randomMeanPerDie += lambdaBins[k]! * acrit[k]!;
  let dieKillsPoisson: number | null = null;
  let dieKillsNB: number | null = null;
  if (grid && detSurvivePerDie) {
    const yP = physics.poissonYield(randomMeanPerDie);
    const yNB = physics.negativeBinomialYield(randomMeanPerDie, clusterAlpha);
    dieKillsPoisson = 0;
    dieKillsNB = 0;
    for (let d = 0; d < nDies; d++) {
      dieKillsPoisson += 1 - detSurvivePerDie[d]! * yP;
      dieKillsNB += 1 - detSurvivePerDie[d]! * yNB;
    }
  }
  return {
    perContribution: per,
    lambdaBins,
    detectedCountBins,
    detectedAreaPerParticleBins,
    voidsBins,
    exponentBins,
    eventsBins,
    detectedVoids,
    voids,
    exponent,
    randomMeanPerDie,
    detSurvivePerDie,
    detEventsPerDie,
    dieCount: nDies,
    dieKillsPoisson,
    dieKillsNB,
    particles,
  };
}
