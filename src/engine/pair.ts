/**
 * assessPair: the risk of one bonded pair and its call (bond / re-clean / hold), pure over loaded data.
 *
 * Both wafers are propagated (propagate.ts), the top wafer's detected particles are mirrored into
 * the bond frame (geometry.ts), both wafers' particles are summed at the interface, and the figures
 * (evaluate.ts) get intervals from the seeded Monte Carlo (montecarlo.ts). Attribution and the
 * Paretos are in attribution.ts. The call compares the figures' bounds at the spec's confidence
 * with the spec, and a modelled extra run of the product's designated pre-bond clean shows what a
 * re-clean would buy.
 */

import { SPECTRUM_BIN_COUNT, SPECTRUM_CENTRES_M, SPECTRUM_EDGES_M } from '../model/spectrum.ts';
import {
  buildPareto,
  dominantSource,
  paretoMetric,
  sourceContributions,
  UNEXPLAINED_LABEL,
} from './attribution.ts';
import { MODEL_VERSION, resolveConfig } from './config.ts';
import { type DetectedFlat, type Evaluation, evaluate } from './evaluate.ts';
import { buildExposureIndex, type ExposureIndex, intervalDose } from './exposure.ts';
import { fmtCount, fmtCountBound, fmtHours, fmtPercent, fmtSize } from './format.ts';
import { buildDieHits, mirrorInto } from './geometry.ts';
import { canonicalHash } from './hash.ts';
import { boundFrom, type DrawSet, estimateFrom, simulate, sorted } from './montecarlo.ts';
import { lineParameters } from './parameters.ts';
import { buildProductPhysics, type ProductPhysics } from './physics.ts';
import {
  applyClean,
  type Contribution,
  cloneContributions,
  type ExposureLookup,
  findTool,
  interfaceSpectrum,
  propagateWafer,
  toolKeyOf,
  type WaferPropagation,
} from './propagate.ts';
import { sizeIndexOf } from './tables.ts';
import { countIncluded, topKIndices } from './top-k.ts';
import {
  type AssessConfig,
  type AssessOptions,
  type Call,
  type DieGrid,
  type LineData,
  type PairAssessment,
  type PairFigures,
  type PairInput,
  type ProductInput,
  type QTimeStatus,
  RECLEAN_CAUTION,
  type Reason,
  type RecleanScenario,
  type SpecCheck,
  type StackedSpectrum,
  type VoidDisc,
  type VoidMap,
} from './types.ts';

/** Bad or inconsistent loaded data the engine cannot assess (names what is missing). */
export class EngineInputError extends Error {
  override readonly name = 'EngineInputError';
}

/**
 * Caches shared by the pairs of one assessment run (a lot): exposure indexes per location and the
 * per-product physics (void radii per bin, critical areas, clean survival curves). Pure, in memory.
 */
export interface EngineSession {
  line: LineData;
  config: AssessConfig;
  exposure: Map<string, ExposureIndex>;
  physics: Map<string, ProductPhysics>;
  /** Working arrays of one pair at a time, reused by the next pair (see Scratch). */
  scratch: Scratch;
}

export function createSession(line: LineData, config?: Partial<AssessConfig>): EngineSession {
  return {
    line,
    config: resolveConfig(config),
    exposure: new Map(),
    physics: new Map(),
    scratch: new Scratch(),
  };
}

/**
 * Per-particle working arrays of the pair being assessed (positions in the bond frame, radii, bins,
 * die rows, survivals), kept by the session and handed out again, grown when a pair needs more,
 * to the next pair: tens of thousands of particles per pair would otherwise mean megabytes of new
 * arrays per pair for the garbage collector. Nothing a pair returns refers to them (its void map
 * copies what it shows), and a session assesses one pair at a time.
 */
export class Scratch {
  private readonly arrays = new Map<string, Float64Array | Int32Array | Uint16Array | Uint8Array>();

  private take<T extends Float64Array | Int32Array | Uint16Array | Uint8Array>(
    name: string,
    n: number,
    make: (n: number) => T,
    zero: boolean,
  ): T {
    let a = this.arrays.get(name) as T | undefined;
    if (!a || a.length < n) {
      a = make(Math.max(n, Math.ceil((a?.length ?? 0) * 1.5)));
      this.arrays.set(name, a);
    }
    const v = a.subarray(0, n) as T;
    if (zero) v.fill(0);
    return v;
  }

  /**
   * A zeroed array of n values; with `overwritten` the caller writes every one of the n values
   * before reading any, and the zeroing (a pass over megabytes per pair) is left out.
   */
  f64(name: string, n: number, overwritten = false): Float64Array {
    return this.take(name, n, (k) => new Float64Array(k), !overwritten);
  }
  i32(name: string, n: number, overwritten = false): Int32Array {
    return this.take(name, n, (k) => new Int32Array(k), !overwritten);
  }
  u16(name: string, n: number, overwritten = false): Uint16Array {
    return this.take(name, n, (k) => new Uint16Array(k), !overwritten);
  }
  u8(name: string, n: number, overwritten = false): Uint8Array {
    return this.take(name, n, (k) => new Uint8Array(k), !overwritten);
  }
  /** The whole kept Int32Array of that name (at least n long, not zeroed), to be filled and grown. */
  i32Buffer(name: string, n: number): Int32Array {
    const a = this.arrays.get(name) as Int32Array | undefined;
    if (a && a.length >= n) return a;
    const b = new Int32Array(Math.max(n, Math.ceil((a?.length ?? 0) * 1.5)));
    this.arrays.set(name, b);
    return b;
  }
  /** Keeps a grown buffer (a view's whole buffer) under that name for the next pair. */
  keep(name: string, a: Int32Array): void {
    const whole = new Int32Array(a.buffer);
    if (whole.length > (this.arrays.get(name)?.length ?? 0)) this.arrays.set(name, whole);
  }
}

function exposureIndexOf(session: EngineSession, locationId: string): ExposureIndex | null {
  const hit = session.exposure.get(locationId);
  if (hit) return hit;
  const series = session.line.counters[locationId];
  if (!series) return null;
  const ix = buildExposureIndex(series, session.line.locations[locationId]);
  session.exposure.set(locationId, ix);
  return ix;
}

function physicsOf(session: EngineSession, product: ProductInput, minVoidM: number): ProductPhysics {
  const key = `${product.productId}|${minVoidM}`;
  const hit = session.physics.get(key);
  if (hit) return hit;
  const p = buildProductPhysics(product, session.config, minVoidM);
  session.physics.set(key, p);
  return p;
}

/** Counter samples of the windows a pair's route used (for the inputs' hash). */
/** The counter samples of one location that an assessment read: its exposure windows and the samples in them. */
export interface CounterSlice {
  loc: string;
  ws: [number, number][];
  channels: Float64Array;
  start: Float64Array;
  end: Float64Array;
  conc: Float64Array;
  flags: Uint8Array;
}

function counterSlices(session: EngineSession, windows: Map<string, [number, number][]>): CounterSlice[] {
  const out: CounterSlice[] = [];
  for (const [loc, ws] of [...windows.entries()].sort((a, b) => a[0].localeCompare(b[0]))) {
    const s = session.line.counters[loc];
    if (!s) continue;
    const lo = Math.min(...ws.map((w) => w[0]));
    const hi = Math.max(...ws.map((w) => w[1]));
    let i0 = 0;
    while (i0 < s.startMs.length && s.endMs[i0]! <= lo) i0++;
    let i1 = i0;
    while (i1 < s.startMs.length && s.startMs[i1]! < hi) i1++;
    const k = s.channelSizesM.length;
    out.push({
      loc,
      ws,
      channels: s.channelSizesM,
      start: s.startMs.subarray(i0, i1),
      end: s.endMs.subarray(i0, i1),
      conc: s.cumulativePerM3.subarray(i0 * k, i1 * k),
      flags: s.flags.subarray(i0, i1),
    });
  }
  return out;
}

function qTimes(pair: PairInput, product: ProductInput, endMs: number): QTimeStatus[] {
  const out: QTimeStatus[] = [];
  for (const q of product.spec.qTimes)
    for (const w of [pair.top, pair.bottom]) {
      let last: number | null = null;
      for (const s of w.ledger) {
        if (s.kind !== q.fromKind || s.startMs >= endMs) continue;
        const e = Math.min(s.endMs ?? endMs, endMs);
        if (last === null || e > last) last = e;
      }
      const elapsedS = last === null ? null : (endMs - last) / 1000;
      out.push({
        label: q.label,
        waferId: w.waferId,
        fromKind: q.fromKind,
        elapsedS,
        limitS: q.maxS,
        exceeded: elapsedS !== null && elapsedS > q.maxS,
      });
    }
  return out;
}

interface Scenario {
  contributions: Contribution[];
  detected: DetectedFlat;
  evaluation: Evaluation;
  draws: DrawSet;
  figures: PairFigures;
  checks: SpecCheck[];
  pass: boolean;
}

/**
 * Detected particles of both wafers in the bond frame. Positions, sizes, radii, bins and die hits
 * are built once per pair (`geometry`); each scenario only brings its own survivals.
 */
function flattenDetected(
  contributions: Contribution[],
  pair: PairInput,
  physics: ProductPhysics,
  geometry: DetectedFlat | null,
  scratch: Scratch,
): DetectedFlat {
  let n = 0;
  for (const c of contributions) if (c.detected) n += c.detected.survival.length;
  // the as-is and the re-clean scenario each keep their survivals while both are alive
  // Every array taken below is written in full (each contribution's n_c values at its offset, the
  // die hits for every particle) before it is read, so none needs zeroing first.
  const survival = scratch.f64(geometry ? 'survival-reclean' : 'survival', n, true);
  let o = 0;
  for (const c of contributions)
    if (c.detected) {
      survival.set(c.detected.survival, o);
      o += c.detected.survival.length;
    }
  if (geometry) return { ...geometry, survival };
  const flat: DetectedFlat = {
    xM: scratch.f64('x', n, true),
    yM: scratch.f64('y', n, true),
    rM: scratch.f64('r', n, true),
    survival,
    source: scratch.u16('source', n, true),
    sourceStart: new Int32Array(contributions.length).fill(-1),
    bin: scratch.u8('bin', n, true),
    hitStart: null,
    hitDie: null,
  };
  o = 0;
  contributions.forEach((c, i) => {
    const d = c.detected;
    if (!d) return;
    if (c.wafer === 'top') mirrorInto(d.xM, d.yM, pair, flat.xM, flat.yM, o);
    else {
      flat.xM.set(d.xM, o);
      flat.yM.set(d.yM, o);
    }
    flat.sourceStart[i] = o;
    const ix = sizeIndexOf(d.diameterM);
    flat.bin.set(ix.bin, o);
    physics.radiiInto(ix, flat.rM, o);
    flat.source.fill(i, o, o + d.survival.length);
    o += d.survival.length;
  });
  if (physics.dieGrid) {
    const h = buildDieHits(physics.dieGrid, flat.xM, flat.yM, flat.rM, {
      hitStart: scratch.i32('hit-start', n + 1, true),
      hitDie: scratch.i32Buffer('hit-die', 2 * n),
    });
    scratch.keep('hit-die', h.hitDie);
    flat.hitStart = h.hitStart;
    flat.hitDie = h.hitDie;
  }
  return flat;
}

function runScenario(
  contributions: Contribution[],
  pair: PairInput,
  product: ProductInput,
  physics: ProductPhysics,
  cfg: AssessConfig,
  stream: number,
  geometry: DetectedFlat | null,
  /** false for the modelled re-clean: its figures are shown, not attributed (see evaluate). */
  attribution: boolean,
  scratch: Scratch,
): Scenario {
  const detected = flattenDetected(contributions, pair, physics, geometry, scratch);
  const spec = product.spec;
  const evaluation = evaluate(
    contributions,
    detected,
    physics,
    physics.radiiNominal,
    physics.reportableNominalM,
    physics.dieGrid,
    product.clusterAlpha,
    attribution,
  );
  const draws = simulate({
    contributions,
    evaluation,
    physics,
    grid: physics.gridPhysics,
    config: cfg,
    clusterAlpha: product.clusterAlpha,
    stream,
  });
  const c = spec.confidence;
  const sv = sorted(draws.voids);
  const su = sorted(draws.unbondedFraction);
  const ab = physics.bondedAreaM2;
  const unbondedFraction = -Math.expm1(-evaluation.exponent);
  const uf = estimateFrom(unbondedFraction, su, c);
  const nd = evaluation.dieCount;
  const kp = draws.killsPoisson ? sorted(draws.killsPoisson) : null;
  const kn = draws.killsNB ? sorted(draws.killsNB) : null;
  const dieKillsPoisson =
    kp && evaluation.dieKillsPoisson !== null ? estimateFrom(evaluation.dieKillsPoisson, kp, c) : null;
  const dieKillsNB = kn && evaluation.dieKillsNB !== null ? estimateFrom(evaluation.dieKillsNB, kn, c) : null;
  const yieldKills = spec.yieldModel === 'poisson' ? dieKillsPoisson : dieKillsNB;
  const dieYield =
    yieldKills && nd > 0
      ? {
          value: 1 - yieldKills.value / nd,
          low: 1 - yieldKills.high / nd,
          high: 1 - yieldKills.low / nd,
          confidence: c,
        }
      : null;
  const figures: PairFigures = {
    particles: evaluation.particles,
    voids: estimateFrom(evaluation.voids, sv, c),
    unbondedAreaM2: { value: uf.value * ab, low: uf.low * ab, high: uf.high * ab, confidence: c },
    unbondedFraction: uf,
    dieKillsPoisson,
    dieKillsNB,
    dieYield,
    dieCount: nd,
  };
  const checks: SpecCheck[] = [];
  if (spec.maxVoids !== null) {
    const b = boundFrom(sv, c, true);
    checks.push({ metric: 'voids', bound: b, limit: spec.maxVoids, pass: b <= spec.maxVoids });
  }
  if (spec.maxUnbondedFraction !== null) {
    const b = boundFrom(su, c, true);
    checks.push({
      metric: 'unbondedFraction',
      bound: b,
      limit: spec.maxUnbondedFraction,
      pass: b <= spec.maxUnbondedFraction,
    });
  }
  if (spec.minDieYield !== null && nd > 0) {
    const ks = spec.yieldModel === 'poisson' ? kp : kn;
    if (ks) {
      const b = 1 - boundFrom(ks, c, true) / nd;
      checks.push({ metric: 'dieYield', bound: b, limit: spec.minDieYield, pass: b >= spec.minDieYield });
    }
  }
  return { contributions, detected, evaluation, draws, figures, checks, pass: checks.every((x) => x.pass) };
}

function checkWords(ch: SpecCheck, confidence: number): string {
  const conf = `${Math.round(confidence * 100)} %`;
  if (ch.metric === 'voids')
    return `reportable voids: ${conf} upper bound ${fmtCountBound(ch.bound, 'high')}, spec ≤ ${fmtCount(ch.limit)}`;
  if (ch.metric === 'unbondedFraction')
    return `unbonded area: ${conf} upper bound ${fmtPercent(ch.bound)}, spec ≤ ${fmtPercent(ch.limit)}`;
  return `die yield: ${conf} lower bound ${fmtPercent(ch.bound)}, spec ≥ ${fmtPercent(ch.limit)}`;
}

/** Assesses one pair. Pure: the same inputs, options and seed give the same result. */
export function assessPair(pair: PairInput, line: LineData, opts: AssessOptions): PairAssessment {
  return assessPairInSession(pair, createSession(line, opts.config), opts);
}

export function assessPairInSession(
  pair: PairInput,
  session: EngineSession,
  opts: AssessOptions,
): PairAssessment {
  return assessPairWithInputs(pair, session, opts).assessment;
}

/**
 * What the inputs' hash of a pair assessment is computed over (src/engine/hash.ts): kept so that
 * a refused sign-off can say which of these parts differ (src/engine/inputs-diff.ts).
 */
export interface PairInputsRecord {
  /** The adopted parameter set's reference and unexplained-void rate; absent with the typed values. */
  parameters?: { ref: unknown; unexplained: unknown };
  modelVersion: string;
  config: AssessConfig;
  pair: Omit<PairInput, 'top' | 'bottom'> & { top: string; bottom: string };
  top: PairInput['top'];
  bottom: PairInput['bottom'];
  product: ProductInput;
  tools: Record<string, unknown>;
  cleans: LineData['cleans'];
  locations: Record<string, unknown>;
  counters: CounterSlice[];
  routeEnd: 'as-of' | number;
}

/** assessPairInSession, with the record its inputs' hash is computed over. */
export function assessPairWithInputs(
  pair: PairInput,
  session: EngineSession,
  opts: AssessOptions,
): { assessment: PairAssessment; inputs: PairInputsRecord } {
  const { line, config: cfg } = session;
  const product = line.products[pair.productId];
  if (!product) throw new EngineInputError(`pair ${pair.pairId}: product "${pair.productId}" is not loaded`);
  const spec = product.spec;
  const detail = opts.detail ?? 'full';
  const asOfMs = opts.asOfMs;
  const endMs = pair.bondTimeMs ?? asOfMs;
  const minVoidM = pair.smallestReportableVoidM ?? spec.smallestReportableVoidM;
  const physics = physicsOf(session, product, minVoidM);

  const windows = new Map<string, [number, number][]>();
  // Doses already worked out for this pair, by location and interval: wafers that wait together
  // (the two wafers of a pair, often) get the same dose object, and physics.deposition its spectrum.
  const doses = new Map<string, ReturnType<ExposureLookup['dose']>>();
  const exposure: ExposureLookup = {
    dose(locationId, fromMs, toMs) {
      const ix = exposureIndexOf(session, locationId);
      const ws = windows.get(locationId) ?? [];
      ws.push([fromMs, toMs]);
      windows.set(locationId, ws);
      if (!ix) return null;
      const key = `${locationId}|${fromMs}|${toMs}`;
      const hit = doses.get(key);
      if (hit) return hit;
      const loc = line.locations[locationId];
      const limits = physics.classLimits(loc?.isoClass ?? null, ix.channelSizesM);
      const got = { d: intervalDose(ix, fromMs, toMs, limits), channelSizesM: ix.channelSizesM };
      doses.set(key, got);
      return got;
    },
  };
  const common = {
    product,
    line,
    physics,
    exposure,
    config: cfg,
    endMs,
    bonderToolId: pair.bonderToolId,
    confidence: spec.confidence,
  };
  // The detected particles' survivals live in the session's working arrays (see Scratch).
  const scratch = session.scratch;
  const props: WaferPropagation[] = [
    propagateWafer({
      ...common,
      wafer: pair.top,
      role: 'top',
      survivalArray: (n) => scratch.f64('det-top', n, true),
    }),
    propagateWafer({
      ...common,
      wafer: pair.bottom,
      role: 'bottom',
      survivalArray: (n) => scratch.f64('det-bottom', n, true),
    }),
  ];
  const contributions = [...props[0]!.contributions, ...props[1]!.contributions];
  const unexplained = unexplainedContribution(pair, line, physics);
  if (unexplained) contributions.push(unexplained);
  const asIs = runScenario(contributions, pair, product, physics, cfg, 1, null, true, session.scratch);

  // A modelled extra run of the designated pre-bond clean on both wafers, before the bond step.
  let reclean: RecleanScenario | null = null;
  let after: Scenario | null = null;
  const rc = product.recleanCleanId ? line.cleans[product.recleanCleanId] : undefined;
  if (rc && (detail === 'full' || !asIs.pass)) {
    const cs = cloneContributions(contributions, (x, c) => {
      const out = scratch.f64(`det-${c.wafer}-reclean`, x.length, true);
      out.set(x);
      return out;
    });
    applyClean(cs, rc, physics);
    const tool = findTool(line, rc.toolId, null);
    if (tool && physics.adderSpectrum(tool).some((v) => v > 0))
      for (const role of ['top', 'bottom'] as const) {
        const w = role === 'top' ? pair.top : pair.bottom;
        cs.push({
          key: `${role}:tool:reclean`,
          kind: 'tool',
          label: `${tool.name}: adders of the modelled re-clean (${role} wafer ${w.waferId})`,
          wafer: role,
          waferId: w.waferId,
          groupKey: `tool:${toolKeyOf(tool.toolId, tool.chamber)}`,
          groupLabel: tool.name,
          toolId: tool.toolId,
          chamber: tool.chamber,
          locationId: null,
          scanId: null,
          stepSeq: null,
          lastCleanId: null,
          base: Float64Array.from(physics.adderSpectrum(tool)),
          survivalBins: new Float64Array(SPECTRUM_BIN_COUNT).fill(1),
          areaBasisM2: physics.waferAreaM2,
          variation: {
            type: 'tool',
            toolKey: toolKeyOf(tool.toolId, tool.chamber),
            uncertaintyFactor: tool.adderUncertaintyFactor,
          },
          atBond: false,
          detected: null,
        });
      }
    after = runScenario(cs, pair, product, physics, cfg, 2, asIs.detected, false, session.scratch);
    const allowed = Math.max(pair.top.recleanCount, pair.bottom.recleanCount) < spec.maxRecleans;
    reclean = {
      cleanId: rc.cleanId,
      cleanLabel: rc.name,
      allowed,
      after: after.figures,
      meetsSpec: after.pass,
    };
  }

  // Blocking conditions.
  const reasons: Reason[] = [];
  const q = qTimes(pair, product, endMs);
  for (const s of q)
    if (s.exceeded)
      reasons.push({
        code: 'q-time',
        text: `Q-time ${s.label} for wafer ${s.waferId} is ${fmtHours(s.elapsedS!)}; the limit is ${fmtHours(s.limitS)}.`,
        blocking: true,
      });
  const excursions = props.flatMap((p) => p.excursions);
  for (const x of excursions) {
    const loc = line.locations[x.locationId];
    reasons.push({
      code: 'action-level',
      text: `Wafer ${x.waferId} was exposed at ${loc?.name ?? x.locationId} (step ${x.stepSeq}) while the counter read ${fmtCount(x.peakPerM3)} /m³ ≥ ${fmtSize(loc?.levels?.atDiameterM ?? 0)}, above the action level ${fmtCount(x.actionPerM3)} /m³.`,
      blocking: true,
    });
  }
  for (const p of props)
    for (const d of p.dataProblems) reasons.push({ code: d.code, text: d.text, blocking: true });
  if (spec.maxScanAgeS !== null)
    for (const w of [pair.top, pair.bottom]) {
      const s = w.latestScan;
      if (s && (endMs - s.timeMs) / 1000 > spec.maxScanAgeS)
        reasons.push({
          code: 'stale-scan',
          text: `The scan of wafer ${w.waferId} (${s.scanId}) is ${fmtHours((endMs - s.timeMs) / 1000)} old at bonding; the spec accepts ${fmtHours(spec.maxScanAgeS)}.`,
          blocking: true,
        });
    }
  const blocking = reasons.some((r) => r.blocking);
  const specWords = asIs.checks.map((ch) => checkWords(ch, spec.confidence)).join('; ');
  let call: Call;
  if (asIs.pass) {
    reasons.push({
      code: 'within-spec',
      text: asIs.checks.length ? `Within spec: ${specWords}.` : 'The spec states no limit to check.',
      blocking: false,
    });
    call = blocking ? 'hold' : 'bond';
  } else {
    reasons.push({
      code: 'fails-spec',
      text: `Outside spec: ${asIs.checks
        .filter((x) => !x.pass)
        .map((ch) => checkWords(ch, spec.confidence))
        .join('; ')}.`,
      blocking: false,
    });
    if (!reclean || !after) {
      reasons.push({
        code: 'no-reclean',
        text: 'The product names no pre-bond clean to re-run.',
        blocking: true,
      });
      call = 'hold';
    } else if (!reclean.allowed) {
      reasons.push({
        code: 'reclean-limit',
        text: `A re-clean is not allowed: the wafers already had ${Math.max(pair.top.recleanCount, pair.bottom.recleanCount)} re-clean(s); the limit is ${spec.maxRecleans}.`,
        blocking: true,
      });
      call = 'hold';
    } else if (after.pass) {
      reasons.push({
        code: 'reclean-fixes',
        text: `One more ${reclean.cleanLabel} brings it within spec: ${after.checks.map((ch) => checkWords(ch, spec.confidence)).join('; ')}.`,
        blocking: false,
      });
      call = blocking ? 'hold' : 're-clean';
    } else {
      reasons.push({
        code: 'reclean-insufficient',
        text: `Even after one more ${reclean.cleanLabel} it stays outside spec: ${after.checks
          .filter((x) => !x.pass)
          .map((ch) => checkWords(ch, spec.confidence))
          .join('; ')}.`,
        blocking: true,
      });
      call = 'hold';
    }
  }
  // Blocking reasons first, then the spec status.
  reasons.sort((a, b) => Number(b.blocking) - Number(a.blocking));

  const ev = asIs.evaluation;
  const items = sourceContributions(contributions, ev, physics.bondedAreaM2);
  const metric = paretoMetric(spec.minDieYield !== null && physics.dieGrid !== null);
  const pareto = buildPareto(items, ev, physics.bondedAreaM2, metric, line);
  const dominant = dominantSource(items, metric);

  const tails = props.flatMap((p, i) => {
    if (!p.tail) return [];
    const w = i === 0 ? pair.top : pair.bottom;
    const t = p.tail;
    const floor = Math.min(cfg.tailFloorM, t.thresholdM);
    const nTail = (a: number) => t.n * ((floor / t.thresholdM) ** -a - 1);
    return [
      {
        waferId: w.waferId,
        scanId: t.scanId,
        n: t.n,
        thresholdM: t.thresholdM,
        alpha: { value: t.alpha, low: t.lower, high: t.upper, confidence: spec.confidence },
        tailParticles: {
          value: nTail(t.alpha),
          low: nTail(t.lower),
          high: nTail(t.upper),
          confidence: spec.confidence,
        },
      },
    ];
  });

  const notes = props.flatMap((p) => p.notes);
  const parameters = lineParameters(line);
  const inputs: PairInputsRecord = {
    // The adopted set (absent with the typed values, so their hashes stay what they were): its
    // values replaced the typed ones hashed below, and its unexplained-void rate is a source.
    parameters: line.parameters
      ? { ref: line.parameters.ref, unexplained: line.parameters.unexplainedVoids[pair.productId] ?? null }
      : undefined,
    modelVersion: MODEL_VERSION,
    config: cfg,
    pair: { ...pair, top: pair.top.waferId, bottom: pair.bottom.waferId },
    top: pair.top,
    bottom: pair.bottom,
    product,
    tools: Object.fromEntries(
      contributions.filter((c) => c.toolId).map((c) => [c.toolId, findTool(line, c.toolId, c.chamber)]),
    ),
    cleans: line.cleans,
    locations: Object.fromEntries([...windows.keys()].map((k) => [k, line.locations[k] ?? null])),
    counters: counterSlices(session, windows),
    // Before bonding the route ends at the assessment time; after it the bond time fixes it.
    routeEnd: pair.bondTimeMs === null ? 'as-of' : pair.bondTimeMs,
  };
  const inputsHash = canonicalHash(inputs);

  const assessment: PairAssessment = {
    pairId: pair.pairId,
    lotId: pair.lotId,
    productId: pair.productId,
    topWaferId: pair.top.waferId,
    bottomWaferId: pair.bottom.waferId,
    inputsHash,
    modelVersion: MODEL_VERSION,
    specVersion: spec.version,
    parameters,
    asOfMs,
    draws: cfg.draws,
    seed: cfg.seed,
    smallestReportableVoidM: minVoidM,
    reportableParticleM: physics.reportableNominalM,
    tailFloorM: cfg.tailFloorM,
    figures: asIs.figures,
    specChecks: asIs.checks,
    contributions: items,
    pareto,
    dominant,
    tails,
    qTimes: q,
    excursions,
    notes,
    reclean,
    call,
    reasons,
    caution: call === 're-clean' ? RECLEAN_CAUTION : null,
    voidMap: detail === 'full' ? buildVoidMap(asIs, product, physics, cfg) : null,
    spectrum: detail === 'full' ? buildSpectrum(asIs, physics) : null,
  };
  return { assessment, inputs };
}

/**
 * The source of voids no scanned particle explains, when the line's adopted parameter set states a
 * rate for the pair's product (none with the typed values). It arises at the bond (a modelled
 * re-clean does not touch it: nothing says what made these voids) and belongs to the pair, not to a
 * wafer.
 */
function unexplainedContribution(
  pair: PairInput,
  line: LineData,
  physics: ProductPhysics,
): Contribution | null {
  const u = line.parameters?.unexplainedVoids[pair.productId];
  if (!u || !(u.ratePerPair > 0 || u.rateHighPerPair > 0)) return null;
  return {
    key: 'pair:unexplained',
    kind: 'unexplained',
    label: UNEXPLAINED_LABEL,
    wafer: 'pair',
    waferId: pair.pairId,
    groupKey: 'unexplained',
    groupLabel: UNEXPLAINED_LABEL,
    toolId: null,
    chamber: null,
    locationId: null,
    scanId: null,
    stepSeq: null,
    lastCleanId: null,
    base: new Float64Array(SPECTRUM_BIN_COUNT),
    survivalBins: new Float64Array(SPECTRUM_BIN_COUNT).fill(1),
    areaBasisM2: physics.bondedAreaM2,
    variation: {
      type: 'unexplained',
      ratePerPair: u.ratePerPair,
      rateLow: u.rateLowPerPair,
      rateHigh: u.rateHighPerPair,
      areaM2: u.meanAreaM2,
      radiusM: Math.sqrt(u.meanAreaM2 / Math.PI),
    },
    atBond: true,
    detected: null,
  };
}

function buildVoidMap(
  s: Scenario,
  product: ProductInput,
  physics: ProductPhysics,
  cfg: AssessConfig,
): VoidMap {
  const det = s.detected;
  const n = det.survival.length;
  // The largest expected void areas first, picked without sorting every particle (src/engine/top-k.ts).
  const drawn = (i: number) => det.survival[i]! > 0;
  const w = (i: number) => det.survival[i]! * det.rM[i]! * det.rM[i]!;
  const keep = topKIndices(n, cfg.maxMapDiscs, w, drawn);
  const candidates = countIncluded(n, drawn);
  const discs: VoidDisc[] = keep.map((i) => {
    const c = s.contributions[det.source[i]!]!;
    return {
      xM: det.xM[i]!,
      yM: det.yM[i]!,
      rM: det.rM[i]!,
      survival: det.survival[i]!,
      sourceKey: c.key,
      wafer: c.wafer === 'top' ? 'top' : 'bottom', // discs come from a wafer's detected particles
      diameterM: c.detected!.diameterM[i - det.sourceStart[det.source[i]!]!]!,
    };
  });
  let dieGrid: DieGrid | null = null;
  const g = physics.dieGrid;
  const ev = s.evaluation;
  if (g && product.die && ev.detSurvivePerDie && ev.randomMeanDie) {
    const m = ev.randomMeanPerDie;
    const alpha = product.clusterAlpha;
    const yP = physics.poissonYield(m);
    const yNB = physics.negativeBinomialYield(m, alpha);
    const L = product.die;
    const yieldModel = product.spec.yieldModel;
    dieGrid = {
      widthM: L.widthM,
      heightM: L.heightM,
      pitchXM: L.pitchXM,
      pitchYM: L.pitchYM,
      pad: L.pad,
      yieldModel,
      killedThreshold: cfg.killedDieThreshold,
      dies: Array.from({ length: g.count }, (_, d) => {
        // the same terms, in the same form, as the pair's die-loss figures (evaluate.ts)
        const surv = ev.detSurvivePerDie![d]!;
        const md = ev.randomMeanDie![d]!;
        const own = md !== m;
        const pP = 1 - surv * (own ? physics.poissonYield(md) : yP);
        const pNB = 1 - surv * (own ? physics.negativeBinomialYield(md, alpha) : yNB);
        return {
          col: g.dieCol[d]!,
          row: g.dieRow[d]!,
          xM: L.originXM + g.dieCol[d]! * L.pitchXM,
          yM: L.originYM + g.dieRow[d]! * L.pitchYM,
          killProbabilityDetected: 1 - surv,
          randomKillMean: md,
          killProbabilityPoisson: pP,
          killProbabilityNB: pNB,
          killed: (yieldModel === 'poisson' ? pP : pNB) >= cfg.killedDieThreshold,
        };
      }),
    };
  }
  return {
    waferDiameterM: product.waferDiameterM,
    edgeExclusionM: product.edgeExclusionM,
    discs,
    discsOmitted: candidates - keep.length,
    dieGrid,
  };
}

function buildSpectrum(s: Scenario, physics: ProductPhysics): StackedSpectrum {
  return {
    edgesM: Array.from(SPECTRUM_EDGES_M),
    centresM: Array.from(SPECTRUM_CENTRES_M),
    voidRadiusM: Array.from(physics.radiiNominal),
    // Voids no scanned particle explains have no particle size: not in the spectrum.
    series: s.contributions.flatMap((c, i) =>
      c.kind === 'unexplained'
        ? []
        : [
            {
              sourceKey: c.key,
              label: c.label,
              kind: c.kind,
              counts: Array.from(s.evaluation.perContribution[i]?.spectrum ?? interfaceSpectrum(c)),
            },
          ],
    ),
  };
}
