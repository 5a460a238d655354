/**
 * A clean's removal curve fitted on individual particles (methods.md §3 of the project reference).
 *
 * Every particle of the scan before the clean that the matching could follow (src/model/matching)
 * is one Bernoulli trial: removed (gone after the clean) or survived (found again). Removal follows
 * voidcast's logistic in log d (docs/models.md §10):
 *
 *   P(removed | d) = E_max · σ(a + b·x),   x = ln(d / d_ref),   σ(u) = 1/(1 + e^(−u)),
 *
 * i.e. PRE(d) = E_max / (1 + (d50/d)^k) with k = b and ln d50 = ln d_ref − a/b (a logistic
 * regression of "removed" on ln d with slope k and intercept −k ln d50, scaled by E_max). d_ref is
 * the geometric mean of the sizes (centring keeps a and b nearly uncorrelated). The maximum of the
 * log-likelihood
 *
 *   ℓ = Σ yᵢ ln pᵢ + (1 − yᵢ) ln(1 − pᵢ),   pᵢ = E_max σ(a + b xᵢ)
 *
 * is found by Newton's method with the analytic gradient and Hessian (damped: a step that does not
 * raise ℓ is shortened, and a Hessian that is not negative definite is shifted, Levenberg 1944 /
 * Marquardt 1963). With E_max fixed at 1 this is the iteratively reweighted least squares of
 * logistic regression (McCullagh & Nelder, *Generalized Linear Models*, 2nd ed. 1989, §4.4). The
 * observed Fisher information −∇²ℓ at the maximum gives the covariance; intervals are Wald
 * intervals on ln d50 and ln k (so they stay positive) and, for the curve, on logit PRE (delta
 * method), so the band stays inside [0, 1].
 */
import { finiteResult, ModelInputError, requireNumber } from './errors.ts';
import { chiSquareQuantile } from './stats/chi-square.ts';
import { invertSymmetricMatrix } from './stats/linalg.ts';

export interface RemovalParticleFitOptions {
  /**
   * E_max: 'auto' (default) fits it when the data reach sizes where it is identifiable (see
   * fitRemovalParticles) and fixes it at `fixedMaxEfficiency` otherwise; 'fit' always fits it; a
   * number in (0, 1] fixes it at that value.
   */
  maxEfficiency?: 'auto' | 'fit' | number;
  /** The value E_max is fixed at when 'auto' does not fit it (default 1), 0 < E ≤ 1. */
  fixedMaxEfficiency?: number;
  /** 'auto' fits E_max only with at least this many particles on the plateau (default 30). */
  minPlateauParticles?: number;
  /** Two-sided confidence of the intervals (default 0.95). */
  confidence?: number;
}

export interface RemovalParticleFit {
  maxEfficiency: number;
  /** Whether E_max was fitted (false: fixed, see maxEfficiencyNote). */
  maxEfficiencyFitted: boolean;
  /** Why E_max was fixed, or null when it was fitted. */
  maxEfficiencyNote: string | null;
  d50M: number;
  /** k, the slope in ln d. */
  steepness: number;
  /** w = 1/(k ln 10), decades of d (the tools file's form). */
  widthDecades: number;
  /** Intervals at `confidence`: d50 (m), k, w (decades), E_max (null when fixed). */
  d50LowM: number;
  d50HighM: number;
  steepnessLow: number;
  steepnessHigh: number;
  widthLowDecades: number;
  widthHighDecades: number;
  maxEfficiencyLow: number | null;
  maxEfficiencyHigh: number | null;
  /** Standard errors: of ln d50, of k, of E_max (null when fixed). */
  seLnD50: number;
  seSteepness: number;
  seMaxEfficiency: number | null;
  /** The fitted parameters (a, b[, E]) and their covariance (inverse observed information). */
  referenceM: number;
  a: number;
  b: number;
  covariance: number[][];
  /** Particles, and how many were removed. */
  n: number;
  removed: number;
  /** Particles at sizes where the fitted logistic reaches 95 % of E_max (d ≥ d50·19^(1/k)). */
  plateauParticles: number;
  logLikelihood: number;
  iterations: number;
  confidence: number;
  method: string;
}

const METHOD =
  'maximum likelihood on individual particles (Bernoulli removed/survived), logistic in ln d scaled by E_max; Newton with observed Fisher information; Wald intervals on ln d50, ln k and logit PRE';

interface State {
  a: number;
  b: number;
  e: number;
}

/** ln σ(u) without overflow. */
function logSigmoid(u: number): number {
  return u >= 0 ? -Math.log1p(Math.exp(-u)) : u - Math.log1p(Math.exp(u));
}

function sigmoid(u: number): number {
  if (u >= 0) return 1 / (1 + Math.exp(-u));
  const t = Math.exp(u);
  return t / (1 + t);
}

function logLik(x: Float64Array, y: Uint8Array, s: State): number {
  let l = 0;
  const lnE = Math.log(s.e);
  for (let i = 0; i < x.length; i++) {
    const u = s.a + s.b * x[i]!;
    if (y[i]) l += lnE + logSigmoid(u);
    else l += s.e === 1 ? logSigmoid(-u) : Math.log1p(-s.e * sigmoid(u));
  }
  return l;
}

/** Gradient and Hessian of ℓ in (a, b[, E]) (the derivation is in docs/models.md §10). */
function derivatives(
  x: Float64Array,
  y: Uint8Array,
  s: State,
  withE: boolean,
): { g: number[]; h: number[][] } {
  const m = withE ? 3 : 2;
  const g = new Array<number>(m).fill(0);
  const h = Array.from({ length: m }, () => new Array<number>(m).fill(0));
  const e = s.e;
  for (let i = 0; i < x.length; i++) {
    const xi = x[i]!;
    const yi = y[i]!;
    const si = sigmoid(s.a + s.b * xi);
    const q = 1 - e * si;
    const r = yi - e * si;
    const ga = (r * (1 - si)) / q;
    const haa = yi
      ? -((1 - si) ** 2) + (r * (1 - si) * (1 - 2 * si)) / q
      : -((e * e * si * si * (1 - si) ** 2) / (q * q)) + (r * (1 - si) * (1 - 2 * si)) / q;
    g[0]! += ga;
    g[1]! += ga * xi;
    h[0]![0]! += haa;
    h[0]![1]! += haa * xi;
    h[1]![1]! += haa * xi * xi;
    if (withE) {
      g[2]! += r / (e * q);
      const hae = yi
        ? -(1 - si) / e + (r * (1 - si)) / (e * q)
        : -(e * si * si * (1 - si)) / (q * q) + (r * (1 - si)) / (e * q);
      h[0]![2]! += hae;
      h[1]![2]! += hae * xi;
      h[2]![2]! += yi ? -1 / (e * e) : -(si * si) / (q * q);
    }
  }
  for (let i = 0; i < m; i++) for (let j = 0; j < i; j++) h[i]![j] = h[j]![i]!;
  return { g, h };
}

/** Solves A δ = g for small symmetric positive-definite A (null when it is not). */
function solve(a: number[][], g: number[]): number[] | null {
  if (a.some((row) => row.some((v) => !Number.isFinite(v)))) return null;
  const inv = invertSymmetricMatrix(a);
  if (!inv) return null;
  return inv.map((row) => row.reduce((s, v, j) => s + v * g[j]!, 0));
}

/** Damped Newton ascent of ℓ from `start`; E is kept in (0, 1] when it is free. */
function maximise(
  x: Float64Array,
  y: Uint8Array,
  start: State,
  withE: boolean,
): { state: State; iterations: number; converged: boolean } {
  let s = { ...start };
  let l = logLik(x, y, s);
  for (let iter = 1; iter <= 200; iter++) {
    const { g, h } = derivatives(x, y, s, withE);
    const negH = h.map((row) => row.map((v) => -v));
    let lambda = 0;
    let moved = false;
    for (let attempt = 0; attempt < 60 && !moved; attempt++) {
      const shifted = negH.map((row, i) => row.map((v, j) => (i === j ? v + lambda * (1 + Math.abs(v)) : v)));
      const step = solve(shifted, g);
      if (!step) {
        lambda = lambda === 0 ? 1e-6 : lambda * 10;
        continue;
      }
      let t = 1;
      for (let half = 0; half < 40; half++, t /= 2) {
        const next: State = { a: s.a + t * step[0]!, b: s.b + t * step[1]!, e: s.e };
        if (withE) next.e = s.e + t * step[2]!;
        if (!(next.e > 0) || next.e > 1) continue;
        const ln = logLik(x, y, next);
        if (ln >= l - 1e-12 * Math.abs(l)) {
          const gain = ln - l;
          const size = Math.max(...step.map((v) => Math.abs(v * t)));
          s = next;
          l = ln;
          moved = true;
          if (size < 1e-10 || (gain >= 0 && gain < 1e-13 * (1 + Math.abs(l)) && size < 1e-6))
            return { state: s, iterations: iter, converged: true };
          break;
        }
      }
      if (!moved) lambda = lambda === 0 ? 1e-6 : lambda * 10;
    }
    if (!moved) return { state: s, iterations: iter, converged: true };
  }
  return { state: s, iterations: 200, converged: false };
}

/** Largest E below 1 the free fit may report before it is called "at the bound 1". */
const E_BOUND = 1 - 1e-6;

/**
 * Fits PRE(d) = E_max / (1 + (d50/d)^k) by maximum likelihood on individual particles.
 *
 * E_max ('auto', the default) — **Choice:** fitted only when the data show the plateau: at least
 * `minPlateauParticles` (30) particles at sizes where the curve fitted with E_max free has reached
 * 95 % of E_max (d ≥ d95 = d50·19^(1/k)), the largest size at least 2 × d95 (the flat top seen over
 * a factor 2 of size, not only at the edge of the data), and that fit leaves E_max below 1. Otherwise E_max is fixed
 * (at `fixedMaxEfficiency`, default 1) and `maxEfficiencyNote` says why: without particles on the
 * plateau a lower E_max and a larger d50 describe the data equally well.
 *
 * Intervals (Wald, observed information, z² = χ²(confidence; 1)): ln d50 ± z·SE (SE by the delta
 * method from (a, b): ∂/∂a = −1/b, ∂/∂b = a/b²), ln k ± z·SE(k)/k, w = 1/(k ln 10) from k's
 * interval, E_max ± z·SE(E) clipped to [0, 1].
 *
 * @param diametersM sizes of the particles before the clean, m, each > 0
 * @param removed 1 (or true) when the particle is gone after the clean, 0 when it survived
 * @param options E_max handling and confidence (RemovalParticleFitOptions)
 * @returns fitted parameters, intervals, covariance, counts
 * @throws ModelInputError for bad input, fewer than 2 distinct sizes, no removed or no surviving
 *   particle, or sizes that separate the outcomes completely (every removed particle larger than
 *   every survivor, or the reverse: the slope is unbounded)
 * @example fitRemovalParticles([30e-9, 30e-9, 30e-9, 30e-9, 90e-9, 90e-9, 90e-9, 90e-9], [1, 0, 0, 0, 1, 1, 1, 0], { maxEfficiency: 1 })
 *          // k = ln 9 / ln 3 = 2.0, d50 = 30·√3 nm = 51.96 nm (two sizes: the exact solution)
 */
export function fitRemovalParticles(
  diametersM: ArrayLike<number>,
  removed: ArrayLike<number | boolean>,
  options: RemovalParticleFitOptions = {},
): RemovalParticleFit {
  const fn = 'fitRemovalParticles';
  if (!diametersM || typeof diametersM.length !== 'number')
    throw new ModelInputError(fn, 'diametersM', 'm', 'an array of diameters', diametersM);
  if (!removed || removed.length !== diametersM.length)
    throw new ModelInputError(
      fn,
      'removed',
      '',
      `an array of ${diametersM.length} outcomes`,
      removed?.length,
    );
  const n = diametersM.length;
  const confidence = requireNumber(fn, 'options.confidence', options.confidence ?? 0.95, '', {
    min: 0,
    max: 1,
    minExclusive: true,
    maxExclusive: true,
  });
  const mode = options.maxEfficiency ?? 'auto';
  if (typeof mode === 'number')
    requireNumber(fn, 'options.maxEfficiency', mode, '', { min: 0, minExclusive: true, max: 1 });
  else if (mode !== 'auto' && mode !== 'fit')
    throw new ModelInputError(fn, 'options.maxEfficiency', '', "'auto', 'fit' or a number in (0, 1]", mode);
  const fixedE = requireNumber(fn, 'options.fixedMaxEfficiency', options.fixedMaxEfficiency ?? 1, '', {
    min: 0,
    minExclusive: true,
    max: 1,
  });
  const minPlateau = requireNumber(fn, 'options.minPlateauParticles', options.minPlateauParticles ?? 30, '', {
    min: 1,
    integer: true,
  });

  let lnRef = 0;
  let nRemoved = 0;
  const y = new Uint8Array(n);
  for (let i = 0; i < n; i++) {
    const d = diametersM[i];
    if (typeof d !== 'number' || !(d > 0) || !(d <= 0.01))
      requireNumber(fn, `diametersM[${i}]`, d, 'm', { min: 0, minExclusive: true, max: 0.01 });
    const r = removed[i];
    if (r !== 0 && r !== 1 && r !== true && r !== false)
      throw new ModelInputError(fn, `removed[${i}]`, '', '0, 1, true or false', r);
    y[i] = r === 1 || r === true ? 1 : 0;
    nRemoved += y[i]!;
    lnRef += Math.log(d as number);
  }
  lnRef /= Math.max(n, 1);
  const x = new Float64Array(n);
  let minRemoved = Infinity;
  let maxRemoved = -Infinity;
  let minSurvived = Infinity;
  let maxSurvived = -Infinity;
  for (let i = 0; i < n; i++) {
    x[i] = Math.log(diametersM[i] as number) - lnRef;
    if (y[i]) {
      minRemoved = Math.min(minRemoved, x[i]!);
      maxRemoved = Math.max(maxRemoved, x[i]!);
    } else {
      minSurvived = Math.min(minSurvived, x[i]!);
      maxSurvived = Math.max(maxSurvived, x[i]!);
    }
  }
  if (nRemoved === 0 || nRemoved === n)
    throw new ModelInputError(
      fn,
      'removed',
      '',
      'at least one removed and one surviving particle',
      `${nRemoved} removed of ${n}`,
    );
  if (Math.min(minRemoved, minSurvived) === Math.max(maxRemoved, maxSurvived))
    throw new ModelInputError(fn, 'diametersM', 'm', 'at least 2 distinct sizes', diametersM[0]);
  if (maxSurvived < minRemoved || maxRemoved < minSurvived)
    throw new ModelInputError(
      fn,
      'diametersM',
      'm',
      'sizes that do not separate removed from surviving particles completely (else the slope is unbounded)',
      `survivors ${Math.exp(minSurvived + lnRef)}–${Math.exp(maxSurvived + lnRef)} m, removed ${Math.exp(minRemoved + lnRef)}–${Math.exp(maxRemoved + lnRef)} m`,
    );

  // 1. E_max fixed (at 1 for the start; at the fixed value if asked).
  const p0 = Math.min(Math.max(nRemoved / n, 0.01), 0.99);
  const fixedValue = typeof mode === 'number' ? mode : fixedE;
  const startE = Math.min(fixedValue, 1);
  const a0 = Math.log(Math.min(p0 / startE, 0.99) / (1 - Math.min(p0 / startE, 0.99)));
  const fixedFit = maximise(x, y, { a: a0, b: 0, e: startE }, false);
  let chosen = fixedFit;
  let withE = false;
  let note: string | null = typeof mode === 'number' ? `E_max fixed at ${mode} as asked` : null;
  let plateau = countPlateau(x, fixedFit.state);

  if (typeof mode !== 'number') {
    const freeStart: State = { ...fixedFit.state, e: Math.min(fixedFit.state.e, 0.999) };
    const free = maximise(x, y, freeStart, true);
    const freePlateau = countPlateau(x, free.state);
    const span = plateauSpan(x, free.state);
    const atBound = free.state.e >= E_BOUND;
    if (mode === 'fit' && !atBound) {
      chosen = free;
      withE = true;
      plateau = freePlateau;
    } else if (mode === 'auto' && !atBound && freePlateau >= minPlateau && span >= PLATEAU_SPAN) {
      chosen = free;
      withE = true;
      plateau = freePlateau;
    } else if (atBound) {
      note = `E_max fixed at ${fixedValue}: the fit with E_max free reaches its bound 1`;
      if (fixedValue !== 1) chosen = fixedFit;
      else chosen = maximise(x, y, { ...free.state, e: 1 }, false);
      plateau = countPlateau(x, chosen.state);
    } else {
      note =
        freePlateau < minPlateau
          ? `E_max fixed at ${fixedValue}: only ${freePlateau} particles lie where the curve reaches 95 % of E_max (at least ${minPlateau} are needed to fit it)`
          : `E_max fixed at ${fixedValue}: the sizes reach only ${round2(span)} × the size where the curve reaches 95 % of E_max (at least ${PLATEAU_SPAN} × is needed to see the plateau)`;
    }
  }

  const st = chosen.state;
  const { h } = derivatives(x, y, st, withE);
  const cov = invertSymmetricMatrix(h.map((row) => row.map((v) => -v)));
  if (!cov)
    throw new ModelInputError(
      fn,
      'diametersM',
      'm',
      'data that determine the curve (the information matrix is singular)',
      `${n} particles`,
    );
  const z = Math.sqrt(chiSquareQuantile(confidence, 1));
  const { a, b, e } = st;
  const lnD50 = lnRef - a / b;
  const varLnD50 =
    cov[0]![0]! / (b * b) - (2 * a * cov[0]![1]!) / (b * b * b) + (a * a * cov[1]![1]!) / b ** 4;
  const seLnD50 = Math.sqrt(Math.max(varLnD50, 0));
  const seK = Math.sqrt(Math.max(cov[1]![1]!, 0));
  const kLow = b * Math.exp((-z * seK) / Math.abs(b));
  const kHigh = b * Math.exp((z * seK) / Math.abs(b));
  const seE = withE ? Math.sqrt(Math.max(cov[2]![2]!, 0)) : null;
  return {
    maxEfficiency: e,
    maxEfficiencyFitted: withE,
    maxEfficiencyNote: withE ? null : note,
    d50M: Math.exp(lnD50),
    steepness: b,
    widthDecades: 1 / (b * Math.LN10),
    d50LowM: Math.exp(lnD50 - z * seLnD50),
    d50HighM: Math.exp(lnD50 + z * seLnD50),
    steepnessLow: kLow,
    steepnessHigh: kHigh,
    widthLowDecades: 1 / (kHigh * Math.LN10),
    widthHighDecades: 1 / (kLow * Math.LN10),
    maxEfficiencyLow: seE === null ? null : Math.max(0, e - z * seE),
    maxEfficiencyHigh: seE === null ? null : Math.min(1, e + z * seE),
    seLnD50,
    seSteepness: seK,
    seMaxEfficiency: seE,
    referenceM: Math.exp(lnRef),
    a,
    b,
    covariance: cov,
    n,
    removed: nRemoved,
    plateauParticles: plateau,
    logLikelihood: logLik(x, y, st),
    iterations: chosen.iterations,
    confidence,
    method: METHOD,
  };
}

/** 'auto' fits E_max only when the largest size is at least this multiple of d95 = d50·19^(1/k). */
const PLATEAU_SPAN = 2;

function round2(v: number): number {
  return Math.round(v * 100) / 100;
}

/** Largest size over d95 (the size where σ reaches 0.95); 0 for b ≤ 0. */
function plateauSpan(x: Float64Array, s: State): number {
  if (!(s.b > 0)) return 0;
  let max = -Infinity;
  for (let i = 0; i < x.length; i++) max = Math.max(max, x[i]!);
  return Math.exp(max - (Math.log(19) - s.a) / s.b);
}

/** Particles at x where σ(a + b x) ≥ 0.95 (for b > 0; none otherwise). */
function countPlateau(x: Float64Array, s: State): number {
  if (!(s.b > 0)) return 0;
  const xPlateau = (Math.log(19) - s.a) / s.b;
  let c = 0;
  for (let i = 0; i < x.length; i++) if (x[i]! >= xPlateau) c++;
  return c;
}

export interface RemovalBandPoint {
  diameterM: number;
  /** Fitted PRE at d. */
  efficiency: number;
  /** Pointwise interval of PRE at d (delta method on logit PRE). */
  lower: number;
  upper: number;
}

/**
 * The fitted removal curve and its pointwise confidence band at the given sizes.
 *
 * Formula: PRE(d) = E σ(a + b x), x = ln(d/d_ref); the band is logit⁻¹(logit PRE ± z·SE), with
 * Var(logit PRE) = ∇ᵀ C ∇, ∇ = (E s(1 − s), E s(1 − s) x[, s]) / (PRE (1 − PRE)), s = σ(a + b x),
 * C the covariance of the fit (delta method; Wald). Where E is fixed the band comes from (a, b) only.
 *
 * @param fit a result of fitRemovalParticles
 * @param diametersM sizes, m, each in (0, 0.01]
 * @param confidence two-sided level (default: the fit's)
 * @throws ModelInputError for a bad size or level, a malformed fit (non-finite parameters, reference ≤ 0,
 *   E_max outside [0, 1], a covariance that is not a finite 2 × 2 or 3 × 3 matrix), or an overflow
 * @example removalCurveBand(fit, [50e-9, 100e-9]) // [{ diameterM: 5e-8, efficiency, lower, upper }, …]
 */
export function removalCurveBand(
  fit: RemovalParticleFit,
  diametersM: readonly number[],
  confidence?: number,
): RemovalBandPoint[] {
  const fn = 'removalCurveBand';
  if (typeof fit !== 'object' || fit === null)
    throw new ModelInputError(fn, 'fit', '', 'a result of fitRemovalParticles', fit);
  const ref = requireNumber(fn, 'fit.referenceM', fit.referenceM, 'm', { min: 0, minExclusive: true });
  const a = requireNumber(fn, 'fit.a', fit.a, '');
  const b = requireNumber(fn, 'fit.b', fit.b, '');
  const e = requireNumber(fn, 'fit.maxEfficiency', fit.maxEfficiency, '', { min: 0, max: 1 });
  const c: unknown = fit.covariance;
  if (!Array.isArray(c) || (c.length !== 2 && c.length !== 3))
    throw new ModelInputError(fn, 'fit.covariance', '', 'a 2 × 2 or 3 × 3 matrix', c);
  for (let r = 0; r < c.length; r++) {
    const row: unknown = c[r];
    if (!Array.isArray(row) || row.length !== c.length)
      throw new ModelInputError(fn, `fit.covariance[${r}]`, '', `an array of ${c.length} numbers`, row);
    for (let q = 0; q < row.length; q++) requireNumber(fn, `fit.covariance[${r}][${q}]`, row[q], '');
  }
  const cov = c as number[][];
  const level = confidence ?? fit.confidence;
  requireNumber(fn, 'confidence', level, '', { min: 0, max: 1, minExclusive: true, maxExclusive: true });
  if (!Array.isArray(diametersM))
    throw new ModelInputError(fn, 'diametersM', 'm', 'an array of sizes', diametersM);
  const z = Math.sqrt(chiSquareQuantile(level, 1));
  const withE = cov.length === 3;
  return diametersM.map((d, i) => {
    requireNumber(fn, `diametersM[${i}]`, d, 'm', { min: 0, minExclusive: true, max: 0.01 });
    const x = finiteResult(fn, Math.log(d / ref), `ln(diametersM[${i}] / referenceM)`);
    const s = sigmoid(finiteResult(fn, a + b * x, `logit at diametersM[${i}]`));
    const p = e * s;
    if (!(p > 0 && p < 1)) return { diameterM: d, efficiency: p, lower: p, upper: p };
    const k = 1 / (p * (1 - p));
    const grad = [k * e * s * (1 - s), k * e * s * (1 - s) * x];
    if (withE) grad.push(k * s);
    let v = 0;
    for (let r = 0; r < grad.length; r++)
      for (let q = 0; q < grad.length; q++) v += grad[r]! * cov[r]![q]! * grad[q]!;
    const lp = Math.log(p / (1 - p));
    const se = Math.sqrt(Math.max(finiteResult(fn, v, `variance at diametersM[${i}]`), 0));
    return { diameterM: d, efficiency: p, lower: sigmoid(lp - z * se), upper: sigmoid(lp + z * se) };
  });
}
