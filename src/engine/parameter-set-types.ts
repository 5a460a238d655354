/**
 * The contract between learning (fits from the line's own scans and void inspections) and the
 * assessment: a parameter set is a versioned record of fitted values that a person adopts. While a
 * set is adopted, the assessment uses its values in place of the typed ones (tools file, products)
 * and says which set it used; the inputs' hash covers the set. With none adopted the typed values
 * apply.
 *
 * SI units as everywhere in the engine (types.ts). Every fitted value carries its interval, the
 * method, and the data it rests on (methods.md §1–§4 of the project reference: every fit returns an
 * interval and the data it came from; a fit with too little data proposes nothing).
 *
 * Intervals are two-sided 95 % intervals. A fit may add fields beyond these (its data points for a
 * chart, say): checkParameterValues keeps them with the value and the set's hash covers them. How a set replaces the typed values is in
 * src/engine/parameters.ts (applyParameterValues) and docs/engine.md §9; how it is stored, adopted and
 * reverted in src/store/parameter-sets.ts (append-only: a stored set is never changed, adoption is a
 * log of events whose latest decides).
 */

/** Where a fitted value came from: enough for a reader to find the rows again. */
export interface FitProvenance {
  /** Published method, e.g. "Garwood interval of the summed adders (Garwood 1936)". */
  method: string;
  /** Scan ids, inspection ids, pair ids or lot ids the fit used. */
  data: string[];
  /** How many independent observations the fit rests on (passes, particles, matched voids, pairs). */
  n: number;
  /** When the fit was made, UTC ms. */
  fittedAtMs: number;
}

/** Adders per wafer pass of one tool or chamber, fitted from before/after scans (methods.md §2). */
export interface FittedAdders extends FitProvenance {
  toolId: string;
  chamber: string | null;
  /** Mean adders per pass with diameter ≥ atDiameterM, count per wafer pass, and its 95 % interval. */
  countAbove: number;
  countLow: number;
  countHigh: number;
  /** Reference diameter of the count (the scans' threshold, or the larger of the two), m. */
  atDiameterM: number;
  /** Cumulative power-law slope α (Hill MLE) and its standard error. */
  slope: number;
  slopeSe: number;
  /** Passes the count rests on. */
  passes: number;
  /** Variance-to-mean ratio of the per-pass counts (1: Poisson); null with fewer than 2 passes. */
  dispersionIndex: number | null;
}

/** A clean's removal curve PRE(d) = E_max / (1 + (d50/d)^k), fitted on matched particles (methods.md §3). */
export interface FittedRemoval extends FitProvenance {
  cleanId: string;
  maxEfficiency: number;
  halfSizeM: number;
  /** Logistic width in decades of d (the engine's CleanInput form; k = 1 / (w ln 10)). */
  widthDecades: number;
  /** 95 % interval of d50, m, and of w, decades. */
  halfSizeLowM: number;
  halfSizeHighM: number;
  widthLowDecades: number;
  widthHighDecades: number;
}

/** The effective interface energy of a product from explained voids (methods.md §4). */
export interface FittedVoidSize extends FitProvenance {
  productId: string;
  /** Effective interface energy, J/m², in the product's convention, with its 95 % interval. */
  energyJm2: number;
  energyLowJm2: number;
  energyHighJm2: number;
  /** The same as a multiplier on the predicted void radius (1: the typed energy). */
  radiusMultiplier: number;
}

/** Voids no scanned particle explains, per bonded pair (methods.md §4). */
export interface FittedUnexplainedVoids extends FitProvenance {
  productId: string;
  /** Expected reportable voids per pair that no scanned particle explains, with its Garwood interval. */
  ratePerPair: number;
  rateLowPerPair: number;
  rateHighPerPair: number;
  /** Mean void area of those voids, m² (their unbonded area per void). */
  meanAreaM2: number;
  /** Mean equivalent diameter of those voids, m. */
  meanDiameterM: number;
}

/** The values of a parameter set. Each map may be empty: what a set leaves out keeps its typed value. */
export interface ParameterValues {
  /** By key `${toolId}` or `${toolId}/${chamber}`, as LineData.tools. */
  adders: Record<string, FittedAdders>;
  /** By clean id. */
  removal: Record<string, FittedRemoval>;
  /** By product id. */
  voidSize: Record<string, FittedVoidSize>;
  /** By product id. */
  unexplainedVoids: Record<string, FittedUnexplainedVoids>;
}

/**
 * proposed: never adopted; adopted: the set assessments use now (at most one); retired: adopted
 * once and no longer (another set was adopted after it, or the line went back to the typed values).
 * A retired set may be adopted again.
 */
export type ParameterSetState = 'proposed' | 'adopted' | 'retired';

/** A stored parameter set. */
export interface ParameterSet {
  id: number;
  /** Ascending version number, one per stored set. */
  version: number;
  /** A label people use ("fit of 12 Oct monitors"). */
  label: string;
  state: ParameterSetState;
  values: ParameterValues;
  /** What the fits said of the data they rejected as too thin (nothing proposed for those). */
  notes: string[];
  createdAtMs: number;
  createdBy: string;
  /** The latest adoption of this set, UTC ms, and who adopted it (null: never adopted). */
  adoptedAtMs: number | null;
  adoptedBy: string | null;
  /** When that adoption ended and who ended it (null: never adopted, or adopted now). */
  retiredAtMs: number | null;
  retiredBy: string | null;
  /** sha256 of the canonical serialisation of `values` (part of every assessment's inputs' hash). */
  valuesHash: string;
}

/** What an assessment says of the parameters it used. */
export interface ParameterSetRef {
  /** null: the typed values (tools file, products); no set adopted. */
  id: number | null;
  version: number | null;
  label: string;
  valuesHash: string | null;
}

/**
 * What the loader hands the engine besides the applied values (LineData.parameters): which set was
 * applied, and what has no typed counterpart to replace — the rate of voids no scanned particle
 * explains, per product (a source of its own in the assessment).
 */
export interface AppliedParameters {
  ref: ParameterSetRef;
  unexplainedVoids: Record<string, FittedUnexplainedVoids>;
}
