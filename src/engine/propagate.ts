/**
 * Route propagation of one wafer (the chain of particle sources, cleans and waits up to bonding).
 *
 * Start: the wafer's most recent surface scan before bonding — its detected particles at their
 * positions (survival 1 at the scan) plus the undetected tail below the scan threshold, a power law
 * fitted to the detected sizes by the Hill estimator (Clauset, Shalizi & Newman 2009) and carried
 * down to the tail floor. An unscanned wafer starts from the product's incoming level (flagged).
 *
 * Then every later ledger step in order:
 * - clean: every contribution so far is multiplied bin by bin by the clean's survival 1 − PRE(d);
 *   each detected particle's survival probability is multiplied by s(d) at its own size; the clean
 *   becomes the contribution's "last clean"; the clean tool's adders (if known) follow the removal;
 * - tool (process, activation, inspection, bond, or a transfer through a tool): its adders per pass;
 * - wait or transfer with a location: deposition from the location's counter samples over the step
 *   interval (see exposure.ts), divided by the carrier's isolation factor, at the step's face
 *   orientation.
 * Each contribution keeps its source label and the last clean it passed through. Everything is a
 * spectrum per wafer (linear in particle densities), so attribution downstream is exact.
 */
import { SPECTRUM_BIN_COUNT, type Spectrum } from '../model/spectrum.ts';
import type { IntervalDose } from './exposure.ts';
import type {
  AssessConfig,
  CarrierState,
  CleanInput,
  DataNote,
  ExposureExcursion,
  FaceOrientation,
  LedgerStepInput,
  LineData,
  ProductInput,
  SourceContribution,
  ToolInput,
  WaferInput,
} from './types.ts';

/** How a contribution's spectrum varies in the Monte Carlo. */
export type Variation =
  | { type: 'tail'; n: number; sumLog: number; thresholdM: number; floorM: number; fixedAlpha: number | null }
  | { type: 'wait' }
  | { type: 'tool'; toolKey: string; uncertaintyFactor: number }
  | { type: 'incoming' }
  | { type: 'detected' }
  | {
      /** Voids no scanned particle explains: a Poisson number per pair at a fitted rate (evaluate.ts). */
      type: 'unexplained';
      /** Expected reportable voids per pair and its 95 % interval. */
      ratePerPair: number;
      rateLow: number;
      rateHigh: number;
      /** Area of each such void, m², and the radius of a disc of that area, m. */
      areaM2: number;
      radiusM: number;
    };

/** Detected particles of one wafer's scan as they stand at bonding. */
export interface DetectedState {
  /** Positions in the wafer's own frame, m. */
  xM: Float64Array;
  yM: Float64Array;
  diameterM: Float64Array;
  /** Probability each particle is still there (product of the later cleans' survivals). */
  survival: Float64Array;
}

/** A source's particles while the chain runs: its identity (as in the result) plus the working state. */
export interface Contribution
  extends Pick<
    SourceContribution,
    | 'key'
    | 'kind'
    | 'label'
    | 'wafer'
    | 'waferId'
    | 'groupKey'
    | 'groupLabel'
    | 'toolId'
    | 'chamber'
    | 'locationId'
    | 'scanId'
    | 'stepSeq'
    | 'lastCleanId'
  > {
  /** Spectrum per wafer at its creation (before later cleans), count per bin. */
  base: Spectrum;
  /** Product of the survivals of the cleans after its creation, per bin. */
  survivalBins: Float64Array;
  /** Area over which the particles are spread, m² (wafer area; the scanned area for scan tails). */
  areaBasisM2: number;
  variation: Variation;
  /** Created by the bond step (a modelled re-clean runs before it). */
  atBond: boolean;
  detected: DetectedState | null;
}

/** Per-bin and per-size helpers the propagation needs (built once per product, see physics.ts). */
export interface PropagationPhysics {
  /** Clean survival per bin (1 − PRE at the bin centre). */
  cleanSurvivalBins(clean: CleanInput): Float64Array;
  /**
   * Multiplies each particle's survival by the clean's survival at its diameter (in place) and
   * returns the surviving particles binned, in the same pass.
   */
  applySurvival(clean: CleanInput, diameterM: Float64Array, survival: Float64Array): Spectrum;
  /** Adders per pass of a tool as a spectrum per wafer (floored at the tail floor). */
  adderSpectrum(tool: ToolInput): Spectrum;
  /** A tail spectrum: n particles ≥ threshold extended with slope α from floor up to the threshold. */
  tailSpectrum(n: number, alpha: number, thresholdM: number, floorM: number): Spectrum;
  /** The product's incoming level as a spectrum per wafer. */
  incomingSpectrum(product: ProductInput): Spectrum;
  /** Detected particles binned (every one counted once: a fresh scan's survivals are all 1). */
  binCounts(d: Float64Array): Spectrum;
  /**
   * Deposited particles per wafer during an exposure: dose per channel (particle·s/m³ cumulative ≥
   * channel size) → per-bin deposition = v_d(d) · dose(d) · wafer area / isolation.
   */
  deposition(args: {
    channelSizesM: Float64Array;
    dosePerChannel: Float64Array;
    airVelocityMps: number;
    orientation: FaceOrientation;
    isolation: number;
  }): Spectrum;
  /** Hill fit of a scan's detected sizes ≥ threshold (exact χ² interval at `confidence`). */
  hill(
    sizes: Float64Array,
    thresholdM: number,
    confidence: number,
  ): { alpha: number; lower: number; upper: number; n: number; sumLog: number } | null;
  /** ISO 14644-1 class limits at the channel sizes (null: no class). */
  classLimits(isoClass: number | null, channelSizesM: Float64Array): Float64Array | null;
  waferAreaM2: number;
  scanAreaM2(edgeExclusionM: number): number;
}

export interface ExposureLookup {
  dose(
    locationId: string,
    fromMs: number,
    toMs: number,
  ): { d: IntervalDose; channelSizesM: Float64Array } | null;
}

export interface WaferPropagation {
  contributions: Contribution[];
  notes: DataNote[];
  excursions: ExposureExcursion[];
  /** Steps applied (after the scan, up to bonding), for Q-time. */
  steps: LedgerStepInput[];
  /** Hold reasons found in the data (missing counter data etc.). */
  dataProblems: { code: string; text: string }[];
  tail: { scanId: string; n: number; thresholdM: number; alpha: number; lower: number; upper: number } | null;
  /** Hours of exposure with gap-filled counter data (for notes). */
  lowerBound: boolean;
}

export function toolKeyOf(toolId: string, chamber: string | null): string {
  return chamber ? `${toolId}/${chamber}` : toolId;
}

/** The tool entry for a step: the chamber's own entry when the line has one, else the tool's. */
export function findTool(line: LineData, toolId: string | null, chamber: string | null): ToolInput | null {
  if (!toolId) return null;
  if (chamber) {
    const t = line.tools[toolKeyOf(toolId, chamber)];
    if (t) return t;
  }
  return line.tools[toolId] ?? null;
}

function isolationOf(carrier: CarrierState, cfg: AssessConfig): number {
  if (carrier === 'closed') return cfg.closedIsolation;
  if (carrier === 'purged') return cfg.purgedIsolation;
  return 1;
}

function carrierWords(carrier: CarrierState, orientation: FaceOrientation): string {
  const c =
    carrier === 'open'
      ? 'open cassette'
      : carrier === 'closed'
        ? 'closed carrier'
        : carrier === 'purged'
          ? 'purged carrier'
          : 'inside the tool';
  return orientation === 'face-up' ? c : `${c}, ${orientation}`;
}

export function hoursText(s: number): string {
  if (s < 3600) return `${(s / 60).toFixed(0)} min`;
  return `${(s / 3600).toFixed(1)} h`;
}

function ones(): Float64Array {
  return new Float64Array(SPECTRUM_BIN_COUNT).fill(1);
}

export interface PropagateArgs {
  wafer: WaferInput;
  role: 'top' | 'bottom';
  product: ProductInput;
  line: LineData;
  physics: PropagationPhysics;
  exposure: ExposureLookup;
  config: AssessConfig;
  /** End of the route: bond time, else the assessment time, UTC ms. */
  endMs: number;
  /** The pair's bonder (its adders apply once when the ledger has no bond step). */
  bonderToolId: string | null;
  confidence: number;
  /**
   * Where the detected particles' survivals are kept (n values, written here before any is read):
   * a caller that assesses many wafers in turn hands out working arrays it reuses; default new ones.
   */
  survivalArray?: (n: number) => Float64Array;
}

/** Propagates one wafer from its scan (or incoming level) through its ledger to bonding. */
export function propagateWafer(a: PropagateArgs): WaferPropagation {
  const { wafer, role, product, line, physics, config } = a;
  const contributions: Contribution[] = [];
  const notes: DataNote[] = [];
  const excursions: ExposureExcursion[] = [];
  const dataProblems: { code: string; text: string }[] = [];
  const roleWords = `${role} wafer ${wafer.waferId}`;
  let tail: WaferPropagation['tail'] = null;
  let lowerBound = false;

  const scan = wafer.latestScan;
  const startMs = scan ? scan.timeMs : Number.NEGATIVE_INFINITY;
  if (scan) {
    const p = scan.particles;
    const det: DetectedState = {
      xM: p.xM,
      yM: p.yM,
      diameterM: p.diameterM,
      survival: (a.survivalArray ? a.survivalArray(p.count) : new Float64Array(p.count)).fill(1),
    };
    contributions.push({
      key: `${role}:detected`,
      kind: 'detected',
      label: `Particles detected at scan ${scan.scanId} (${roleWords})`,
      wafer: role,
      waferId: wafer.waferId,
      groupKey: 'detected',
      groupLabel: 'Particles detected at the pre-bond scans',
      toolId: scan.toolId,
      chamber: null,
      locationId: null,
      scanId: scan.scanId,
      stepSeq: null,
      lastCleanId: null,
      base: physics.binCounts(p.diameterM),
      survivalBins: ones(),
      areaBasisM2: physics.scanAreaM2(scan.edgeExclusionM),
      variation: { type: 'detected' },
      atBond: false,
      detected: det,
    });
    const fit = p.count > 0 ? physics.hill(p.diameterM, scan.thresholdM, a.confidence) : null;
    const floor = Math.min(config.tailFloorM, scan.thresholdM);
    const nAbove = fit?.n ?? 0;
    if (floor < scan.thresholdM && nAbove > 0) {
      const fitted = fit !== null && nAbove >= config.minTailParticles;
      const alpha = fitted ? fit.alpha : product.incoming.slope;
      tail = fitted
        ? {
            scanId: scan.scanId,
            n: nAbove,
            thresholdM: scan.thresholdM,
            alpha: fit.alpha,
            lower: fit.lower,
            upper: fit.upper,
          }
        : { scanId: scan.scanId, n: nAbove, thresholdM: scan.thresholdM, alpha, lower: alpha, upper: alpha };
      if (!fitted)
        notes.push({
          code: 'tail-slope-assumed',
          text: `Scan ${scan.scanId} of ${roleWords} has ${nAbove} particle(s) at or above its threshold, fewer than the ${config.minTailParticles} a tail fit needs: the tail below it takes the product's incoming slope ${alpha}.`,
          waferId: wafer.waferId,
          locationId: null,
          stepSeq: null,
        });
      contributions.push({
        key: `${role}:tail`,
        kind: 'tail',
        label: `Undetected particles below the ${(scan.thresholdM * 1e9).toFixed(0)} nm threshold of scan ${scan.scanId} (${roleWords})`,
        wafer: role,
        waferId: wafer.waferId,
        groupKey: 'tail',
        groupLabel: 'Undetected particles below the scan thresholds',
        toolId: scan.toolId,
        chamber: null,
        locationId: null,
        scanId: scan.scanId,
        stepSeq: null,
        lastCleanId: null,
        base: physics.tailSpectrum(nAbove, alpha, scan.thresholdM, floor),
        survivalBins: ones(),
        areaBasisM2: physics.scanAreaM2(scan.edgeExclusionM),
        variation: {
          type: 'tail',
          n: nAbove,
          sumLog: fit?.sumLog ?? 0,
          thresholdM: scan.thresholdM,
          floorM: floor,
          fixedAlpha: fitted ? null : alpha,
        },
        atBond: false,
        detected: null,
      });
    }
  } else {
    notes.push({
      code: 'unscanned',
      text: `${roleWords} has no surface scan before bonding: it starts from the product's incoming level (${product.incoming.countAbove} per wafer ≥ ${(product.incoming.atDiameterM * 1e9).toFixed(0)} nm).`,
      waferId: wafer.waferId,
      locationId: null,
      stepSeq: null,
    });
    if (product.spec.scanRequired)
      dataProblems.push({
        code: 'unscanned',
        text: `${roleWords} was not scanned before bonding; the spec requires a scan.`,
      });
    contributions.push({
      key: `${role}:incoming`,
      kind: 'incoming',
      label: `Assumed incoming particles, unscanned (${roleWords})`,
      wafer: role,
      waferId: wafer.waferId,
      groupKey: 'incoming',
      groupLabel: 'Assumed incoming particles of unscanned wafers',
      toolId: null,
      chamber: null,
      locationId: null,
      scanId: null,
      stepSeq: null,
      lastCleanId: null,
      base: physics.incomingSpectrum(product),
      survivalBins: ones(),
      areaBasisM2: physics.waferAreaM2,
      variation: { type: 'incoming' },
      atBond: false,
      detected: null,
    });
  }

  const ledger = [...wafer.ledger].sort((x, y) => x.seq - y.seq);
  const applied: LedgerStepInput[] = [];
  let sawBond = false;

  const addTool = (tool: ToolInput, step: LedgerStepInput | null, atBond: boolean) => {
    const base = physics.adderSpectrum(tool);
    let total = 0;
    for (let i = 0; i < SPECTRUM_BIN_COUNT; i++) total += base[i]!;
    if (!(total > 0)) return;
    const key = toolKeyOf(tool.toolId, tool.chamber);
    contributions.push({
      key: `${role}:tool:${step ? step.seq : 'bonder'}`,
      kind: 'tool',
      label: `${tool.name}${tool.chamber ? ` chamber ${tool.chamber}` : ''}: adders per pass${step ? ` at ${step.step}` : ' (bonder)'} (${roleWords})`,
      wafer: role,
      waferId: wafer.waferId,
      groupKey: `tool:${key}`,
      groupLabel: `${tool.name}${tool.chamber ? ` chamber ${tool.chamber}` : ''}`,
      toolId: tool.toolId,
      chamber: tool.chamber,
      locationId: step?.locationId ?? null,
      scanId: null,
      stepSeq: step?.seq ?? null,
      lastCleanId: null,
      base: Float64Array.from(base),
      survivalBins: ones(),
      areaBasisM2: physics.waferAreaM2,
      variation: { type: 'tool', toolKey: key, uncertaintyFactor: tool.adderUncertaintyFactor },
      atBond,
      detected: null,
    });
  };

  for (const step of ledger) {
    const stepEnd = Math.min(step.endMs ?? a.endMs, a.endMs);
    if (step.startMs >= a.endMs && step.kind !== 'bond') continue; // after bonding (or the assessment time)
    if (step.kind === 'bond' && sawBond) continue;
    if (step.kind === 'wait' || step.kind === 'transfer') {
      const from = Math.max(step.startMs, startMs);
      if (stepEnd <= from) continue;
      applied.push(step);
      if (step.toolId) {
        const t = findTool(line, step.toolId, step.chamber);
        if (t) addTool(t, step, false);
      }
      if (!step.locationId) {
        notes.push({
          code: 'no-location',
          text: `Step ${step.seq} (${step.step}) of ${roleWords} names no location: no deposition counted for ${hoursText((stepEnd - from) / 1000)}.`,
          waferId: wafer.waferId,
          locationId: null,
          stepSeq: step.seq,
        });
        continue;
      }
      const loc = line.locations[step.locationId];
      // A what-if duration (src/engine/tuning): a shorter stay ends early and sees the air of its
      // first part; a longer one sees the recorded air over its whole time, scaled (linear in time).
      const scen = step.scenarioDurationS;
      const doseEnd = scen !== undefined && scen * 1000 < stepEnd - from ? from + scen * 1000 : stepEnd;
      const got = a.exposure.dose(step.locationId, from, doseEnd);
      const durS = (doseEnd - from) / 1000;
      if (!got) {
        dataProblems.push({
          code: 'data-missing',
          text: `No counter data for ${loc?.name ?? step.locationId} while ${roleWords} waited there (${hoursText(durS)}, step ${step.seq}).`,
        });
        continue;
      }
      const { d, channelSizesM } = got;
      const doseFactor = scen !== undefined && scen > durS && durS > 0 ? scen / durS : 1;
      if (d.gapS > 0) {
        const frac = d.durationS > 0 ? d.gapS / d.durationS : 1;
        const fillWords =
          d.fill === 'median'
            ? "filled with the location's median concentration"
            : d.fill === 'class-limit'
              ? `filled with its ISO class ${loc?.isoClass} limit`
              : 'counted as clean air (no class to fall back on)';
        notes.push({
          code: 'counter-gap',
          text: `${hoursText(d.gapS)} of ${hoursText(durS)} at ${loc?.name ?? step.locationId} (step ${step.seq}, ${roleWords}) had no usable counter sample; ${fillWords}.`,
          waferId: wafer.waferId,
          locationId: step.locationId,
          stepSeq: step.seq,
        });
        if (frac > config.maxGapFraction || d.fill !== 'median')
          dataProblems.push({
            code: 'data-missing',
            text: `Counter data missing for ${Math.round(frac * 100)} % of the ${hoursText(durS)} ${roleWords} spent at ${loc?.name ?? step.locationId} (step ${step.seq}); the limit is ${Math.round(config.maxGapFraction * 100)} %.`,
          });
      }
      if (d.lowerBoundSamples > 0) {
        lowerBound = true;
        notes.push({
          code: 'lower-bound',
          text: `${d.lowerBoundSamples} saturated counter sample(s) at ${loc?.name ?? step.locationId} during step ${step.seq} (${roleWords}): that deposition is a lower bound.`,
          waferId: wafer.waferId,
          locationId: step.locationId,
          stepSeq: step.seq,
        });
      }
      if (d.firstActionMs !== null && loc?.levels?.actionPerM3 != null && d.peakLevelPerM3 !== null)
        excursions.push({
          waferId: wafer.waferId,
          locationId: step.locationId,
          stepSeq: step.seq,
          peakPerM3: d.peakLevelPerM3,
          actionPerM3: loc.levels.actionPerM3,
          firstMs: d.firstActionMs,
        });
      const isolation = step.scenarioIsolation ?? isolationOf(step.carrier, config);
      const airVelocity = loc?.airVelocityMps ?? config.defaultAirVelocityMps;
      contributions.push({
        key: `${role}:wait:${step.seq}`,
        kind: 'wait',
        label: `${step.kind === 'wait' ? 'Wait' : 'Transfer'} at ${loc?.name ?? step.locationId}, ${hoursText(scen ?? durS)}, ${carrierWords(step.carrier, step.orientation)} (${roleWords})`,
        wafer: role,
        waferId: wafer.waferId,
        groupKey: `location:${step.locationId}`,
        groupLabel: `Waiting at ${loc?.name ?? step.locationId}`,
        toolId: step.toolId,
        chamber: step.chamber,
        locationId: step.locationId,
        scanId: null,
        stepSeq: step.seq,
        lastCleanId: null,
        base: physics.deposition({
          channelSizesM,
          dosePerChannel: doseFactor === 1 ? d.dosePerChannel : d.dosePerChannel.map((v) => v * doseFactor),
          airVelocityMps: airVelocity,
          orientation: step.orientation,
          isolation,
        }),
        survivalBins: ones(),
        areaBasisM2: physics.waferAreaM2,
        variation: { type: 'wait' },
        atBond: false,
        detected: null,
      });
      continue;
    }
    // Non-exposure steps count from the scan on; the inspection that took the scan is not a pass after it.
    if (step.startMs < startMs) continue;
    if (
      step.kind === 'inspection' &&
      scan &&
      step.startMs <= scan.timeMs &&
      (step.endMs ?? a.endMs) >= scan.timeMs
    )
      continue;
    applied.push(step);
    if (step.kind === 'clean') {
      const clean = step.cleanId ? line.cleans[step.cleanId] : undefined;
      if (!clean) {
        dataProblems.push({
          code: 'data-missing',
          text: `Clean step ${step.seq} (${step.step}) of ${roleWords} has no known removal curve${step.cleanId ? ` (clean ${step.cleanId})` : ''}.`,
        });
        continue;
      }
      applyClean(contributions, clean, physics);
      const t = findTool(line, step.toolId ?? clean.toolId, step.chamber);
      if (t) addTool(t, step, false);
      continue;
    }
    if (step.kind === 'bond') sawBond = true;
    const t = findTool(line, step.toolId, step.chamber);
    if (t) addTool(t, step, step.kind === 'bond');
  }
  if (!sawBond && a.bonderToolId) {
    const t = findTool(line, a.bonderToolId, null);
    if (t) addTool(t, null, true);
  }
  return { contributions, notes, excursions, steps: applied, dataProblems, tail, lowerBound };
}

/** Applies a clean to every contribution not created at the bond step. */
export function applyClean(
  contributions: Contribution[],
  clean: CleanInput,
  physics: PropagationPhysics,
): void {
  const s = physics.cleanSurvivalBins(clean);
  for (const c of contributions) {
    if (c.atBond) continue;
    for (let i = 0; i < SPECTRUM_BIN_COUNT; i++) c.survivalBins[i]! *= s[i]!;
    c.lastCleanId = clean.cleanId;
    if (c.detected) {
      const det = c.detected;
      c.base = physics.applySurvival(clean, det.diameterM, det.survival);
      c.survivalBins.fill(1); // the detected spectrum is rebuilt from the particles' own survivals
    }
  }
}

/**
 * A deep copy of contributions (a re-clean scenario must not touch the as-is state). `copy`, when
 * given, makes the copy of a detected contribution's survivals (into a reused working array, say).
 */
export function cloneContributions(
  cs: Contribution[],
  copy: (survival: Float64Array, c: Contribution) => Float64Array = (x) => Float64Array.from(x),
): Contribution[] {
  return cs.map((c) => ({
    ...c,
    base: Float64Array.from(c.base),
    survivalBins: Float64Array.from(c.survivalBins),
    detected: c.detected ? { ...c.detected, survival: copy(c.detected.survival, c) } : null,
  }));
}

/** The contribution's spectrum at the interface (base × survival of the later cleans). */
export function interfaceSpectrum(c: Contribution): Spectrum {
  const out = new Float64Array(SPECTRUM_BIN_COUNT);
  for (let i = 0; i < SPECTRUM_BIN_COUNT; i++) out[i] = c.base[i]! * c.survivalBins[i]!;
  return out;
}
