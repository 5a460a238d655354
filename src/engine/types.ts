/**
 * The assessment engine's contract: what the loader hands the pure engine (inputs) and what the
 * engine returns to the CLI, the JSON API and the pages (results).
 *
 * Conventions used by every field below:
 * - SI units unless the name says otherwise: lengths in metres (`…M`), areas in m² (`…M2`),
 *   durations in seconds (`…S`), concentrations in particles per m³ of air (`…PerM3`).
 * - Instants are UTC milliseconds since the Unix epoch (`…Ms`), as the store keeps them.
 * - Sizes are particle diameters d; scanner sizes are latex-sphere-equivalent (LSE) diameters.
 * - Wafer coordinates: origin at the wafer centre, x to the right and y up with the notch down,
 *   seen from the front (device) side. Every position in a result is in the *bond frame*, which
 *   is the bottom wafer's frame; top-wafer positions are mirrored into it (see PairInput).
 * - A `Spectrum` is a Float64Array of SPECTRUM_BIN_COUNT (48) bins, 10 nm – 100 µm
 *   (src/model/spectrum.ts). In results spectra are plain `number[]` so they serialise to JSON.
 * - Every identifier is the human-readable id the data files use (lot "L2401", wafer "L2401-07").
 *
 * Stability: engineer F builds the pages from the result types; fields are only ever added.
 */
import type { Spectrum } from '../model/spectrum.ts';
import type { AppliedParameters, ParameterSetRef } from './parameter-set-types.ts';

// ───────────────────────────────────────── inputs ─────────────────────────────────────────

/** A power-law size distribution stated the way fabs state adders and incoming levels. */
export interface PowerLawLevel {
  /** Expected particles per wafer with diameter ≥ atDiameterM. */
  countAbove: number;
  /** Reference diameter of countAbove, m (e.g. the scan threshold 45e-9). */
  atDiameterM: number;
  /** Cumulative power-law slope α in N(≥ d) ∝ d^(−α), dimensionless (ISO 14644-1 nominal 2.08). */
  slope: number;
  /** Smallest diameter the level applies to, m (null: the engine's tail floor). */
  fromM: number | null;
}

/** Detected particles of one surface scan, columnar (typed arrays, one entry per defect). */
export interface DetectedParticles {
  /** Number of defects (length of every array). */
  count: number;
  /** Defect x from the wafer centre, m, in this wafer's own frame. */
  xM: Float64Array;
  /** Defect y from the wafer centre, m, in this wafer's own frame. */
  yM: Float64Array;
  /** LSE diameter, m. */
  diameterM: Float64Array;
}

/** The most recent surface scan of a wafer before bonding. */
export interface ScanInput {
  scanId: string;
  /** When the scan was taken, UTC ms. */
  timeMs: number;
  /** Inspection tool id (label only). */
  toolId: string | null;
  recipe: string | null;
  /** Detection threshold x_m, LSE diameter, m. Defects below it are not reported. */
  thresholdM: number;
  /** Edge exclusion of the scan, m: the scanned annulus ends this far inside the wafer edge. */
  edgeExclusionM: number;
  /** Only defects classed as particles (or unknown) — pits and scratches do not make particle voids. */
  particles: DetectedParticles;
}

export type LedgerStepKind = 'process' | 'clean' | 'activation' | 'inspection' | 'wait' | 'transfer' | 'bond';

/** How the wafer was shielded during a step. */
export type CarrierState = 'open' | 'closed' | 'purged' | 'in-tool';

/** Orientation of the wafer's bonding face during an exposure (deposition velocity depends on it). */
export type FaceOrientation = 'face-up' | 'face-down' | 'vertical';

/** One step of a wafer's exposure ledger. */
export interface LedgerStepInput {
  /** Order within the wafer's route (ascending = later). */
  seq: number;
  /** Step name as the route calls it ("post-CMP clean", "Q-time wait"). */
  step: string;
  kind: LedgerStepKind;
  /** Tool id (null for a wait on a shelf or stocker). */
  toolId: string | null;
  chamber: string | null;
  /** For a clean step: which clean (removal curve) ran; resolved by the loader from tool/recipe. */
  cleanId: string | null;
  /** Step start, UTC ms. */
  startMs: number;
  /** Step end, UTC ms; null while the step is still running (the engine uses the assessment time). */
  endMs: number | null;
  /** The location whose air the wafer saw during the step (null: none recorded). */
  locationId: string | null;
  carrier: CarrierState;
  /** Face orientation; the ledger default is face up in an open cassette. */
  orientation: FaceOrientation;
  /**
   * What-if only (src/engine/tuning, never stored): this wait or transfer lasts this long, s. Shorter
   * than recorded, it ends early and its air is the counters' over its first part; longer, its air
   * dose is the recorded dose × scenarioDurationS / recorded duration (deposition is linear in time
   * at a constant concentration). Absent: as recorded.
   */
  scenarioDurationS?: number;
  /** What-if only: the isolation factor during this step (≥ 1). Absent: the config's for its carrier. */
  scenarioIsolation?: number;
}

/** One wafer with everything the chain needs. */
export interface WaferInput {
  waferId: string;
  lotId: string;
  /** Most recent surface scan before bonding; null when the wafer was never scanned. */
  latestScan: ScanInput | null;
  /** The wafer's ledger, in seq order (the engine applies the steps after the scan). */
  ledger: LedgerStepInput[];
  /** Re-cleans this wafer already had. */
  recleanCount: number;
}

/** A pair to bond (or bonded): which wafer goes on top and how it is placed. */
export interface PairInput {
  pairId: string;
  lotId: string;
  productId: string;
  top: WaferInput;
  bottom: WaferInput;
  /**
   * Axis of the top wafer's own frame about which it is flipped face-down onto the bottom wafer:
   * 'y' maps (x, y) → (−x, y); 'x' maps (x, y) → (x, −y).
   */
  flipAxis: 'x' | 'y';
  /** Rotation of the flipped top wafer about the centre, radians, counter-clockwise, applied after the flip. */
  rotationRad: number;
  /** Offset of the top wafer in the bond frame, m, applied after the rotation. */
  offsetXM: number;
  offsetYM: number;
  /** Bonder tool (its adders count once per wafer unless the wafer's ledger has a bond step). */
  bonderToolId: string | null;
  /** Bond time, UTC ms; null for a pair not yet bonded (the assessment time is used). */
  bondTimeMs: number | null;
  /** Smallest void the pair's void inspection reports, equivalent diameter, m (null: the spec's). */
  smallestReportableVoidM: number | null;
}

/** Which closed-form void model a product's stack uses (plate mechanics, Tong & Gösele 1999). */
export type StackModel = 'two-flexible-plates' | 'textbook-one-flexible' | 'die-on-rigid-wafer';

export interface StackInput {
  model: StackModel;
  /** Top wafer (or die) thickness, m. */
  topThicknessM: number;
  /** Bottom wafer thickness, m. */
  bottomThicknessM: number;
  /** Plate modulus E' = E/(1 − ν²), Pa (155.4e9 for (100) Si, Hopcroft et al. 2010). */
  plateModulusPa: number;
}

/** The bonding-surface preparation and its interface energy. */
export interface SurfacePrepInput {
  /** Preset name ("hybrid-dielectric", "plasma-activated", "hydrophilic", "hydrophobic"). */
  name: string;
  /** Interface energy used for voids at the inspection stage, J/m². */
  energyJm2: number;
  /** Convention of energyJm2: per-surface γ (razor-blade) or work of adhesion W = 2γ. */
  convention: 'per-surface' | 'work-of-adhesion';
}

export interface DieLayoutInput {
  /** Die width and height, m. */
  widthM: number;
  heightM: number;
  /** Die pitch (die + street), m. */
  pitchXM: number;
  pitchYM: number;
  /** Lower-left corner of the die whose grid index is (0, 0), m, bond frame. */
  originXM: number;
  originYM: number;
  /**
   * Pad-array region within a die (hybrid bonding: a void there kills the die), m, relative to the
   * die's lower-left corner; null: the whole die is critical.
   */
  pad: { xM: number; yM: number; widthM: number; heightM: number } | null;
}

export interface SpecInput {
  /** Version label of the spec (kept in the sign-off record). */
  version: string;
  /** Most reportable voids allowed per pair at the stated confidence (null: not in the spec). */
  maxVoids: number | null;
  /** Most unbonded area allowed as a fraction of the bonded area (0–1; null: not in the spec). */
  maxUnbondedFraction: number | null;
  /** Least die yield allowed (0–1; null: not in the spec). */
  minDieYield: number | null;
  /** Which yield form the die-yield spec uses. */
  yieldModel: 'poisson' | 'negative-binomial';
  /** Confidence of the call (e.g. 0.95): the figure's upper (or lower) bound at it must meet the spec. */
  confidence: number;
  /** Smallest reportable void diameter when the pair's inspection does not state one, m. */
  smallestReportableVoidM: number;
  /** Q-time limits: time from the end of the last step of `fromKind` to bonding, s. */
  qTimes: { fromKind: LedgerStepKind; maxS: number; label: string }[];
  /** Most re-cleans a wafer may have in total. */
  maxRecleans: number;
  /** Oldest scan (scan time to bond) the call accepts, s (null: any age). */
  maxScanAgeS: number | null;
  /** When true, an unscanned wafer is a hold (else it starts from the incoming level, flagged). */
  scanRequired: boolean;
}

export interface ProductInput {
  productId: string;
  name: string;
  /** Wafer diameter, m (0.3 for 300 mm). */
  waferDiameterM: number;
  /** Edge exclusion for dies and bonded area, m. */
  edgeExclusionM: number;
  stack: StackInput;
  surfacePrep: SurfacePrepInput;
  /** Particle height factor k_h in h = k_h·d (1 for compact particles, < 1 for flakes). */
  heightFactor: number;
  /** Die layout; null for a blanket (no dies) product. */
  die: DieLayoutInput | null;
  /** Negative-binomial cluster parameter α (Stapper), dimensionless; default 1 [memory value]. */
  clusterAlpha: number;
  /** Assumed surface level of an unscanned wafer at its first ledger step. */
  incoming: PowerLawLevel;
  /** The designated pre-bond clean a re-clean would run (null: no re-clean possible). */
  recleanCleanId: string | null;
  spec: SpecInput;
}

/** A tool's (or chamber's) adders per wafer pass. */
export interface ToolInput {
  toolId: string;
  chamber: string | null;
  name: string;
  /** Adders per wafer pass, per wafer, as a power law (null: the tool adds nothing known). */
  adders: PowerLawLevel | null;
  /** Relative uncertainty of the adder level: 95 % of passes within ×/÷ this factor (≥ 1). */
  adderUncertaintyFactor: number;
  /** Adders per pass stated per size band instead of a power law (used when `adders` is null). */
  adderBands?: { fromM: number; toM: number; count: number }[] | null;
}

/** A clean's removal-efficiency curve (logistic in log d — a modelling choice, Rooney, Pui & Grant 1990 data). */
export interface CleanInput {
  cleanId: string;
  name: string;
  /** Tool that runs the clean (its adders apply after the removal). */
  toolId: string | null;
  /** Maximum removal efficiency at large sizes, 0–1. */
  maxEfficiency: number;
  /** Diameter at which removal is half of maxEfficiency, m. */
  halfSizeM: number;
  /**
   * Logistic width w in decades of diameter: PRE(d) = E_max / (1 + exp(−(log10 d − log10 d50) / w))
   * (larger: a softer transition; the steepness in ln d is k = 1/(w·ln 10)).
   */
  widthDecades: number;
  /**
   * Measured before/after counts per size band instead of the logistic parameters; when present and
   * non-empty the logistic curve is fitted to them (binomial maximum likelihood) and used.
   */
  removalBands?: { fromM: number; toM: number; before: number; after: number }[] | null;
}

/** Alert and action levels of a location: concentration ≥ a size. */
export interface LocationLevels {
  /** Size the levels refer to, m. */
  atDiameterM: number;
  alertPerM3: number | null;
  actionPerM3: number | null;
}

export interface LocationInput {
  locationId: string;
  name: string;
  /** Environment type ("open room", "mini-environment", "EFEM", "load port", "purged carrier"). */
  environment: string;
  /** Target ISO 14644-1 class (null: unclassified). */
  isoClass: number | null;
  /** Downflow air velocity over a horizontal wafer, m/s (null: the engine default 0.3 m/s). */
  airVelocityMps: number | null;
  levels: LocationLevels | null;
}

/** Sample flags (bitmask in CounterSeriesInput.flags). */
export const SAMPLE_FLAG = {
  /** Flow, laser or other instrument fault: the sample is not used (treated as a gap). */
  fault: 1,
  /** Saturation / coincidence: the counts are a lower bound (used, reported). */
  lowerBound: 2,
  /** Sentinel or repeated identical rows: not used (treated as a gap). */
  sentinel: 4,
} as const;

/**
 * Counter samples of one location in the loaded window, columnar, in start order.
 * Concentrations are cumulative (≥ channel size) in particles per m³, one row of `channelSizesM.length`
 * values per sample (row-major).
 */
export interface CounterSeriesInput {
  locationId: string;
  /** Channel lower sizes, ascending, m (typical 0.1, 0.2, 0.3, 0.5, 1, 5 µm). */
  channelSizesM: Float64Array;
  /** Sample start, UTC ms. */
  startMs: Float64Array;
  /** Sample end, UTC ms. */
  endMs: Float64Array;
  /** n × channels cumulative concentrations, particles/m³. */
  cumulativePerM3: Float64Array;
  /** Per-sample SAMPLE_FLAG bitmask. */
  flags: Uint8Array;
}

/** Everything shared by the pairs of an assessment: the line's reference data. */
export interface LineData {
  products: Record<string, ProductInput>;
  /** Tools by key `${toolId}` or `${toolId}/${chamber}` (chamber entry preferred when present). */
  tools: Record<string, ToolInput>;
  cleans: Record<string, CleanInput>;
  locations: Record<string, LocationInput>;
  /** Counter samples by location id, covering at least every exposure interval of the pairs. */
  counters: Record<string, CounterSeriesInput>;
  /**
   * The adopted parameter set, when one is: its values already replace the typed ones above
   * (src/engine/parameters.ts); this names the set and carries what has no typed counterpart (the
   * rate of voids no scanned particle explains). Absent: the typed values, nothing adopted.
   */
  parameters?: AppliedParameters;
}

export interface LotInput {
  lotId: string;
  productId: string;
  pairs: PairInput[];
}

/** Engine settings; every one has a stated default (DEFAULT_ASSESS_CONFIG in src/engine/config.ts). */
export interface AssessConfig {
  /** Smallest diameter the scan tail is extrapolated down to, m. */
  tailFloorM: number;
  /**
   * Fewest detected particles at or above a scan's threshold for a Hill fit of its tail; with fewer,
   * the tail takes the product's incoming slope (stated in the notes).
   */
  minTailParticles: number;
  /** Monte Carlo draws for the intervals. */
  draws: number;
  /** Seed of the Monte Carlo (same inputs + seed → same intervals). */
  seed: number;
  /** Isolation factor of a closed carrier (room-to-carrier concentration ratio, ≥ 1). */
  closedIsolation: number;
  /** Isolation factor of a purged carrier. */
  purgedIsolation: number;
  /** Electrostatic multiplier on the diffusive deposition velocity, nominal (1: none). */
  depositionFactor: number;
  /** 95 % of the deposition uncertainty within ×/÷ this factor. */
  depositionUncertaintyFactor: number;
  /** Small-gap void-radius constant multiplier, nominal (calibratable). */
  smallGapFactor: number;
  /** 95 % of the small-gap constant's uncertainty within ×/÷ this factor. */
  smallGapUncertaintyFactor: number;
  /** Fraction of an exposure interval without usable samples above which the data count as missing (hold). */
  maxGapFraction: number;
  /** Default downflow velocity when a location states none, m/s. */
  defaultAirVelocityMps: number;
  /**
   * An effective deposition velocity for every size and orientation, m/s (e.g. measured on witness
   * wafers); null: the physics (settling + stagnation-flow diffusion, Hinds 1999) per size bin.
   */
  fixedDepositionVelocityMps: number | null;
  /** Particle density for deposition, kg/m³. */
  particleDensityKgM3: number;
  /** Most void-map discs returned (largest expected void area first); the rest are counted. */
  maxMapDiscs: number;
  /** A die is shown killed when its kill probability reaches this. */
  killedDieThreshold: number;
}

export interface AssessOptions {
  /** Assessment time, UTC ms (Q-time and running steps end here). */
  asOfMs: number;
  config?: Partial<AssessConfig>;
  /** 'full' includes void map, die grid and spectra; 'summary' omits them (lot tables). */
  detail?: 'full' | 'summary';
}

// ───────────────────────────────────────── results ─────────────────────────────────────────

/** A figure with its interval at `confidence` (two-sided, from the Monte Carlo). */
export interface Estimate {
  /** Central (expected) value, in the unit of the field that holds it. */
  value: number;
  low: number;
  high: number;
  /** Two-sided confidence of [low, high], e.g. 0.95. */
  confidence: number;
}

/**
 * 'unexplained': voids no scanned particle explains, at the rate a calibration from the line's void
 * inspections measured (present only while an adopted parameter set states it for the product).
 */
export type SourceKind = 'detected' | 'tail' | 'incoming' | 'tool' | 'wait' | 'unexplained';

/** One contribution to the particles at the bond interface, with its downstream figures. */
export interface SourceContribution {
  /** Stable key, unique within the pair, e.g. "top:wait:3", "bottom:tool:5", "top:tail". */
  key: string;
  kind: SourceKind;
  /** Plain-words label ("Wait at Bay 3, 2.0 h, open cassette (top wafer)"). */
  label: string;
  /** 'pair': a source of the bonded pair as a whole (voids no scanned particle explains). */
  wafer: 'top' | 'bottom' | 'pair';
  /** The wafer's id; for wafer 'pair', the pair's id. */
  waferId: string;
  /** Group for the dominant-source call: "tool:ACT-1", "location:BAY-3", "detected", "tail", "incoming". */
  groupKey: string;
  groupLabel: string;
  toolId: string | null;
  chamber: string | null;
  locationId: string | null;
  scanId: string | null;
  /** Ledger step seq that produced it (null for scan particles / incoming). */
  stepSeq: number | null;
  /** The last clean this contribution passed through before bonding (null: none after it arose). */
  lastCleanId: string | null;
  /** Expected particles of this source at the interface, all sizes on the grid. */
  particles: number;
  /** Expected reportable voids, count. */
  expectedVoids: number;
  /** Linearised unbonded area λ_k·πR_k² summed, m² (the Boolean-model exponent × area). */
  unbondedAreaM2: number;
  /** Expected die-kill events (linearised λ·A_c, or Σ s·[disc hits die] for detected), dies. */
  dieKillEvents: number;
  /** Shares of the pair's totals (each set of shares sums to 1 over the contributions). */
  shareVoids: number;
  shareArea: number;
  shareDieLoss: number;
}

export interface ParetoEntry {
  key: string;
  label: string;
  expectedVoids: number;
  unbondedAreaM2: number;
  dieKillEvents: number;
  /** Share of the pair's (or lot's) total of the Pareto's metric (see Pareto.metric). */
  share: number;
}

export interface Pareto {
  /** What `share` and the ordering use. */
  metric: 'expectedVoids' | 'dieKillEvents';
  /** Per tool/chamber: adders per pass (including the bonder and clean tools). */
  byTool: ParetoEntry[];
  /** Per location: deposition during waits and transfers. */
  byWaitLocation: ParetoEntry[];
  /**
   * Per clean: the residual — what a perfect clean at that point would have removed but this one
   * left (contributions whose last clean it was). Key "none": what arose after the last clean.
   */
  byClean: ParetoEntry[];
  /** Per size band of the particle diameter at the interface. */
  bySizeBand: (ParetoEntry & { fromM: number; toM: number })[];
  /** Per source kind (detected, tail, incoming, tool, wait, unexplained). */
  byKind: ParetoEntry[];
}

export interface DominantSource {
  groupKey: string;
  label: string;
  kind: SourceKind;
  /** Share of the metric, 0–1. */
  share: number;
  metric: 'expectedVoids' | 'dieKillEvents';
  /** The clean most of this group last passed through (null: none). */
  lastCleanId: string | null;
}

/** One predicted void disc from a detected particle, bond frame. */
export interface VoidDisc {
  /** Centre, m, bond frame. */
  xM: number;
  yM: number;
  /** Void radius, m. */
  rM: number;
  /** Probability the particle is still there at bonding (product of survivals of later cleans). */
  survival: number;
  /** Key of the SourceContribution (detected particles of which wafer's scan). */
  sourceKey: string;
  wafer: 'top' | 'bottom';
  /** Particle LSE diameter, m. */
  diameterM: number;
}

export interface DieCell {
  /** Grid indices (column i along x, row j along y). */
  col: number;
  row: number;
  /** Lower-left corner of the die, m, bond frame. */
  xM: number;
  yM: number;
  /** Kill probability from detected particles at their positions. */
  killProbabilityDetected: number;
  /**
   * Expected kill events on this die from the particles not seen at their positions (undetected
   * tail, adders, deposition, assumed incoming), spread uniformly over the wafer face: Σ_k λ_k·A_k
   * with the critical area A_k of the pad (or die) grown by the void radius, cut at the wafer edge.
   */
  randomKillMean: number;
  /** Kill probability from all sources, Poisson form for the random part: 1 − (1 − P_det)·e^(−m). */
  killProbabilityPoisson: number;
  /** Kill probability from all sources, negative-binomial form: 1 − (1 − P_det)·(1 + m/α)^(−α). */
  killProbabilityNB: number;
  /** killProbability (of the spec's yield model) ≥ the configured threshold. */
  killed: boolean;
}

export interface DieGrid {
  widthM: number;
  heightM: number;
  pitchXM: number;
  pitchYM: number;
  pad: DieLayoutInput['pad'];
  /**
   * The spec's yield form: the kill probability the map shows and `killed` uses; the sum of it over
   * the dies is the pair's expected die loss in that form (figures.dieKillsPoisson / dieKillsNB).
   */
  yieldModel: 'poisson' | 'negative-binomial';
  /** The kill probability at or above which a die is `killed` (config.killedDieThreshold), 0–1. */
  killedThreshold: number;
  /** Whole dies inside the edge exclusion. */
  dies: DieCell[];
}

export interface VoidMap {
  waferDiameterM: number;
  edgeExclusionM: number;
  discs: VoidDisc[];
  /** Detected-particle discs left out of `discs` (smallest expected area first), count. */
  discsOmitted: number;
  /** Die grid with kill probabilities; null for a product without dies. */
  dieGrid: DieGrid | null;
}

export interface SpectrumSeries {
  sourceKey: string;
  label: string;
  kind: SourceKind;
  /** Expected particles per bin at the interface (both wafers of this source), count per bin. */
  counts: number[];
}

export interface StackedSpectrum {
  /** 49 bin edges, m. */
  edgesM: number[];
  /** 48 bin centres, m. */
  centresM: number[];
  /** Void radius at each bin centre, m. */
  voidRadiusM: number[];
  series: SpectrumSeries[];
}

/** The headline figures of a pair (or of one scenario: as is, or after a re-clean). */
export interface PairFigures {
  /** Expected particles at the interface, both wafers, all sizes on the grid. */
  particles: number;
  /** Reportable voids (diameter ≥ smallestReportableVoidM), count. */
  voids: Estimate;
  /** Unbonded area, m² (Boolean model of overlapping discs). */
  unbondedAreaM2: Estimate;
  /** Unbonded area as a fraction of the bonded area inside the edge exclusion, 0–1. */
  unbondedFraction: Estimate;
  /** Killed dies, Poisson form for the random part (null: no die layout). */
  dieKillsPoisson: Estimate | null;
  /** Killed dies, negative-binomial form (cluster α of the product). */
  dieKillsNB: Estimate | null;
  /** Die yield, fraction of dies not killed (spec's yield model; null: no die layout). */
  dieYield: Estimate | null;
  /** Dies on the wafer inside the edge exclusion (0: no die layout). */
  dieCount: number;
}

export type Call = 'bond' | 're-clean' | 'hold';

export interface Reason {
  /** Machine code: "within-spec", "fails-spec", "q-time", "action-level", "data-missing", "stale-scan",
   *  "unscanned", "reclean-limit", "reclean-fixes", "reclean-insufficient", "counter-gap", "lower-bound". */
  code: string;
  /** Plain words, e.g. "Q-time activation → bond is 9.2 h; the limit is 8 h." */
  text: string;
  /** True when this reason forces a hold. */
  blocking: boolean;
}

/** A data-quality note from the chain (gap filled, flagged sample, unscanned wafer). */
export interface DataNote {
  code: string;
  text: string;
  waferId: string | null;
  locationId: string | null;
  stepSeq: number | null;
}

export interface QTimeStatus {
  label: string;
  waferId: string;
  fromKind: LedgerStepKind;
  /** Elapsed time from the end of the last step of fromKind to bonding (or now), s; null: no such step. */
  elapsedS: number | null;
  limitS: number;
  exceeded: boolean;
}

export interface ExposureExcursion {
  waferId: string;
  locationId: string;
  stepSeq: number;
  /** Highest concentration ≥ the level size while the wafer was exposed, particles/m³. */
  peakPerM3: number;
  actionPerM3: number;
  /** Start of the first sample above the action level, UTC ms. */
  firstMs: number;
}

export interface RecleanScenario {
  cleanId: string;
  cleanLabel: string;
  /** Whether the count limit allows it (both wafers below spec.maxRecleans). */
  allowed: boolean;
  /** Figures after one more run of the designated clean on both wafers (with its tool's adders). */
  after: PairFigures;
  /** The after-figures meet the spec at its confidence. */
  meetsSpec: boolean;
}

/** The caution that travels with every re-clean call (practice of the trade; site procedures govern). */
export const RECLEAN_CAUTION =
  'A re-clean is a process decision: it runs only through authorised recipes, within the re-clean count ' +
  'limits, by qualified people. voidcast estimates risk; it does not replace the site’s contamination-control, ' +
  'equipment-safety or chemical-handling procedures (see the site’s chemical hygiene plan and safety data sheets).';

export interface SpecCheck {
  /** Which spec line. */
  metric: 'voids' | 'unbondedFraction' | 'dieYield';
  /** The bound compared (upper for voids/area, lower for yield) at spec.confidence. */
  bound: number;
  limit: number;
  pass: boolean;
}

export interface PairAssessment {
  pairId: string;
  lotId: string;
  productId: string;
  topWaferId: string;
  bottomWaferId: string;
  /** sha256 (hex) of the canonical serialisation of every input the figures depend on. */
  inputsHash: string;
  modelVersion: string;
  specVersion: string;
  /** The parameter set the assessment used ("typed values" when none was adopted); the hash covers it. */
  parameters: ParameterSetRef;
  /** Assessment time, UTC ms. */
  asOfMs: number;
  /** Monte Carlo draws behind every interval, and its seed. */
  draws: number;
  seed: number;
  /** Smallest reportable void diameter used, m. */
  smallestReportableVoidM: number;
  /** Particle diameter whose void just reaches the reportable size, m. */
  reportableParticleM: number;
  /** Tail floor used, m. */
  tailFloorM: number;
  figures: PairFigures;
  specChecks: SpecCheck[];
  contributions: SourceContribution[];
  pareto: Pareto;
  dominant: DominantSource | null;
  /** Fitted Hill slope of each scanned wafer's tail with its exact interval (Clauset et al. 2009). */
  tails: {
    waferId: string;
    scanId: string;
    n: number;
    thresholdM: number;
    alpha: Estimate;
    tailParticles: Estimate;
  }[];
  qTimes: QTimeStatus[];
  excursions: ExposureExcursion[];
  notes: DataNote[];
  reclean: RecleanScenario | null;
  call: Call;
  reasons: Reason[];
  /** RECLEAN_CAUTION when call = 're-clean', else null. */
  caution: string | null;
  /** Void map, die grid and stacked spectrum; null in 'summary' detail. */
  voidMap: VoidMap | null;
  spectrum: StackedSpectrum | null;
}

export interface LotAssessment {
  lotId: string;
  productId: string;
  asOfMs: number;
  inputsHash: string;
  modelVersion: string;
  specVersion: string;
  /** The parameter set every pair was assessed with ("typed values" when none was adopted). */
  parameters: ParameterSetRef;
  pairs: PairAssessment[];
  /** Worst call of the pairs (hold > re-clean > bond). */
  call: Call;
  reasons: Reason[];
  caution: string | null;
  counts: { bond: number; reclean: number; hold: number };
  /** Lot Pareto: sums over the pairs; shares of the lot total. */
  pareto: Pareto;
  dominant: DominantSource | null;
  /** Sum over pairs of expected reportable voids and killed dies (NB). */
  totals: { voids: number; dieKillsNB: number | null; dies: number };
}

/** A signed-off call as stored (src/store/dispositions.ts). */
export interface DispositionRecord {
  id: number;
  subjectKind: 'pair' | 'lot';
  subjectId: string;
  call: Call;
  /** The proposed (engine) call, which a signer may override with a stated reason. */
  proposedCall: Call;
  inputsHash: string;
  modelVersion: string;
  specVersion: string;
  figures: PairFigures | LotAssessment['totals'];
  reasons: Reason[];
  signedBy: string;
  comment: string | null;
  /** When signed, UTC ms. */
  signedAtMs: number;
  /** The assessment time the call came from, UTC ms. */
  assessedAtMs: number;
}

export type { Spectrum };
