/**
 * Result types of the contamination audit (src/engine/audit/): classification of an area against
 * ISO 14644-1:2015, alert and action levels, excursions, their added cost in voids and die loss,
 * control charts, and the line view. Every result is plain data (numbers in SI: times in UTC ms,
 * concentrations in particles per m³, volumes in m³, sizes in m) so that pages, reports, the CLI
 * and the CSV/JSON exports all read the same object.
 *
 * Words on screens and in files are the product's own; ISO 14644-1 terms are kept (class, sampling
 * location, occupancy state, as-built / at-rest / operational).
 */

/** ISO 14644-1:2015 §3.3 occupancy states; 'any' selects every sample whatever its state. */
export type OccupancyState = 'as-built' | 'at-rest' | 'operational';
export type OccupancySelection = OccupancyState | 'any';

/** A half-open period [fromMs, toMs), UTC ms. */
export interface AuditPeriod {
  fromMs: number;
  toMs: number;
}

/** The status of a verdict: it never reads "pass" where there was nothing to judge. */
export type VerdictStatus = 'pass' | 'fail' | 'no data' | 'not judged';

// ───────────────────────────── classification ─────────────────────────────

/** Sample-volume adequacy of one location's samples (ISO 14644-1:2015 A.4.4). */
export interface SampleVolumeCheck {
  /** Minimum single sample volume V_s at the largest considered size for the class tested, m³. */
  requiredM3: number;
  /** Minimum sampling time, ms (1 minute). */
  requiredDurationMs: number;
  /** Samples considered (usable samples in the period and occupancy state). */
  samples: number;
  /** Of these, samples whose volume is below V_s or whose time is below 1 minute. */
  samplesBelow: number;
  /** Smallest single sample volume seen, m³ (null without samples). */
  smallestM3: number | null;
  /** Shortest sample, ms (null without samples). */
  shortestMs: number | null;
  /** 'pass' when every sample meets V_s and 1 minute; 'fail' otherwise; 'no data' without samples. */
  status: VerdictStatus;
}

/** One sampling location of a classified area. */
export interface ClassifiedLocation {
  locationId: string;
  name: string;
  /** The location's own target class (it may differ from the area's). */
  targetClass: number | null;
  /** Samples in the period and occupancy state (usable and not). */
  samples: number;
  /** Samples used: not flagged as an instrument fault or a sentinel. */
  usableSamples: number;
  /** Samples left out as an instrument fault or sentinel. */
  excludedSamples: number;
  /** Per considered size (same order as AreaClassification.sizesM): Σ counts / Σ volume, per m³; null: no data. */
  meansPerM3: (number | null)[];
  /** Per considered size: mean ≤ limit; null: no data. */
  passBySize: (boolean | null)[];
  status: VerdictStatus;
  volume: SampleVolumeCheck;
}

/** One considered size of a classified area. */
export interface ClassifiedSize {
  diameterM: number;
  /** The class limit at this size as Table 1 rounds it, per m³. */
  limitPerM3: number;
  /** Mean of the location means, per m³ (null: no location with data). */
  meanOfMeansPerM3: number | null;
  /** 95 % UCL of the mean of means (1999 edition, 2–9 locations), else null. */
  ucl95PerM3: number | null;
  status: VerdictStatus;
}

/** Whether the area has at least the Table A.1 number of sampling locations. */
export interface LocationCountCheck {
  /** Floor area of the area, m² (null: not registered). */
  floorAreaM2: number | null;
  /** Minimum number of sampling locations (ISO 14644-1:2015 Table A.1), null without a floor area. */
  required: number | null;
  /** Sampling locations registered in the area (the area and its descendants in the same air). */
  registered: number;
  /** Of these, locations with usable samples in the period. */
  withData: number;
  /** 'pass' / 'fail' against `required`; 'not judged' with the words "floor area not registered". */
  status: VerdictStatus;
  words: string;
}

/** Classification of one area (room or zone) over a period, ISO 14644-1:2015 (1999 UCL optional). */
export interface AreaClassification {
  areaId: string;
  areaName: string;
  period: AuditPeriod;
  occupancy: OccupancySelection;
  edition: 2015 | 1999;
  /** The class tested (the area's target class, or the one asked for). */
  classN: number | null;
  /** Considered sizes, m (the Table 1 sizes the counters report and the class has a value for). */
  sizesM: number[];
  locationCount: LocationCountCheck;
  sizes: ClassifiedSize[];
  locations: ClassifiedLocation[];
  /** Overall: pass only when every location with data passes and none is missing, the count is enough and every sample volume is adequate. */
  status: VerdictStatus;
  /** The cleanest class the location means meet (steps of 0.1), null when none or no data. */
  classAchieved: number | null;
  /** Plain-words reasons behind the status, in order ("floor area not registered", "no data", …). */
  notes: string[];
}

// ───────────────────────────── levels ─────────────────────────────

/** How a level was set. */
export type LevelMethod =
  | 'typed'
  | 'percentile'
  | 'log-mean-k-sigma'
  | 'poisson-quantile'
  | 'negbin-quantile'
  | 'class-fraction';

/** Alert and action levels of one location and channel, as stored (append-only; the latest holds). */
export interface LevelRecord {
  locationId: string;
  /** Channel: particles ≥ this size, m. */
  diameterM: number;
  alertPerM3: number | null;
  actionPerM3: number | null;
  method: LevelMethod;
  /** The name the levels were given (`--as NAME`), or 'typed' for levels from the locations file. */
  name: string;
  /** Baseline window (null for typed and class-fraction levels). */
  window: AuditPeriod | null;
  /** Method parameters (e.g. { alertPercentile: 0.95, actionPercentile: 0.99 }). */
  parameters: Record<string, number>;
  /** Version per (location, channel): 1, 2, … (0 for typed levels from the locations file). */
  version: number;
  /** Account that set them, or 'locations import'. */
  setBy: string;
  /** UTC ms when they were set (null for typed levels). */
  setAtMs: number | null;
  /** Words of how they were derived ("95th / 99th percentile of 720 hourly means …"). */
  basis: string;
}

// ───────────────────────────── excursions ─────────────────────────────

/**
 * action-point: an hourly mean above action; alert-run: m of n hourly means above alert;
 * area-alert: several locations of the area above alert within a window; ratio-shift: the ratio
 * between two size channels away from its usual value; data-quality: hours whose samples are mostly
 * flagged (instrument fault, sentinel, long all-zero run) — an instrument finding, not the air.
 */
export type ExcursionRuleId = 'action-point' | 'alert-run' | 'area-alert' | 'ratio-shift' | 'data-quality';

/** Settings of the excursion rules. */
export interface ExcursionRules {
  /** One point (an hourly mean) above the action level. */
  actionPoint: boolean;
  /** m of n consecutive points above the alert level. */
  alertRun: { m: number; n: number } | null;
  /** At least `locations` locations of one area above alert within `windowMs` of each other. */
  areaAlert: { locations: number; windowMs: number } | null;
  /**
   * A shift of the ratio C(≥ large) / C(≥ small) from its baseline: |log ratio − baseline| > k·σ
   * over `points` consecutive points.
   */
  ratioShift: { smallM: number; largeM: number; k: number; points: number; minCount: number } | null;
  /** Hours in which at least this fraction of samples is flagged (fault, sentinel, zero run); null: off. */
  dataQuality: { fraction: number } | null;
}

/** Data-quality flags of the samples behind an excursion. */
export interface DataQualityBeside {
  samples: number;
  /** Samples flagged as an instrument fault (flow / laser status). */
  fault: number;
  /** Samples counted as a lower bound (overload, saturation). */
  lowerBound: number;
  sentinel: number;
  /** Samples inside a long all-channel zero run. */
  zeroRun: number;
  gapBefore: number;
}

/** What an excursion most likely is, judged from its data-quality flags and its signature. */
export type ExcursionNature = 'air' | 'instrument' | 'unclear';

export interface Excursion {
  /** Stable id: `${rule}:${locationId}:${diameterNm}:${startMs}` (area-alert: the area's id). */
  id: string;
  rule: ExcursionRuleId;
  areaId: string;
  /** The location (for area-alert, the first of them). */
  locationId: string;
  /** Every location involved (area-alert: all of them). */
  locationIds: string[];
  startMs: number;
  /** Exclusive end: the end of the last point that met the rule. */
  endMs: number;
  peakMs: number;
  peakPerM3: number;
  /** The channels above the level, m. */
  channelsM: number[];
  /** The level crossed, per m³ (null for ratio-shift). */
  levelPerM3: number | null;
  /** Baseline concentration of the channel (median of the baseline hours), per m³. */
  baselinePerM3: number | null;
  nature: ExcursionNature;
  /** Why that nature ("412 of 516 samples in a long all-zero run; no rise in any channel"). */
  natureWords: string;
  quality: DataQualityBeside;
  /** Plain-words description of what the rule saw. */
  words: string;
  acknowledgement: ExcursionAck | null;
}

export interface ExcursionAck {
  excursionId: string;
  comment: string;
  account: string;
  atMs: number;
}

// ───────────────────────────── excursion cost ─────────────────────────────

/** One wafer the ledger puts in the excursion's air. */
export interface ExposedWaferCost {
  waferId: string;
  lotId: string;
  /** Ledger step and its carrier state during the overlap. */
  step: string;
  carrier: 'open' | 'closed' | 'purged';
  /** Overlap of the step with a window of the event, UTC ms. */
  fromMs: number;
  toMs: number;
  /** Added expected deposited particles (≥ the engine's floor) on the wafer face. */
  addedParticles: number;
  /** Added expected reportable voids of the pair the wafer is in (null: the wafer is in no pair). */
  addedVoids: number | null;
  /** Added expected die loss (dies) of that pair. */
  addedDieLoss: number | null;
  pairId: string | null;
}

export interface LotCost {
  lotId: string;
  wafers: number;
  addedVoids: number;
  addedDieLoss: number;
}

/**
 * Excursions that are one happening (src/engine/audit/events.ts): their windows overlap and they
 * share a location. Costed once, over the union of its members' windows.
 */
export interface ExcursionEvent {
  /** Stable id: `event:${locationIds joined by +}:${startMs}`. */
  id: string;
  areaId: string;
  /** Its excursions, earliest first. */
  excursionIds: string[];
  /** The rules that found it, in the order of its excursions. */
  rules: ExcursionRuleId[];
  locationIds: string[];
  /** The earliest start and the latest end of its excursions, UTC ms. */
  startMs: number;
  endMs: number;
  /**
   * What is costed: per location, the union of the windows of its excursions there that are not
   * instrument findings (empty for an instrument event).
   */
  windows: { locationId: string; fromMs: number; toMs: number }[];
  /** instrument: every excursion is one; air: every other one is air; unclear otherwise. */
  nature: ExcursionNature;
}

/** The added cost of one event: the excess over its locations' baselines in its windows, through the engine. */
export interface EventCost {
  eventId: string;
  /** The event's excursions (costed together, once). */
  excursionIds: string[];
  locationIds: string[];
  /** The event's span (its earliest start to its latest end). */
  period: AuditPeriod;
  /** The windows costed (ExcursionEvent.windows). */
  windows: ExcursionEvent['windows'];
  wafers: ExposedWaferCost[];
  lots: LotCost[];
  totalAddedVoids: number;
  totalAddedDieLoss: number;
  /** How it was computed (the difference of two assessments: as measured minus baseline-replaced). */
  method: string;
  notes: string[];
}

// ───────────────────────────── control charts ─────────────────────────────

export type ChartKind = 'c' | 'u' | 'laney-u';

/** Rules that flag a point (NIST/SEMATECH §6.3.2 style run rules; names are ours). */
export type ChartRuleId = 'beyond-limit' | 'run-of-8-above' | 'run-of-8-below' | '2-of-3-beyond-2-sigma';

export interface ChartPoint {
  /** Start of the point's subgroup (an hour), UTC ms. */
  startMs: number;
  /** Counts in the subgroup. */
  count: number;
  /** Area of opportunity: sampled volume, m³. */
  volumeM3: number;
  /** Plotted value: the count (c chart) or count per m³ (u charts). */
  value: number;
  lcl: number;
  ucl: number;
  /** Rules this point triggered (empty: in control). */
  rules: ChartRuleId[];
  /** Left out of the centre line and the rules (instrument fault or sentinel samples only). */
  excluded: boolean;
}

export interface ControlChart {
  locationId: string;
  diameterM: number;
  kind: ChartKind;
  /** c̄ (counts per subgroup) or ū (per m³). */
  centre: number;
  /** Laney's σ_z (1 for c and u charts). */
  sigmaZ: number;
  /** Pearson's dispersion X² / (N − 1) of the counts about the pooled rate (1 for Poisson counts). */
  dispersion: number;
  /** How the chart kind was decided, in words. */
  decidedBy: string;
  points: ChartPoint[];
  /** Points excluded from the centre line (hours whose samples are all instrument faults or sentinels). */
  excludedPoints: number;
  /**
   * Where the centre line and limits come from (Phase I): `levels` — the baseline window the location's
   * derived levels were set from; `chosen` — a window the user chose; `period` — the charted points
   * themselves (no usable baseline; said in `notes`).
   */
  baseline: {
    source: 'levels' | 'chosen' | 'period';
    window: AuditPeriod | null;
    /** Usable hours the centre and limits were computed from. */
    points: number;
    words: string;
  };
  /** Plain-words remarks (too few points for limits, …). */
  notes: string[];
}

// ───────────────────────────── line view ─────────────────────────────

export type ParetoCategory = 'tool' | 'wait location' | 'clean' | 'size band';

export interface LineParetoEntry {
  category: ParetoCategory;
  key: string;
  label: string;
  /** Expected voids summed over every assessed pair. */
  expectedVoids: number;
  share: number;
  cumulativeShare: number;
  /** Lots where it contributed. */
  lots: number;
  /** Size band only: particle diameters [fromM, toM) at the interface, m (toM null: no upper edge). */
  fromM?: number;
  toM?: number | null;
}

export interface ChamberHistoryPoint {
  atMs: number;
  /** Adders per pass above the learned fit's reference size, with its 95 % interval. */
  addersPerPass: number;
  lower: number;
  upper: number;
  lotId: string;
  waferId: string;
}

export interface ChamberHistory {
  toolId: string;
  chamber: string | null;
  points: ChamberHistoryPoint[];
  lots: string[];
}

export type SearchHitKind = 'wafer' | 'pair' | 'lot' | 'tool' | 'location';

export interface SearchHit {
  kind: SearchHitKind;
  id: string;
  label: string;
}

// ───────────────────────────── the whole audit ─────────────────────────────

/** Everything an area's audit report holds (the CLI's --json and the report page read this). */
export interface AreaAudit {
  areaId: string;
  period: AuditPeriod;
  occupancy: OccupancySelection;
  classification: AreaClassification;
  levels: LevelRecord[];
  excursions: Excursion[];
  /** The excursions grouped into events (each excursion in exactly one). */
  events: ExcursionEvent[];
  /** One per event (same order), unless costs were skipped (then empty). */
  costs: EventCost[];
  charts: ControlChart[];
  /** Milliseconds the audit took (for the performance budget). */
  elapsedMs: number;
}
