/**
 * From voids to unbonded area, die kills and yield.
 *
 * A void is a disc of radius R(d) around each particle at the bond interface. Random particles
 * are a Poisson field of density λ_k per m² in size bin k (both wafers of a pair together, the
 * flipped wafer mirrored); detected particles are discs at known positions with a probability of
 * still being there at bonding. Everything here is geometry and counting; sizes, densities and
 * radii come from the spectrum and void models.
 */
import { ModelInputError, requireNonNegative, requireNumber } from './errors.ts';

/** One size class of random particles: density λ (per m² of interface) and the void radius R it makes. */
export interface DefectTerm {
  densityPerM2: number;
  radiusM: number;
}

/** An axis-aligned rectangle in wafer coordinates (origin at the wafer centre), metres. */
export interface Rect {
  xMinM: number;
  yMinM: number;
  xMaxM: number;
  yMaxM: number;
}

const MAX_LENGTH_M = 1; // no wafer, die or void in this domain is a metre across

function requireTerms(fn: string, terms: readonly DefectTerm[]): void {
  if (!Array.isArray(terms))
    throw new ModelInputError(fn, 'terms', '', 'an array of { densityPerM2, radiusM }', terms);
  terms.forEach((t, i) => {
    if (typeof t !== 'object' || t === null)
      throw new ModelInputError(fn, `terms[${i}]`, '', 'an object { densityPerM2, radiusM }', t);
    requireNumber(fn, `terms[${i}].densityPerM2`, t.densityPerM2, '1/m²', { min: 0, max: 1e15 });
    requireNumber(fn, `terms[${i}].radiusM`, t.radiusM, 'm', { min: 0, max: MAX_LENGTH_M });
  });
}

function requireRect(fn: string, name: string, r: Rect): void {
  if (typeof r !== 'object' || r === null)
    throw new ModelInputError(fn, name, '', 'an object { xMinM, yMinM, xMaxM, yMaxM }', r);
  requireNumber(fn, `${name}.xMinM`, r.xMinM, 'm', { min: -MAX_LENGTH_M, max: MAX_LENGTH_M });
  requireNumber(fn, `${name}.yMinM`, r.yMinM, 'm', { min: -MAX_LENGTH_M, max: MAX_LENGTH_M });
  requireNumber(fn, `${name}.xMaxM`, r.xMaxM, 'm', { min: r.xMinM, max: MAX_LENGTH_M });
  requireNumber(fn, `${name}.yMaxM`, r.yMaxM, 'm', { min: r.yMinM, max: MAX_LENGTH_M });
}

/**
 * Critical area of a W × H rectangle for a disc of radius R: the area of the set of disc centres
 * for which the disc touches the rectangle (the Minkowski sum of rectangle and disc).
 *
 * Formula [D]: A_c = WH + 2R(W + H) + πR².
 *
 * @param widthM W, m, 0 ≤ W ≤ 1 (for hybrid bonding, the pad-array rectangle, not the whole die)
 * @param heightM H, m, 0 ≤ H ≤ 1
 * @param radiusM R, m, 0 ≤ R ≤ 1
 * @returns A_c in m²
 * @throws ModelInputError for non-finite or out-of-range input
 * @example criticalAreaRectangle(10e-3, 5e-3, 1e-3) // 8.31416e-5 m² (83.1416 mm²)
 */
export function criticalAreaRectangle(widthM: number, heightM: number, radiusM: number): number {
  const fn = 'criticalAreaRectangle';
  const w = requireNumber(fn, 'widthM', widthM, 'm', { min: 0, max: MAX_LENGTH_M });
  const h = requireNumber(fn, 'heightM', heightM, 'm', { min: 0, max: MAX_LENGTH_M });
  const r = requireNumber(fn, 'radiusM', radiusM, 'm', { min: 0, max: MAX_LENGTH_M });
  return w * h + 2 * r * (w + h) + Math.PI * r * r;
}

/**
 * Covered (unbonded) area fraction of a Boolean model of discs: Poisson germs of density λ_k
 * carrying discs of radius R_k, overlaps counted once.
 *
 * Formula: f = 1 − exp(−Σ_k λ_k π R_k²) (the Boolean model; e.g. D. Stoyan, W. S. Kendall &
 * J. Mecke, *Stochastic Geometry and its Applications*, 2nd ed., Wiley 1995, ch. 3 [M]).
 *
 * @param terms λ_k (1/m², 0 … 10¹⁵) and R_k (m, 0 … 1) per size class; an empty list gives 0
 * @returns covered fraction in [0, 1]
 * @throws ModelInputError for a bad term
 * @example booleanCoveredFraction([{ densityPerM2: 1e4, radiusM: 1e-3 }]) // 0.030928 (1 cm⁻², R = 1 mm)
 */
export function booleanCoveredFraction(terms: readonly DefectTerm[]): number {
  requireTerms('booleanCoveredFraction', terms);
  let s = 0;
  for (const t of terms) s += t.densityPerM2 * Math.PI * t.radiusM * t.radiusM;
  return -Math.expm1(-s);
}

function requireExpected(fn: string, ad: number): number {
  return requireNumber(fn, 'expectedDefects', ad, 'defects per die', { min: 0, max: 1e6 });
}

/**
 * Poisson yield model: Y = exp(−AD), the chance that a die receives no killing defect when
 * defects fall independently (AD = expected killing defects per die).
 *
 * @param expectedDefects AD ≥ 0 (≤ 10⁶)
 * @returns Y in [0, 1]
 * @throws ModelInputError for negative or non-finite AD
 * @example poissonYield(0.5) // 0.60653
 */
export function poissonYield(expectedDefects: number): number {
  return Math.exp(-requireExpected('poissonYield', expectedDefects));
}

/**
 * Negative-binomial yield model (Stapper): Y = (1 + AD/α)^(−α), defects clustered with cluster
 * parameter α (α → ∞ gives the Poisson model; small α means strong clustering, higher yield at
 * the same mean). C. H. Stapper, IBM J. Res. Dev. 27 (1983) 549 and later papers [secondary
 * sources]. Two different formulas both go by "Seeds' model" (1/(1 + AD) and exp(−√AD)); neither
 * is this one.
 *
 * @param expectedDefects AD ≥ 0 (≤ 10⁶)
 * @param alpha cluster parameter α, 10⁻³ ≤ α ≤ 10¹² (fab values 0.5–2 [M])
 * @returns Y in [0, 1]
 * @throws ModelInputError for bad AD or α
 * @example negativeBinomialYield(0.5, 2) // 0.64
 */
export function negativeBinomialYield(expectedDefects: number, alpha: number): number {
  const ad = requireExpected('negativeBinomialYield', expectedDefects);
  const a = requireNumber('negativeBinomialYield', 'alpha', alpha, '', { min: 1e-3, max: 1e12 });
  return Math.exp(-a * Math.log1p(ad / a));
}

/**
 * Murphy's yield model: Y = [(1 − e^(−AD)) / AD]² (B. T. Murphy, Proc. IEEE 52 (1964) 1537: a
 * triangular distribution of defect density across dies); Y(0) = 1.
 *
 * @param expectedDefects AD ≥ 0 (≤ 10⁶)
 * @returns Y in [0, 1]
 * @throws ModelInputError for negative or non-finite AD
 * @example murphyYield(0.5) // 0.61927
 */
export function murphyYield(expectedDefects: number): number {
  const ad = requireExpected('murphyYield', expectedDefects);
  if (ad === 0) return 1;
  const f = -Math.expm1(-ad) / ad;
  return f * f;
}

/**
 * Expected killing defects on one die (or pad array) of W × H: AD = Σ_k λ_k A_c(W, H, R_k),
 * counting every disc whose void touches the rectangle. Ignores the wafer edge (see
 * criticalAreaOnWafer for a die near it).
 *
 * @param terms λ_k (1/m²) and R_k (m) per size class
 * @param dieWidthM W, m, 0 ≤ W ≤ 1
 * @param dieHeightM H, m, 0 ≤ H ≤ 1
 * @returns expected number of voids touching the die
 * @throws ModelInputError for bad terms or dimensions
 * @example expectedDefectsOnDie([{ densityPerM2: 1e4, radiusM: 1e-3 }], 10e-3, 5e-3) // 0.831416
 */
export function expectedDefectsOnDie(
  terms: readonly DefectTerm[],
  dieWidthM: number,
  dieHeightM: number,
): number {
  requireTerms('expectedDefectsOnDie', terms);
  const w = requireNumber('expectedDefectsOnDie', 'dieWidthM', dieWidthM, 'm', { min: 0, max: MAX_LENGTH_M });
  const h = requireNumber('expectedDefectsOnDie', 'dieHeightM', dieHeightM, 'm', {
    min: 0,
    max: MAX_LENGTH_M,
  });
  let s = 0;
  for (const t of terms) s += t.densityPerM2 * criticalAreaRectangle(w, h, t.radiusM);
  return s;
}

/**
 * Exact disc–rectangle intersection test: does a closed disc of radius r centred at (cx, cy)
 * reach the closed rectangle? Convention: touching counts — a void whose rim just reaches the die
 * (distance from centre to rectangle exactly r) kills it.
 *
 * Method: the squared distance from the centre to the nearest point of the rectangle (clamp each
 * coordinate into the rectangle) compared with r².
 *
 * @param cxM, cyM disc centre, m, |·| ≤ 1
 * @param rM radius, m, 0 ≤ r ≤ 1 (r = 0: is the point in the closed rectangle)
 * @param rect the rectangle (xMin ≤ xMax, yMin ≤ yMax)
 * @throws ModelInputError for non-finite or inconsistent input
 * @example discHitsRectangle(-3, -4, 5, { xMinM: 0, yMinM: 0, xMaxM: 1, yMaxM: 1 }) // true (touches the corner)
 */
export function discHitsRectangle(cxM: number, cyM: number, rM: number, rect: Rect): boolean {
  const fn = 'discHitsRectangle';
  requireNumber(fn, 'cxM', cxM, 'm', { min: -MAX_LENGTH_M, max: MAX_LENGTH_M });
  requireNumber(fn, 'cyM', cyM, 'm', { min: -MAX_LENGTH_M, max: MAX_LENGTH_M });
  requireNumber(fn, 'rM', rM, 'm', { min: 0, max: MAX_LENGTH_M });
  requireRect(fn, 'rect', rect);
  return hits(cxM, cyM, rM, rect);
}

function hits(cx: number, cy: number, r: number, rect: Rect): boolean {
  const dx = cx < rect.xMinM ? rect.xMinM - cx : cx > rect.xMaxM ? cx - rect.xMaxM : 0;
  const dy = cy < rect.yMinM ? rect.yMinM - cy : cy > rect.yMaxM ? cy - rect.yMaxM : 0;
  return dx * dx + dy * dy <= r * r;
}

/** Where dies sit on the wafer. */
export interface DieLayoutSpec {
  /** Wafer diameter, m (e.g. 0.3). */
  waferDiameterM: number;
  /** Edge exclusion, m (e.g. 3e-3); usable radius = diameter/2 − exclusion. */
  edgeExclusionM: number;
  dieWidthM: number;
  dieHeightM: number;
  /** Step between die centres, m (default: the die size, i.e. no street). ≥ the die size. */
  pitchXM?: number;
  pitchYM?: number;
  /**
   * The area that a void must reach to kill the die (the pad array in hybrid bonding), relative
   * to the die's lower-left corner, m. Default: the whole die.
   */
  activeArea?: Rect;
  /** Centre of die (0, 0) in wafer coordinates, m (default 0: a die centred on the wafer). */
  offsetXM?: number;
  offsetYM?: number;
}

export interface Die {
  /** Column and row index: die centre at (offsetX + col·pitchX, offsetY + row·pitchY). */
  col: number;
  row: number;
  /** The die rectangle in wafer coordinates. */
  die: Rect;
  /** The active (kill) rectangle in wafer coordinates. */
  active: Rect;
}

export interface DieLayout {
  waferDiameterM: number;
  edgeExclusionM: number;
  /** Whole dies entirely inside the usable disc, ordered by row then column. */
  dies: Die[];
}

/**
 * Die layout: every whole die whose four corners lie inside the usable disc of radius
 * D/2 − edge exclusion (a corner exactly on the circle counts as inside). Partial dies at the
 * edge are not product and are left out. Coordinates: origin at the wafer centre, x to the right,
 * y up, as seen on the bonding face; notch or flat are not modelled (state the convention of the
 * scan when mapping defects onto this frame).
 *
 * @param spec wafer diameter (0, 1] m; edge exclusion [0, D/2) m; die width and height
 *   [10⁻⁴ m, D]; pitches ≥ die size and ≤ D (default the die size); active area inside the die;
 *   offsets |offset| ≤ D
 * @returns the layout with its dies
 * @throws ModelInputError for bad numbers, an active area outside the die, or more than 10⁶ dies
 * @example dieLayout({ waferDiameterM: 0.3, edgeExclusionM: 3e-3, dieWidthM: 0.01, dieHeightM: 0.01 }).dies.length
 */
export function dieLayout(spec: DieLayoutSpec): DieLayout {
  const fn = 'dieLayout';
  if (typeof spec !== 'object' || spec === null) throw new ModelInputError(fn, 'spec', '', 'an object', spec);
  const D = requireNumber(fn, 'waferDiameterM', spec.waferDiameterM, 'm', {
    min: 0,
    minExclusive: true,
    max: 1,
  });
  const ee = requireNumber(fn, 'edgeExclusionM', spec.edgeExclusionM, 'm', {
    min: 0,
    max: D / 2,
    maxExclusive: true,
  });
  const w = requireNumber(fn, 'dieWidthM', spec.dieWidthM, 'm', { min: 1e-4, max: D });
  const h = requireNumber(fn, 'dieHeightM', spec.dieHeightM, 'm', { min: 1e-4, max: D });
  const px = requireNumber(fn, 'pitchXM', spec.pitchXM ?? w, 'm', { min: w, max: D });
  const py = requireNumber(fn, 'pitchYM', spec.pitchYM ?? h, 'm', { min: h, max: D });
  const ox = requireNumber(fn, 'offsetXM', spec.offsetXM ?? 0, 'm', { min: -D, max: D });
  const oy = requireNumber(fn, 'offsetYM', spec.offsetYM ?? 0, 'm', { min: -D, max: D });
  const act = spec.activeArea ?? { xMinM: 0, yMinM: 0, xMaxM: w, yMaxM: h };
  requireRect(fn, 'activeArea', act);
  if (act.xMinM < 0 || act.yMinM < 0 || act.xMaxM > w || act.yMaxM > h)
    throw new ModelInputError(fn, 'activeArea', 'm', `inside the die [0, ${w}] × [0, ${h}] m`, act);
  const ru = D / 2 - ee;
  const ru2 = ru * ru;
  const iMin = Math.ceil((-ru + w / 2 - ox) / px);
  const iMax = Math.floor((ru - w / 2 - ox) / px);
  const jMin = Math.ceil((-ru + h / 2 - oy) / py);
  const jMax = Math.floor((ru - h / 2 - oy) / py);
  if ((iMax - iMin + 1) * (jMax - jMin + 1) > 1e6)
    throw new ModelInputError(fn, 'dieWidthM', 'm', 'a die size giving at most 10⁶ dies', w);
  const dies: Die[] = [];
  for (let j = jMin; j <= jMax; j++) {
    for (let i = iMin; i <= iMax; i++) {
      const x0 = ox + i * px - w / 2;
      const y0 = oy + j * py - h / 2;
      const fx = Math.max(x0 * x0, (x0 + w) * (x0 + w)); // farthest corner, squared coordinates
      const fy = Math.max(y0 * y0, (y0 + h) * (y0 + h));
      if (fx + fy > ru2) continue;
      dies.push({
        col: i,
        row: j,
        die: { xMinM: x0, yMinM: y0, xMaxM: x0 + w, yMaxM: y0 + h },
        active: {
          xMinM: x0 + act.xMinM,
          yMinM: y0 + act.yMinM,
          xMaxM: x0 + act.xMaxM,
          yMaxM: y0 + act.yMaxM,
        },
      });
    }
  }
  return { waferDiameterM: D, edgeExclusionM: ee, dies };
}

/**
 * Critical area of a rectangle for discs of radius R whose centres lie on the wafer (a disc of
 * radius R_w about the origin): area{ p : |p| ≤ R_w and dist(p, rect) ≤ R }.
 *
 * Where the whole Minkowski region lies on the wafer this is WH + 2R(W + H) + πR²; otherwise it is
 * the exact area of the rounded rectangle cut by the wafer circle, by Green's theorem
 * (A = ½∮(x dy − y dx)) over the boundary of the cut region: straight sides and arcs of the
 * rounded rectangle on the wafer and arcs of the wafer circle inside the rounded rectangle, each
 * integrated in closed form (constant work per call).
 *
 * Edge convention (voidcast's choice): random particles lie uniformly over the whole wafer face,
 * including the edge-exclusion ring (scans do not report it, but particles sit there all the same
 * and their voids reach inward); nothing lies beyond the wafer edge.
 *
 * @param rect the rectangle, m (wafer coordinates)
 * @param radiusM R, m, 0 ≤ R ≤ 1
 * @param waferRadiusM R_w, m, 0 < R_w ≤ 0.5
 * @returns area in m²
 * @throws ModelInputError for bad input
 * @example criticalAreaOnWafer({ xMinM: -5e-3, yMinM: -5e-3, xMaxM: 5e-3, yMaxM: 5e-3 }, 1e-3, 0.15) // 1.43142e-4 m²
 */
export function criticalAreaOnWafer(rect: Rect, radiusM: number, waferRadiusM: number): number {
  const fn = 'criticalAreaOnWafer';
  requireRect(fn, 'rect', rect);
  const r = requireNumber(fn, 'radiusM', radiusM, 'm', { min: 0, max: MAX_LENGTH_M });
  const rw = requireNumber(fn, 'waferRadiusM', waferRadiusM, 'm', { min: 0, minExclusive: true, max: 0.5 });
  return clippedArea(rect, r, rw);
}

function clippedArea(rect: Rect, r: number, rw: number): number {
  const { xMinM: x0, yMinM: y0, xMaxM: x1, yMaxM: y1 } = rect;
  const fx = Math.max(Math.abs(x0), Math.abs(x1));
  const fy = Math.max(Math.abs(y0), Math.abs(y1));
  if (Math.hypot(fx, fy) + r <= rw)
    return (x1 - x0) * (y1 - y0) + 2 * r * (x1 - x0 + y1 - y0) + Math.PI * r * r;
  // Green's theorem: the area of a region is ½∮(x dy − y dx) around its boundary (counter-clockwise).
  // The region P ∩ D (P: the rectangle grown by r, a rounded rectangle; D: the wafer disc) is
  // bounded by the parts of ∂P inside D and the parts of ∂D inside P, each run in its own
  // counter-clockwise sense. ∂P is four sides and four quarter circles of radius r about the
  // corners; the wafer circle's parts are found between the points where ∂P crosses it.
  const rw2 = rw * rw;
  const crossings: number[] = [];
  let twice = 0; // 2 × area
  const side = (ax: number, ay: number, bx: number, by: number) => {
    const dx = bx - ax;
    const dy = by - ay;
    const a = dx * dx + dy * dy;
    if (a === 0) return;
    // |A + t(B − A)|² ≤ R_w² for t between the roots of a t² + b t + c = 0
    const b = 2 * (ax * dx + ay * dy);
    const c = ax * ax + ay * ay - rw2;
    const disc = b * b - 4 * a * c;
    if (disc <= 0) return;
    const q = Math.sqrt(disc);
    const t1 = (-b - q) / (2 * a);
    const t2 = (-b + q) / (2 * a);
    const lo = Math.max(0, t1);
    const hi = Math.min(1, t2);
    if (!(hi > lo)) return;
    const px = ax + lo * dx;
    const py = ay + lo * dy;
    const qx = ax + hi * dx;
    const qy = ay + hi * dy;
    twice += px * qy - py * qx;
    if (t1 >= 0 && t1 <= 1) crossings.push(Math.atan2(py, px));
    if (t2 >= 0 && t2 <= 1) crossings.push(Math.atan2(qy, qx));
  };
  const corner = (cx: number, cy: number, a0: number) => {
    if (r === 0) return;
    const a1 = a0 + Math.PI / 2;
    const l = Math.hypot(cx, cy);
    // A point C + r(cos θ, sin θ) is on the wafer when l·cos(θ − φ) ≤ κ, κ = (R_w² − l² − r²)/(2r).
    const kappa = (rw2 - l * l - r * r) / (2 * r);
    const arc = (lo: number, hi: number) => {
      twice +=
        r * cx * (Math.sin(hi) - Math.sin(lo)) - r * cy * (Math.cos(hi) - Math.cos(lo)) + r * r * (hi - lo);
    };
    if (l === 0 || kappa >= l) {
      if (l > 0 || r <= rw) arc(a0, a1);
      return;
    }
    if (kappa <= -l) return;
    const phi = Math.atan2(cy, cx);
    const beta = Math.acos(kappa / l);
    // on the wafer: θ − φ in [β, 2π − β] (mod 2π); the copies of that arc that meet [a0, a1]
    const s0 = phi + beta;
    const len = 2 * Math.PI - 2 * beta;
    const n0 = Math.floor((a0 - s0 - len) / (2 * Math.PI));
    for (let n = n0; n <= n0 + 3; n++) {
      const s = s0 + 2 * Math.PI * n;
      const lo = Math.max(a0, s);
      const hi = Math.min(a1, s + len);
      if (!(hi > lo)) continue;
      arc(lo, hi);
      if (lo === s) crossings.push(Math.atan2(cy + r * Math.sin(lo), cx + r * Math.cos(lo)));
      if (hi === s + len) crossings.push(Math.atan2(cy + r * Math.sin(hi), cx + r * Math.cos(hi)));
    }
  };
  side(x0, y0 - r, x1, y0 - r);
  corner(x1, y0, -Math.PI / 2);
  side(x1 + r, y0, x1 + r, y1);
  corner(x1, y1, 0);
  side(x1, y1 + r, x0, y1 + r);
  corner(x0, y1, Math.PI / 2);
  side(x0 - r, y1, x0 - r, y0);
  corner(x0, y0, Math.PI);
  // The wafer circle between consecutive crossings: in P or not, as its midpoint is.
  const inP = (x: number, y: number) => {
    const dx = x < x0 ? x0 - x : x > x1 ? x - x1 : 0;
    const dy = y < y0 ? y0 - y : y > y1 ? y - y1 : 0;
    return dx * dx + dy * dy <= r * r;
  };
  if (crossings.length === 0) {
    if (inP(rw, 0)) twice += 2 * Math.PI * rw2; // the whole wafer lies in P
  } else {
    crossings.sort((p, q) => p - q);
    for (let i = 0; i < crossings.length; i++) {
      const a = crossings[i]!;
      const b = i + 1 < crossings.length ? crossings[i + 1]! : crossings[0]! + 2 * Math.PI;
      if (!(b > a)) continue;
      const m = (a + b) / 2;
      if (inP(rw * Math.cos(m), rw * Math.sin(m))) twice += rw2 * (b - a);
    }
  }
  return Math.max(0, twice / 2);
}

/** A particle detected at a known spot: it makes a void of radius R there if it survives to bonding. */
export interface DetectedVoid {
  /** Position in the layout's wafer frame (flipped wafer already mirrored), m. */
  xM: number;
  yM: number;
  radiusM: number;
  /** Probability the particle is still there at bonding (after the cleans that follow its scan), 0–1. */
  survival: number;
}

/**
 * Kill probability of every die in a layout:
 *   P_kill = 1 − exp(−Σ_k λ_k A_c,k) · Π_j (1 − s_j · [disc j reaches the active area])
 * where A_c,k is the critical area of the die's active rectangle for radius R_k, clipped to the
 * wafer (criticalAreaOnWafer), and the product runs over detected particles (touching counts).
 * Random and detected particles are independent.
 *
 * @param layout from dieLayout
 * @param terms random particles per size class (λ per m² of interface, void radius R)
 * @param detected detected particles with survival probabilities (default none)
 * @returns one probability per die, in layout order
 * @throws ModelInputError for bad terms, a detected particle off the wafer, or survival outside [0, 1]
 * @example dieKillProbabilities(layout, [{ densityPerM2: 10, radiusM: 3e-3 }])
 */
export function dieKillProbabilities(
  layout: DieLayout,
  terms: readonly DefectTerm[],
  detected: readonly DetectedVoid[] = [],
): number[] {
  const fn = 'dieKillProbabilities';
  requireLayout(fn, layout);
  requireTerms(fn, terms);
  const rw = layout.waferDiameterM / 2;
  if (!Array.isArray(detected)) throw new ModelInputError(fn, 'detected', '', 'an array', detected);
  detected.forEach((p, i) => {
    if (typeof p !== 'object' || p === null)
      throw new ModelInputError(fn, `detected[${i}]`, '', 'an object', p);
    const x = requireNumber(fn, `detected[${i}].xM`, p.xM, 'm', { min: -rw, max: rw });
    const y = requireNumber(fn, `detected[${i}].yM`, p.yM, 'm', { min: -rw, max: rw });
    if (x * x + y * y > rw * rw * (1 + 1e-12))
      throw new ModelInputError(fn, `detected[${i}]`, 'm', `a position on the wafer (radius ${rw} m)`, {
        x,
        y,
      });
    requireNumber(fn, `detected[${i}].radiusM`, p.radiusM, 'm', { min: 0, max: MAX_LENGTH_M });
    requireNumber(fn, `detected[${i}].survival`, p.survival, '', { min: 0, max: 1 });
  });
  const active = terms.filter((t) => t.densityPerM2 > 0);
  return layout.dies.map((d) => {
    let ad = 0;
    for (const t of active) ad += t.densityPerM2 * clippedArea(d.active, t.radiusM, rw);
    let keep = Math.exp(-ad);
    for (const p of detected)
      if (p.survival > 0 && hits(p.xM, p.yM, p.radiusM, d.active)) keep *= 1 - p.survival;
    return 1 - keep;
  });
}

/**
 * Expected number of killed dies on a bonded pair: Σ over dies of the kill probability
 * (dieKillProbabilities), i.e. Σ_dies [1 − exp(−Σ_k λ_k A_c,k) · Π_j (1 − s_j [hit])].
 *
 * @returns expected dies killed, between 0 and the number of dies
 * @throws ModelInputError as dieKillProbabilities
 * @example expectedDieKills(layout, [{ densityPerM2: 10, radiusM: 3e-3 }])
 */
export function expectedDieKills(
  layout: DieLayout,
  terms: readonly DefectTerm[],
  detected: readonly DetectedVoid[] = [],
): number {
  return dieKillProbabilities(layout, terms, detected).reduce((s, p) => s + p, 0);
}

function requireLayout(fn: string, layout: DieLayout): void {
  if (typeof layout !== 'object' || layout === null || !Array.isArray(layout.dies))
    throw new ModelInputError(fn, 'layout', '', 'a layout from dieLayout', layout);
  requireNumber(fn, 'layout.waferDiameterM', layout.waferDiameterM, 'm', {
    min: 0,
    minExclusive: true,
    max: 1,
  });
  requireNonNegative(fn, 'layout.edgeExclusionM', layout.edgeExclusionM, 'm');
  layout.dies.forEach((d, i) => {
    requireRect(fn, `layout.dies[${i}].active`, d.active);
  });
}
