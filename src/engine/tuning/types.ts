/**
 * The tuning contract: scenarios (levers applied to a pair's or lot's inputs without touching stored
 * data), what-if results (scenario beside the as-is assessment), solvers and sensitivity of the call.
 * The pages (src/web, views/) build on these types; fields are only ever added.
 *
 * Units follow src/engine/types.ts: SI inside (m, s, J/m²), UTC ms for instants. The CLI and the
 * pages convert at their edges (nm, h).
 */
import type {
  Call,
  CarrierState,
  LotAssessment,
  PairAssessment,
  PairFigures,
  Pareto,
  Reason,
  SpecCheck,
} from '../types.ts';

// ───────────────────────────────────────── levers ─────────────────────────────────────────

/**
 * A clean's removal curve and passes. Every field is optional; at least one must be given.
 * Applies to every run of the clean on the subject's wafers (and to the modelled re-clean when the
 * product's re-clean runs this clean).
 */
export interface CleanLever {
  kind: 'clean';
  /** Clean id as the tools file names it ("CLN-RIN1"). */
  cleanId: string;
  /**
   * Extra runs of the clean at the end of each wafer's route (after its last step before bonding,
   * as a re-clean runs), 0 – 10, each with its tool's adders. They count as re-cleans of the wafer
   * (its re-clean count rises by as many), so the spec's re-clean limit applies to them.
   */
  extraPasses?: number;
  /** New half-removal diameter d50, m (> 0). */
  d50M?: number;
  /** New logistic width w, decades of diameter (> 0; smaller: steeper). */
  widthDecades?: number;
  /** New maximum removal E_max, 0 – 1. */
  maxEfficiency?: number;
  /**
   * Removal at a chosen size: the curve keeps its width and moves its d50 so that it removes
   * `efficiency` of particles of `diameterM` (E_max rises to `efficiency` when it was below it;
   * an efficiency at or above E_max means the curve's plateau reaches down to every size).
   */
  removalAt?: { diameterM: number; efficiency: number };
}

/** A wait (or transfer) at a location: every such step of the subject's wafers at that location. */
export interface WaitLever {
  kind: 'wait';
  locationId: string;
  /**
   * Duration of each such step, s (≥ 0). Shorter than recorded: the wafer leaves early and saw the
   * counters' air of the first part of its stay. Longer: the recorded air dose × durationS / recorded
   * duration (deposition is linear in time at a constant concentration, methods.md §5). The timeline
   * (Q-times, scan age, bond time) stays as recorded.
   */
  durationS?: number;
  /** The carrier during those steps. */
  carrier?: CarrierState;
  /** Isolation factor (room-to-carrier concentration ratio, ≥ 1) during those steps. */
  isolation?: number;
}

/** An area's air: the counter concentrations of a location scaled (every channel, every sample). */
export interface AirLever {
  kind: 'air';
  locationId: string;
  /** Factor on the concentrations (≥ 0). */
  scale?: number;
  /**
   * Target ISO 14644-1 class, 1 – 9 (decimals allowed): the air scaled by 10^(class − stated class)
   * (the class limits of ISO 14644-1 scale by ten per class at every size). Needs a stated class.
   */
  isoClass?: number;
}

/** A tool's (or chamber's) adders per wafer pass. */
export interface AddersLever {
  kind: 'adders';
  /** "TOOL" or "TOOL/CHAMBER" as the tools file keys them ("LACT-1/B"). */
  toolKey: string;
  /** Factor on the adder level (≥ 0). */
  factor?: number;
  /** New count per wafer per pass ≥ the tool's reference diameter (≥ 0; power-law adders only). */
  countAbove?: number;
}

/** The product's interface energy (its stated convention), J/m² (> 0). */
export interface EnergyLever {
  kind: 'energy';
  energyJm2: number;
}

/**
 * The pre-bond scan's detection threshold, m: defects below it are dropped and the tail below it
 * is extrapolated from it. Only a rise is possible (what lies below a recorded threshold is unknown).
 */
export interface ThresholdLever {
  kind: 'threshold';
  thresholdM: number;
}

/** Assess with another stored parameter set (null: the typed values, none adopted). */
export interface ParametersLever {
  kind: 'parameters';
  parameterSetId: number | null;
}

/** Multiplier on the nominal deposition velocity (the config's electrostatic factor), > 0. */
export interface DepositionLever {
  kind: 'deposition';
  factor: number;
}

/** Isolation factor of every closed (and purged) carrier, ≥ 1 (the config's value otherwise). */
export interface IsolationLever {
  kind: 'isolation';
  isolation: number;
}

/** Cumulative slope α of every scan's undetected tail (instead of the Hill fit per scan), > 0. */
export interface TailSlopeLever {
  kind: 'tail-slope';
  slope: number;
}

/** Factor on every clean's half-removal diameter d50 (> 0; above 1: weaker at small sizes). */
export interface RemovalScaleLever {
  kind: 'removal-scale';
  d50Factor: number;
}

/** Factor on every tool's adders (> 0). */
export interface AddersScaleLever {
  kind: 'adders-scale';
  factor: number;
}

export type Lever =
  | CleanLever
  | WaitLever
  | AirLever
  | AddersLever
  | EnergyLever
  | ThresholdLever
  | ParametersLever
  | DepositionLever
  | IsolationLever
  | TailSlopeLever
  | RemovalScaleLever
  | AddersScaleLever;

export type LeverKind = Lever['kind'];

/** A scenario: levers applied in order to the inputs (no lever: the inputs as stored). */
export interface Scenario {
  /** A name people use ("rinse at 50 nm, bay one class cleaner"); optional. */
  name?: string;
  levers: Lever[];
}

/** A lever that cannot be applied: names the lever (index and kind) and what is wrong. */
export class ScenarioError extends Error {
  override readonly name = 'ScenarioError';
  constructor(
    message: string,
    /** Index of the lever in the scenario (null: the scenario as a whole). */
    readonly leverIndex: number | null = null,
  ) {
    super(message);
  }
}

// ───────────────────────────────────────── what-if ─────────────────────────────────────────

/** One side (as-is or scenario) of a pair, the parts the what-if pages show. */
export interface PairSide {
  figures: PairFigures;
  specChecks: SpecCheck[];
  call: Call;
  reasons: Reason[];
  caution: string | null;
  pareto: Pareto;
  dominant: PairAssessment['dominant'];
}

/** Change scenario − as-is of the headline figures (central values). */
export interface FiguresDelta {
  voids: number;
  unbondedAreaM2: number;
  unbondedFraction: number;
  /** Killed dies in the spec's yield form (null: no die layout). */
  dieLoss: number | null;
}

export interface PairWhatIf {
  pairId: string;
  lotId: string;
  asOfMs: number;
  scenario: Scenario;
  /** Plain words, one per lever, of what the scenario changed ("CLN-RIN1: d50 26 → 15 nm"). */
  applied: string[];
  asIs: PairAssessment;
  whatIf: PairAssessment;
  delta: FiguresDelta;
  callChanged: boolean;
}

export interface LotWhatIf {
  lotId: string;
  asOfMs: number;
  scenario: Scenario;
  applied: string[];
  asIs: LotAssessment;
  whatIf: LotAssessment;
  /** Per pair: the two calls and the change of expected voids / die loss. */
  pairs: { pairId: string; asIsCall: Call; whatIfCall: Call; delta: FiguresDelta }[];
  /** Lot totals: scenario − as-is. */
  delta: { voids: number; dieKillsNB: number | null };
  callChanged: boolean;
}

export interface WaitingWhatIf {
  asOfMs: number;
  scenario: Scenario;
  /** Every waiting lot (some pair not yet bonded at asOfMs); lots a lever cannot apply to are in `skipped`. */
  lots: LotWhatIf[];
  skipped: { lotId: string; reason: string }[];
}

// ───────────────────────────────────────── solvers ─────────────────────────────────────────

export type SolverName = 'longest-wait' | 'clean-removal' | 'clean-d50' | 'extra-passes' | 'area-class';

/**
 * What "within spec" means for a solver: 'bound' (default) — every spec line's bound at the spec's
 * confidence, as the call uses; 'expected' — the central (expected) figures against the same limits.
 */
export type SolverBasis = 'bound' | 'expected';

/** The chain run forward at one lever value. */
export interface ForwardCheck {
  /** The lever value, in the solver's unit. */
  value: number;
  /** Every spec line of every pair met at the spec's confidence. */
  withinSpec: boolean;
  /** The call at this value (blocking reasons such as Q-time still hold a pair). */
  call: Call;
  /** Worst spec line: the bound and the limit (of the pair closest to failing). */
  worst: (SpecCheck & { pairId: string }) | null;
}

export interface SolverResult {
  solver: SolverName;
  /** What "within spec" meant (bounds at the spec's confidence, or expected values). */
  basis: SolverBasis;
  subject: { kind: 'pair' | 'lot'; id: string };
  /** What was solved for, in words ("longest wait at BOR-B2"). */
  question: string;
  /** 'found': a root within the bracket; the others: no answer, and `message` says why. */
  status: 'found' | 'fails-everywhere' | 'passes-everywhere';
  /** The answer in `unit` (null when none exists). */
  value: number | null;
  unit: 's' | 'fraction' | 'm' | 'passes' | 'class';
  /** The as-is value of the lever in `unit` (null: none, e.g. a location the route never visits). */
  current: number | null;
  /** value − current (null when either is null): how much room (or how far short) the as-is is. */
  margin: number | null;
  /** The bracket searched, in `unit` [from, to]. */
  bracket: [number, number];
  /** Absolute tolerance on `value`, in `unit`. */
  tolerance: number;
  /** Forward runs of the chain spent (bracketing and root finding). */
  iterations: number;
  /** The chain re-run at the answer (within spec) and just past it on the failing side. */
  forward: { atAnswer: ForwardCheck | null; pastAnswer: ForwardCheck | null };
  /** The answer or the reason there is none, in plain words. */
  message: string;
  /** Extra: for a wait still running at asOfMs, the latest bond time the answer allows, UTC ms. */
  latestBondTimeMs?: number | null;
}

// ───────────────────────────────────────── sensitivity ─────────────────────────────────────

export type SensitivityInput =
  | 'interface-energy'
  | 'tail-slope'
  | 'deposition-velocity'
  | 'carrier-isolation'
  | 'adders'
  | 'removal-curve';

export interface SensitivityRow {
  input: SensitivityInput;
  label: string;
  /** Unit of nominal/low/high/flip ("J/m²", "×", "1"). */
  unit: string;
  nominal: number;
  low: number;
  high: number;
  /** Where the range comes from (the parameter set's interval, a fit's interval, or a documented default). */
  rangeSource: string;
  /** Expected reportable voids (lot: summed) at low and high. */
  voidsAtLow: number;
  voidsAtHigh: number;
  /** Expected killed dies, spec's yield form (lot: NB total; null: no die layout) at low and high. */
  dieLossAtLow: number | null;
  dieLossAtHigh: number | null;
  callAtLow: Call;
  callAtHigh: Call;
  /** Every spec line of every pair met at the spec's confidence, at low and at high. */
  withinSpecAtLow: boolean;
  withinSpecAtHigh: boolean;
  /** max |Δ voids| over the range (the tornado's bar length and order). */
  swingVoids: number;
  /** The value where the call changes from the as-is call (null: no flip within range), and words. */
  flip: { value: number | null; call: Call | null; text: string };
  /**
   * The value where the spec verdict (within / outside spec) changes, found the same way — informative
   * when the call cannot flip (a Q-time or an excursion holds the pair whatever the figures).
   */
  specFlip: { value: number | null; withinSpec: boolean | null; text: string };
}

export interface SensitivityResult {
  subject: { kind: 'pair' | 'lot'; id: string };
  asOfMs: number;
  base: { voids: number; dieLoss: number | null; call: Call; withinSpec: boolean };
  /** Largest swing first. */
  rows: SensitivityRow[];
  /** Inputs the chain holds no range for here, with why. */
  notVaried: { input: string; reason: string }[];
}

// ───────────────────────────────────────── saved scenarios ─────────────────────────────────

export interface SavedScenario {
  id: number;
  name: string;
  /** The pair or lot it was made for (null: any). */
  target: { kind: 'pair' | 'lot'; id: string } | null;
  scenario: Scenario;
  createdBy: string;
  createdAtMs: number;
}
