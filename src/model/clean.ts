/**
 * Particle removal by a clean, as a smooth curve over particle size, and its fit to
 * before/after scans.
 *
 * Particle removal efficiency PRE(d) = 1 − (after / before) for matched particles. Cleans remove
 * large particles well and small ones poorly: for latex spheres removal exceeds 97 % at ≥ 0.3 µm
 * and falls at smaller sizes (Rooney, Pui & Grant 1990). The shape of the fall is not prescribed
 * by any standard; voidcast's choice is a logistic curve in log d (docs/models.md):
 *
 *   PRE(d) = E_max / (1 + (d50/d)^k)  =  E_max · σ(k · ln(d/d50)),   σ(u) = 1/(1 + e^(−u)),
 *
 * E_max the efficiency reached by large particles (0–1), d50 the size at which PRE = E_max/2 (m),
 * k the steepness: PRE goes from 10 % to 90 % of E_max over a factor 9^(2/k) in diameter
 * (2·log10(9)/k decades; k = 2 → 1.9 decades).
 */
import { ModelInputError, requireNumber } from './errors.ts';
import { chiSquareSurvival } from './stats/chi-square.ts';
import { invertSymmetricMatrix } from './stats/linalg.ts';

export interface RemovalCurveParams {
  /** d50, the size at which removal is half of maxEfficiency, m. 10⁻¹⁰ ≤ d50 ≤ 10⁻². */
  d50M: number;
  /** E_max, the removal efficiency of large particles, 0 ≤ E_max ≤ 1. */
  maxEfficiency: number;
  /** k, steepness of the logistic in ln d, 0 < k ≤ 50. */
  steepness: number;
}

/**
 * Demo defaults for a pre-bond clean (invented for demos, consistent with common practice [M]:
 * ≈ 99 % at 300 nm, 60–80 % at 30–50 nm; > 97 % at ≥ 0.3 µm as Rooney, Pui & Grant 1990 report
 * for latex spheres). PRE(300 nm) = 0.990, PRE(50 nm) = 0.800, PRE(30 nm) = 0.603.
 */
export const DEMO_PREBOND_CLEAN: RemovalCurveParams = { d50M: 24e-9, maxEfficiency: 0.998, steepness: 1.9 };

function requireParams(fn: string, p: RemovalCurveParams): void {
  if (typeof p !== 'object' || p === null)
    throw new ModelInputError(fn, 'params', '', 'an object { d50M, maxEfficiency, steepness }', p);
  requireNumber(fn, 'params.d50M', p.d50M, 'm', { min: 1e-10, max: 1e-2 });
  requireNumber(fn, 'params.maxEfficiency', p.maxEfficiency, '', { min: 0, max: 1 });
  requireNumber(fn, 'params.steepness', p.steepness, '', { min: 0, minExclusive: true, max: 50 });
}

/** σ(k ln(d/d50)) without overflow. */
function logistic(dM: number, d50M: number, k: number): number {
  const u = k * Math.log(dM / d50M);
  if (u >= 0) return 1 / (1 + Math.exp(-u));
  const e = Math.exp(u);
  return e / (1 + e);
}

/**
 * Particle removal efficiency of a clean at diameter d: PRE(d) = E_max / (1 + (d50/d)^k).
 *
 * @param diameterM d, m, 0 < d ≤ 0.01
 * @param params { d50M, maxEfficiency, steepness } (see RemovalCurveParams for ranges)
 * @returns PRE in [0, E_max]
 * @throws ModelInputError for a bad diameter or parameter
 * @example removalEfficiency(300e-9, DEMO_PREBOND_CLEAN) // 0.990
 */
export function removalEfficiency(diameterM: number, params: RemovalCurveParams): number {
  const d = requireNumber('removalEfficiency', 'diameterM', diameterM, 'm', {
    min: 0,
    minExclusive: true,
    max: 0.01,
  });
  requireParams('removalEfficiency', params);
  return params.maxEfficiency * logistic(d, params.d50M, params.steepness);
}

/**
 * Fraction of particles of diameter d that survive the clean: 1 − PRE(d).
 *
 * @param diameterM d, m, 0 < d ≤ 0.01
 * @param params { d50M, maxEfficiency, steepness }
 * @returns survival in [1 − E_max, 1]
 * @throws ModelInputError for a bad diameter or parameter
 * @example cleanSurvival(30e-9, DEMO_PREBOND_CLEAN) // 0.397
 */
export function cleanSurvival(diameterM: number, params: RemovalCurveParams): number {
  const d = requireNumber('cleanSurvival', 'diameterM', diameterM, 'm', {
    min: 0,
    minExclusive: true,
    max: 0.01,
  });
  requireParams('cleanSurvival', params);
  return 1 - params.maxEfficiency * logistic(d, params.d50M, params.steepness);
}

/** One size band of a before/after scan comparison (counts of matched particles, or totals). */
export interface RemovalBand {
  /** Band edges, m (lowerM < upperM). */
  lowerM: number;
  upperM: number;
  /** Particles in the band before the clean (≥ 0; may be a mean over wafers, need not be an integer). */
  before: number;
  /** Particles in the band after the clean (≥ 0). */
  after: number;
}

export type RemovalFitFlagCode = 'adders' | 'empty-band' | 'parameter-at-bound';

export interface RemovalFitFlag {
  code: RemovalFitFlagCode;
  /** Index of the band concerned, or null for a flag on the whole fit. */
  band: number | null;
  detail: string;
}

export interface RemovalBandResult extends RemovalBand {
  /** Whether the band entered the likelihood (not empty, no net adders). */
  used: boolean;
  /** 1 − after/before, or null when before = 0. Negative when the band gained particles. */
  observedEfficiency: number | null;
  /** Band-averaged fitted PRE. */
  fittedEfficiency: number;
  /** (after − before·ŝ) / √(before·ŝ(1 − ŝ)), or null for an unused band or ŝ ∈ {0, 1}. */
  pearsonResidual: number | null;
}

export interface RemovalCurveFit {
  params: RemovalCurveParams;
  /**
   * Approximate standard errors from the observed information (numerical Hessian of the
   * log-likelihood; delta method for d50 and k, which are fitted in logarithms). null where the
   * information matrix is singular; maxEfficiency is null when the fit sits at E_max = 1.
   */
  standardErrors: { d50M: number; maxEfficiency: number | null; steepness: number } | null;
  logLikelihood: number;
  /** Binomial deviance G² against the saturated model (one survival per used band). */
  deviance: number;
  /** Used bands − 3 fitted parameters. */
  degreesOfFreedom: number;
  /** P(χ²(dof) ≥ G²); null when dof < 1. Small values mean the logistic form does not fit. */
  pValue: number | null;
  bands: RemovalBandResult[];
  flags: RemovalFitFlag[];
  method: 'binomial maximum likelihood, band-averaged over log d';
}

// 5-point Gauss–Legendre nodes and weights on [−1, 1] (Abramowitz & Stegun 1964, Table 25.4).
const GL_X = [0, -0.5384693101056831, 0.5384693101056831, -0.906179845938664, 0.906179845938664];
const GL_W = [
  0.5688888888888889, 0.4786286704993665, 0.4786286704993665, 0.2369268850561891, 0.2369268850561891,
];

/** Band mean of σ(k ln(d/d50)) for sizes uniform in ln d over [lo, hi]. */
function bandLogistic(lo: number, hi: number, d50: number, k: number): number {
  const a = Math.log(lo);
  const b = Math.log(hi);
  let s = 0;
  for (let i = 0; i < 5; i++)
    s += GL_W[i]! * logistic(Math.exp(0.5 * (a + b) + 0.5 * (b - a) * GL_X[i]!), d50, k);
  return s / 2;
}

/** x ln y with the convention 0 · ln 0 = 0. */
function xlny(x: number, y: number): number {
  if (x === 0) return 0;
  return x * Math.log(Math.max(y, Number.MIN_VALUE));
}

interface UsedBand {
  lo: number;
  hi: number;
  n: number;
  a: number;
}

/** Log-likelihood Σ a ln s + (n − a) ln(1 − s), s = 1 − E·ḡ. */
function logLik(bands: UsedBand[], g: number[], e: number): number {
  let l = 0;
  bands.forEach((b, i) => {
    const removed = e * g[i]!;
    l += xlny(b.a, 1 - removed) + xlny(b.n - b.a, removed);
  });
  return l;
}

/** Maximum over E ∈ [0, 1] of the (concave) log-likelihood for fixed band means ḡ. */
function profileE(bands: UsedBand[], g: number[]): number {
  const dl = (e: number) => {
    let s = 0;
    bands.forEach((b, i) => {
      const gi = g[i]!;
      if (b.a > 0) s -= (b.a * gi) / Math.max(1 - e * gi, Number.MIN_VALUE);
      if (b.n - b.a > 0) s += (b.n - b.a) / e;
    });
    return s;
  };
  // No removal anywhere: the likelihood falls with E from E = 0.
  if (bands.every((b) => b.n === b.a)) return 0;
  const top = 1 - 1e-15;
  if (dl(top) >= 0) return 1;
  let lo = 0;
  let hi = top;
  for (let i = 0; i < 200 && hi - lo > 1e-16; i++) {
    const mid = 0.5 * (lo + hi);
    if (dl(mid) > 0) lo = mid;
    else hi = mid;
  }
  return 0.5 * (lo + hi);
}

/** Nelder–Mead minimisation in 2-D (Nelder & Mead, Comput. J. 7 (1965) 308; standard coefficients). */
function nelderMead2(
  f: (x: [number, number]) => number,
  start: [number, number],
  step: [number, number],
): [number, number] {
  let simplex: { x: [number, number]; v: number }[] = [
    start,
    [start[0] + step[0], start[1]] as [number, number],
    [start[0], start[1] + step[1]] as [number, number],
  ].map((x) => ({ x, v: f(x) }));
  for (let iter = 0; iter < 2000; iter++) {
    simplex.sort((p, q) => p.v - q.v);
    const [best, mid, worst] = simplex as [(typeof simplex)[0], (typeof simplex)[0], (typeof simplex)[0]];
    if (Math.abs(worst.v - best.v) <= 1e-12 * (Math.abs(best.v) + 1e-12)) {
      const spread = Math.max(Math.abs(worst.x[0] - best.x[0]), Math.abs(worst.x[1] - best.x[1]));
      if (spread < 1e-9) break;
    }
    const c: [number, number] = [(best.x[0] + mid.x[0]) / 2, (best.x[1] + mid.x[1]) / 2];
    const at = (t: number): [number, number] => [
      c[0] + t * (worst.x[0] - c[0]),
      c[1] + t * (worst.x[1] - c[1]),
    ];
    const r = at(-1);
    const vr = f(r);
    if (vr < best.v) {
      const e = at(-2);
      const ve = f(e);
      simplex = [best, mid, ve < vr ? { x: e, v: ve } : { x: r, v: vr }];
    } else if (vr < mid.v) {
      simplex = [best, mid, { x: r, v: vr }];
    } else {
      const k = vr < worst.v ? at(-0.5) : at(0.5);
      const vk = f(k);
      if (vk < Math.min(vr, worst.v)) simplex = [best, mid, { x: k, v: vk }];
      else {
        const shrink = (p: [number, number]): [number, number] => [
          (p[0] + best.x[0]) / 2,
          (p[1] + best.x[1]) / 2,
        ];
        simplex = [
          best,
          { x: shrink(mid.x), v: f(shrink(mid.x)) },
          { x: shrink(worst.x), v: f(shrink(worst.x)) },
        ];
      }
    }
  }
  simplex.sort((p, q) => p.v - q.v);
  return simplex[0]!.x;
}

const K_MIN = 0.1;
const K_MAX = 20;

/**
 * Fits the removal-efficiency curve PRE(d) = E_max / (1 + (d50/d)^k) to before/after counts in
 * size bands.
 *
 * Method: binomial maximum likelihood. In each band the `after` particles are taken as the
 * survivors of the `before` particles, after ~ Binomial(before, s), with s = 1 − E_max·ḡ and ḡ
 * the band mean of the logistic for sizes uniform in ln d over the band (5-point Gauss–Legendre).
 * E_max is profiled out exactly (the likelihood is concave in it on [0, 1]); (ln d50, ln k) are
 * found by a grid search followed by Nelder–Mead. d50 is searched over [min lower / 100,
 * max upper × 100] and k over [0.1, 20]; a result on either bound is flagged
 * 'parameter-at-bound' (the data do not pin that parameter down).
 *
 * Honest handling of bad bands (flagged, never a crash):
 * - 'adders': after > before. The clean (or its handling) added more particles than it removed
 *   there; binomial survival cannot describe that, so the band is left out of the fit and listed
 *   with its negative observed efficiency.
 * - 'empty-band': before = 0 carries no information and is left out.
 *
 * Goodness of fit: binomial deviance G² with used bands − 3 degrees of freedom and its chi-square
 * p-value (null below 1 dof).
 *
 * @param bands size bands { lowerM, upperM (m, 0 < lower < upper ≤ 0.01), before, after (≥ 0) }
 * @returns parameters, standard errors, likelihood, deviance, p-value, per-band results, flags
 * @throws ModelInputError for malformed bands, or fewer than 3 usable bands (after the flagged
 *   ones are left out) — three parameters need at least three bands
 * @example fitRemovalCurve(bands).params // { d50M: …, maxEfficiency: …, steepness: … }
 */
export function fitRemovalCurve(bands: readonly RemovalBand[]): RemovalCurveFit {
  const fn = 'fitRemovalCurve';
  if (!Array.isArray(bands))
    throw new ModelInputError(fn, 'bands', '', 'an array of { lowerM, upperM, before, after }', bands);
  const flags: RemovalFitFlag[] = [];
  const used: UsedBand[] = [];
  const usedIndex: number[] = [];
  bands.forEach((b, i) => {
    if (typeof b !== 'object' || b === null) throw new ModelInputError(fn, `bands[${i}]`, '', 'an object', b);
    const lo = requireNumber(fn, `bands[${i}].lowerM`, b.lowerM, 'm', {
      min: 0,
      minExclusive: true,
      max: 0.01,
    });
    const hi = requireNumber(fn, `bands[${i}].upperM`, b.upperM, 'm', {
      min: lo,
      minExclusive: true,
      max: 0.01,
    });
    const n = requireNumber(fn, `bands[${i}].before`, b.before, 'count', { min: 0, max: 1e12 });
    const a = requireNumber(fn, `bands[${i}].after`, b.after, 'count', { min: 0, max: 1e12 });
    if (n === 0) {
      flags.push({
        code: 'empty-band',
        band: i,
        detail: `no particles before the clean in band ${i}: left out`,
      });
      return;
    }
    if (a > n) {
      flags.push({
        code: 'adders',
        band: i,
        detail: `band ${i}: ${a} after > ${n} before — net adders; left out of the fit (survival cannot exceed 1)`,
      });
      return;
    }
    used.push({ lo, hi, n, a });
    usedIndex.push(i);
  });
  if (used.length < 3)
    throw new ModelInputError(
      fn,
      'bands',
      '',
      'at least 3 bands with before > 0 and after ≤ before (3 parameters)',
      `${used.length} usable of ${bands.length}`,
    );

  const minLo = Math.min(...used.map((b) => b.lo));
  const maxHi = Math.max(...used.map((b) => b.hi));
  const lnDMin = Math.log(Math.max(minLo / 100, 1e-10));
  const lnDMax = Math.log(Math.min(maxHi * 100, 1e-2));
  const clampD = (x: number) => Math.min(Math.max(x, lnDMin), lnDMax);
  const clampK = (x: number) => Math.min(Math.max(x, Math.log(K_MIN)), Math.log(K_MAX));
  const gOf = (lnD: number, lnK: number) =>
    used.map((b) => bandLogistic(b.lo, b.hi, Math.exp(lnD), Math.exp(lnK)));
  const negProfile = ([x, y]: [number, number]): number => {
    const g = gOf(clampD(x), clampK(y));
    return -logLik(used, g, profileE(used, g));
  };

  // Grid search for a start (41 sizes × 9 steepnesses), then Nelder–Mead.
  let start: [number, number] = [0, 0];
  let bestV = Number.POSITIVE_INFINITY;
  for (let i = 0; i <= 40; i++) {
    const x = lnDMin + ((lnDMax - lnDMin) * i) / 40;
    for (const k of [0.25, 0.5, 1, 1.5, 2, 3, 4, 6, 10]) {
      const v = negProfile([x, Math.log(k)]);
      if (v < bestV) {
        bestV = v;
        start = [x, Math.log(k)];
      }
    }
  }
  const opt = nelderMead2(negProfile, start, [0.3, 0.3]);
  const lnD = clampD(opt[0]);
  const lnK = clampK(opt[1]);
  const g = gOf(lnD, lnK);
  const e = profileE(used, g);
  const params: RemovalCurveParams = { d50M: Math.exp(lnD), maxEfficiency: e, steepness: Math.exp(lnK) };
  const eps = 1e-6;
  if (lnD - lnDMin < eps || lnDMax - lnD < eps)
    flags.push({
      code: 'parameter-at-bound',
      band: null,
      detail: `d50 at its search bound (${params.d50M} m): not determined by the data`,
    });
  if (lnK - Math.log(K_MIN) < eps || Math.log(K_MAX) - lnK < eps)
    flags.push({
      code: 'parameter-at-bound',
      band: null,
      detail: `steepness at its search bound (${params.steepness}): not determined by the data`,
    });

  const ll = logLik(used, g, e);
  let deviance = 0;
  used.forEach((b, i) => {
    const s = 1 - e * g[i]!;
    const obsS = b.a / b.n;
    deviance += 2 * (xlny(b.a, obsS) - xlny(b.a, s) + xlny(b.n - b.a, 1 - obsS) - xlny(b.n - b.a, 1 - s));
  });
  deviance = Math.max(deviance, 0);
  const dof = used.length - 3;

  const bandResults: RemovalBandResult[] = bands.map((b, i) => {
    const j = usedIndex.indexOf(i);
    const gi = j >= 0 ? g[j]! : bandLogistic(b.lowerM, b.upperM, params.d50M, params.steepness);
    const s = 1 - e * gi;
    const v = b.before * s * (1 - s);
    return {
      lowerM: b.lowerM,
      upperM: b.upperM,
      before: b.before,
      after: b.after,
      used: j >= 0,
      observedEfficiency: b.before > 0 ? 1 - b.after / b.before : null,
      fittedEfficiency: e * gi,
      pearsonResidual: j >= 0 && v > 0 ? (b.after - b.before * s) / Math.sqrt(v) : null,
    };
  });

  return {
    params,
    standardErrors: standardErrors(used, lnD, e, lnK),
    logLikelihood: ll,
    deviance,
    degreesOfFreedom: dof,
    pValue: dof >= 1 ? chiSquareSurvival(deviance, dof) : null,
    bands: bandResults,
    flags,
    method: 'binomial maximum likelihood, band-averaged over log d',
  };
}

/** Standard errors from the inverse of the numerical observed information in (ln d50, E, ln k). */
function standardErrors(
  used: UsedBand[],
  lnD: number,
  e: number,
  lnK: number,
): RemovalCurveFit['standardErrors'] {
  const full = (x: number[]) =>
    logLik(
      used,
      used.map((b) => bandLogistic(b.lo, b.hi, Math.exp(x[0]!), Math.exp(x[x.length - 1]!))),
      x.length === 3 ? x[1]! : e,
    );
  const atTop = e > 1 - 1e-7;
  const x0 = atTop ? [lnD, lnK] : [lnD, e, lnK];
  const h = x0.map((_, i) => (!atTop && i === 1 ? Math.min(1e-5, (1 - e) / 4, e / 4) : 1e-4));
  const m = x0.length;
  const H: number[][] = Array.from({ length: m }, () => new Array<number>(m).fill(0));
  const f0 = full(x0);
  for (let i = 0; i < m; i++) {
    for (let j = i; j < m; j++) {
      const shift = (di: number, dj: number) => {
        const x = x0.slice();
        x[i]! += di * h[i]!;
        x[j]! += dj * h[j]!;
        return full(x);
      };
      const v =
        i === j
          ? (shift(1, 0) - 2 * f0 + shift(-1, 0)) / (h[i]! * h[i]!)
          : (shift(1, 1) - shift(1, -1) - shift(-1, 1) + shift(-1, -1)) / (4 * h[i]! * h[j]!);
      H[i]![j] = -v;
      H[j]![i] = -v;
    }
  }
  if (H.some((row) => row.some((v) => !Number.isFinite(v)))) return null;
  const inv = invertSymmetricMatrix(H);
  if (!inv) return null;
  const variance = inv.map((row, i) => row[i]!);
  if (variance.some((v) => !(v > 0) || !Number.isFinite(v))) return null;
  const sd = variance.map(Math.sqrt);
  return {
    d50M: Math.exp(lnD) * sd[0]!,
    maxEfficiency: atTop ? null : sd[1]!,
    steepness: Math.exp(lnK) * sd[m - 1]!,
  };
}
