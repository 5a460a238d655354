/**
 * What calibration from post-bond void inspections takes and returns (methods.md §4 of the project
 * reference): the bonded pairs' inspections, the predicted discs of their scanned particles, the
 * matches between the two, the fitted void-size constant and rate of unexplained voids, and the
 * leave-one-lot-out backtest. SI units throughout (metres, m², J/m²), instants in UTC ms.
 */
import type { FittedUnexplainedVoids, FittedVoidSize, ParameterValues } from '../parameter-set-types.ts';
import type { Estimate, LineData, LotInput } from '../types.ts';

// ───────────────────────────────────────── inputs ─────────────────────────────────────────

/** One post-bond void inspection as the loader reads it (positions already in the bond frame). */
export interface InspectionInput {
  inspectionId: string;
  pairId: string;
  method: 'infrared' | 'acoustic';
  stage: 'after-contact' | 'after-anneal';
  toolId: string | null;
  /** Smallest void the inspection reports, equivalent diameter, m. */
  smallestVoidM: number;
  /** Position error the inspection states, one σ per axis, m (null: not stated). */
  positionSigmaM: number | null;
  timeMs: number;
  voids: {
    count: number;
    /** Void centre in the bond frame (the bottom wafer's frame), m. */
    xM: Float64Array;
    yM: Float64Array;
    /** Equivalent diameter (of the void's area), m. */
    diameterM: Float64Array;
    /** The class the inspection gave each void ('particle', 'bubble', 'edge', 'unknown'). */
    classes: string[];
  };
}

/** A bonded lot with the inspections of its pairs, loaded for calibration. */
export interface CalibrationLotInput {
  lot: LotInput;
  line: LineData;
  /** Assessment time the pairs were loaded at (after every inspection: each pair counts as bonded). */
  asOfMs: number;
  /** Inspections per pair id (oldest first). */
  inspections: Record<string, InspectionInput[]>;
}

export interface CalibrationOptions {
  /**
   * Scanner position error, one σ per axis, m, when a scan states none (default
   * DEFAULT_SCANNER_SIGMA_M in calibration-match.ts).
   */
  scannerSigmaM?: number;
  /** Inspection position error when the inspection states none, m (default DEFAULT_INSPECTION_SIGMA_M). */
  inspectionSigmaM?: number;
  /** Fewest explained voids a void-size fit needs (default MIN_MATCHES_FOR_FIT). */
  minMatches?: number;
  /** Fewest pairs an unexplained-void rate needs (default MIN_PAIRS_FOR_RATE). */
  minPairs?: number;
  /** Monte Carlo draws of the assessments behind the figures (default: the engine's). */
  draws?: number;
  /** When the fit was made, UTC ms (recorded in the fitted values; default now). */
  nowMs?: number;
}

// ───────────────────────────────────────── matching ─────────────────────────────────────────

/** A scanned particle's predicted void at the interface, bond frame. */
export interface PredictedDisc {
  xM: number;
  yM: number;
  /** Void radius at the assessment's parameters, m. */
  rM: number;
  /** Probability the particle is still there at bonding (the later cleans' survivals). */
  survival: number;
  /** The particle's LSE diameter, m. */
  diameterM: number;
  wafer: 'top' | 'bottom';
  /** The predicted void is at least the inspection's smallest reportable void (2R ≥ D_min). */
  reportable: boolean;
  /** Index of the observed void it explains, or −1. */
  matchedVoid: number;
}

export type ObservedVoidClass = 'explained' | 'unexplained' | 'edge-exclusion';

/** An observed void with what the matching made of it. */
export interface ObservedVoid {
  xM: number;
  yM: number;
  diameterM: number;
  /** The inspection's own class of the void. */
  inspectionClass: string;
  match: ObservedVoidClass;
  /** The disc it was matched to (index into PairMatching.discs), or −1. */
  disc: number;
  /** Distance from the particle, m (null: unmatched). */
  distanceM: number | null;
}

export interface PairMatching {
  inspectionId: string;
  method: InspectionInput['method'];
  stage: InspectionInput['stage'];
  smallestVoidM: number;
  /** σ per axis used for the inspection and the scanner, m, and whether the inspection stated its own. */
  inspectionSigmaM: number;
  inspectionSigmaStated: boolean;
  scannerSigmaM: number;
  /** Match tolerance τ = 3.03·√(σ_insp² + σ_scan²) (99 % of true offsets), m. */
  toleranceM: number;
  voids: ObservedVoid[];
  discs: PredictedDisc[];
  explained: number;
  unexplained: number;
  /** Voids centred in the edge-exclusion annulus (left out of every figure, as the assessment's are). */
  inEdgeExclusion: number;
  /** Reportable predicted discs with no void, and the same weighted by the particles' survival. */
  notSeen: number;
  notSeenExpected: number;
  /** Σ survival over the reportable discs: the voids the scanned particles are expected to make. */
  expectedFromScanned: number;
  /** Expected chance matches: observed voids landing in some disc's window by accident. */
  chanceMatches: number;
}

// ───────────────────────────────────────── fits ─────────────────────────────────────────

/** One explained void, as the void-size fit uses it. */
export interface SizeMatch {
  pairId: string;
  lotId: string;
  productId: string;
  /** Observed void radius (half the equivalent diameter), m. */
  observedRadiusM: number;
  /** The particle's LSE diameter, m. */
  particleDiameterM: number;
  /** The inspection's smallest reportable void radius, m (the fit's truncation point). */
  truncationRadiusM: number;
}

export interface VoidSizeFitResult {
  productId: string;
  /** Explained voids the fit rests on. */
  n: number;
  /** null: too little data (see `note`). */
  fitted: FittedVoidSize | null;
  /** Typed energy in the product's convention, J/m². */
  typedEnergyJm2: number;
  /** Interval of the radius multiplier (at the energy interval's ends), and how many matches were in each regime at the fit. */
  multiplierLow: number | null;
  multiplierHigh: number | null;
  thickPlate: number;
  smallGap: number;
  /** Residual scatter of ln R, σ̂ (null without a fit). */
  residualSigma: number | null;
  /** Per match: ln R_obs − ln R_pred at the typed and the fitted energy. */
  residuals: {
    pairId: string;
    typed: number;
    fitted: number | null;
    particleDiameterM: number;
    observedRadiusM: number;
  }[];
  note: string | null;
}

/** Voids no scanned particle explains against what the assessment's other sources predict. */
export interface UnexplainedFitResult {
  productId: string;
  pairs: number;
  /** Unexplained voids observed inside the bonded area, in total and per pair with its Garwood 95 % interval. */
  observed: number;
  observedPerPair: Estimate;
  /** Expected reportable voids per pair from the undetected tail alone, and from every source the scans do not see (tail, tool adders, waits, incoming). */
  tailPerPair: number;
  unscannedPerPair: number;
  /** The tail's prediction lies outside the observed interval. */
  tailDisagrees: boolean;
  /** The unscanned sources' prediction lies outside the observed interval. */
  unscannedDisagrees: boolean;
  /** The excess over the unscanned sources (the source of its own an assessment adds). */
  fitted: FittedUnexplainedVoids | null;
  note: string | null;
  /** Plain words of the comparison. */
  comparison: string;
}

// ───────────────────────────────────────── results ─────────────────────────────────────────

/** Observed figures of a pair's inspection, inside the bonded area (the assessment's basis). */
export interface ObservedFigures {
  voids: number;
  unbondedAreaM2: number;
  /** Dies whose critical area (pad or die) an observed void touches (null: no die layout). */
  dieKills: number | null;
}

/**
 * Predicted figures of a pair as its inspection sees them: the assessment's reportable voids (at the
 * inspection's smallest void), and the area and die kills of those voids alone
 * (calibration-visible.ts) — the assessment's own area and die kills also count voids too small to see.
 */
export interface PredictedFigures {
  voids: Estimate;
  unbondedAreaM2: Estimate;
  /** Killed dies in the spec's yield model (null: no die layout). */
  dieKills: Estimate | null;
}

export interface PairCalibration {
  pairId: string;
  lotId: string;
  productId: string;
  matching: PairMatching;
  observed: ObservedFigures;
  predicted: PredictedFigures;
  /** The assessment's own figures (every void, seen or not): unbonded area and die kills as the call uses them. */
  assessed: PredictedFigures;
  /** Expected reportable voids from the tail and from every unscanned source (typed values). */
  tailVoids: number;
  unscannedVoids: number;
  /** The other inspections of the pair, not used (one per pair: the finest). */
  otherInspections: string[];
}

export interface ProductCalibration {
  productId: string;
  voidSize: VoidSizeFitResult;
  unexplained: UnexplainedFitResult;
}

export interface CalibrationReport {
  fittedAtMs: number;
  lots: string[];
  pairs: PairCalibration[];
  products: ProductCalibration[];
  /** What the fits propose (empty maps where a fit rests on too little data). */
  values: ParameterValues;
  /** The too-little-data notes and the data left out, in words. */
  notes: string[];
  /** How matching and fitting were done, in words (for the page and the CLI). */
  method: string[];
}

export interface BacktestPair {
  pairId: string;
  lotId: string;
  observed: ObservedFigures;
  before: PredictedFigures;
  /** null when the other lots give nothing to fit. */
  after: PredictedFigures | null;
}

export interface Coverage {
  /** Fraction of observed values inside the predicted 95 % interval, and how many were judged. */
  voids: { inside: number; n: number };
  unbondedArea: { inside: number; n: number };
  dieKills: { inside: number; n: number };
}

export interface BacktestLot {
  lotId: string;
  /** The lots the applied values were fitted on. */
  fittedOn: string[];
  values: ParameterValues;
  notes: string[];
  /** Sums over the lot's pairs. */
  observedVoids: number;
  predictedVoidsBefore: number;
  predictedVoidsAfter: number | null;
}

export interface BacktestReport {
  lots: BacktestLot[];
  pairs: BacktestPair[];
  coverageBefore: Coverage;
  coverageAfter: Coverage;
  notes: string[];
  method: string[];
}
