/**
 * applyScenario: a scenario's levers applied to a pair's or lot's inputs, returning new inputs.
 * Pure: nothing given is mutated (objects a lever changes are copied, the rest shared), nothing is
 * stored. Every lever is checked first (zod for its shape and ranges, then against the inputs: a
 * location, clean or tool the subject does not have); a bad lever throws ScenarioError naming it,
 * and nothing is applied.
 */
import { fitRemovalCurve } from '../../model/clean.ts';
import { DEFAULT_ASSESS_CONFIG } from '../config.ts';
import type {
  AssessConfig,
  CleanInput,
  CounterSeriesInput,
  LedgerStepInput,
  LineData,
  PairInput,
  ProductInput,
  ToolInput,
  WaferInput,
} from '../types.ts';
import { D50_RANGE_M, parseScenario } from './levers.ts';
import { type Scenario, ScenarioError } from './types.ts';

export { D50_RANGE_M, leverWords, MAX_EXTRA_PASSES, parseScenario, scenarioSchema } from './levers.ts';

/** The inputs a scenario changes: the subject's pairs, the line data and the engine config. */
export interface ScenarioInputs {
  pairs: PairInput[];
  line: LineData;
  config?: Partial<AssessConfig>;
}

export interface ApplyOptions {
  /** Assessment time, UTC ms: where an extra clean pass of a pair not yet bonded runs (just before it). */
  asOfMs?: number;
  /**
   * Line data under other parameter sets, by set id ("typed" for the typed values), for a
   * `parameters` lever (the loader builds them; see whatif.ts). Missing: that lever is refused.
   */
  parameterLines?: Record<string, LineData>;
}

/** The logistic parameters a clean uses (measured bands fitted first, as the engine does). */
export function cleanLogistic(c: CleanInput): {
  maxEfficiency: number;
  halfSizeM: number;
  widthDecades: number;
} {
  if (c.removalBands?.length) {
    const p = fitRemovalCurve(
      c.removalBands.map((b) => ({ lowerM: b.fromM, upperM: b.toM, before: b.before, after: b.after })),
    ).params;
    return { maxEfficiency: p.maxEfficiency, halfSizeM: p.d50M, widthDecades: 1 / (p.steepness * Math.LN10) };
  }
  return { maxEfficiency: c.maxEfficiency, halfSizeM: c.halfSizeM, widthDecades: c.widthDecades };
}

const D50_FLOOR_M = D50_RANGE_M[0];

/**
 * The curve through (d, E) with width w: log10 d50 = log10 d + w·ln(E_max/E − 1); an E at or above
 * E_max puts the plateau at every size (E_max raised to E).
 */
export function curveThrough(
  base: { maxEfficiency: number; halfSizeM: number; widthDecades: number },
  diameterM: number,
  efficiency: number,
): { maxEfficiency: number; halfSizeM: number; widthDecades: number } {
  const w = base.widthDecades;
  if (efficiency <= 0) return { maxEfficiency: 0, halfSizeM: base.halfSizeM, widthDecades: w };
  const eMax = Math.max(base.maxEfficiency, efficiency);
  const ratio = eMax / efficiency - 1;
  const d50 = ratio > 0 ? 10 ** (Math.log10(diameterM) + w * Math.log(ratio)) : D50_FLOOR_M;
  return {
    maxEfficiency: eMax,
    halfSizeM: Math.min(D50_RANGE_M[1], Math.max(D50_FLOOR_M, d50)),
    widthDecades: w,
  };
}

function withClean(
  c: CleanInput,
  p: { maxEfficiency: number; halfSizeM: number; widthDecades: number },
): CleanInput {
  return { ...c, ...p, removalBands: null };
}

function scaleTool(t: ToolInput, f: number): ToolInput {
  return {
    ...t,
    adders: t.adders ? { ...t.adders, countAbove: t.adders.countAbove * f } : null,
    adderBands: t.adderBands ? t.adderBands.map((b) => ({ ...b, count: b.count * f })) : t.adderBands,
  };
}

function scaleSeries(s: CounterSeriesInput, f: number): CounterSeriesInput {
  return { ...s, cumulativePerM3: s.cumulativePerM3.map((v) => v * f) };
}

function mapWafers(pairs: PairInput[], fn: (w: WaferInput) => WaferInput): PairInput[] {
  return pairs.map((p) => ({ ...p, top: fn(p.top), bottom: fn(p.bottom) }));
}

function subjectWords(pairs: PairInput[]): string {
  if (pairs.length === 1) return `pair ${pairs[0]!.pairId}`;
  const lots = [...new Set(pairs.map((p) => p.lotId))];
  return lots.length === 1 ? `lot ${lots[0]}` : `${lots.length} lots`;
}

function isExposure(s: LedgerStepInput): boolean {
  return s.kind === 'wait' || s.kind === 'transfer';
}

/**
 * n extra runs of a clean at the end of both wafers' routes: after the last step that starts before
 * the route's end (the bond time, else the assessment time), before a bond step; the wafer's
 * re-clean count rises by n. The runs take the clean's tool (its adders apply after the removal).
 */
function withExtraPasses(p: PairInput, clean: CleanInput, n: number, asOfMs: number): PairInput {
  const endMs = p.bondTimeMs ?? asOfMs;
  const wafer = (w: WaferInput): WaferInput => {
    const sorted = [...w.ledger].sort((a, b) => a.seq - b.seq);
    const bond = sorted.findIndex((s) => s.kind === 'bond');
    const head = bond >= 0 ? sorted.slice(0, bond) : sorted.filter((s) => s.startMs < endMs);
    const tail = bond >= 0 ? sorted.slice(bond) : sorted.filter((s) => s.startMs >= endMs);
    // just before the route's end, and after every step already begun
    const at = Math.max(endMs - 1, ...head.map((s) => s.startMs));
    const runs: LedgerStepInput[] = Array.from({ length: n }, (_, k) => ({
      seq: 0,
      step: `${clean.name}: what-if extra pass ${k + 1}`,
      kind: 'clean',
      toolId: clean.toolId,
      chamber: null,
      cleanId: clean.cleanId,
      startMs: at,
      endMs: at,
      locationId: null,
      carrier: 'in-tool',
      orientation: 'face-up',
    }));
    const ledger = [...head, ...runs, ...tail].map((s, k) => ({ ...s, seq: k }));
    return { ...w, ledger, recleanCount: w.recleanCount + n };
  };
  return { ...p, top: wafer(p.top), bottom: wafer(p.bottom) };
}

/**
 * Applies a scenario. Returns new inputs; the given ones are left as they were. Throws ScenarioError
 * (naming the lever) for a lever whose shape or range is wrong or whose location, clean or tool the
 * subject does not have.
 */
export function applyScenario(
  inputs: ScenarioInputs,
  raw: Scenario,
  opts: ApplyOptions = {},
): ScenarioInputs {
  const scenario = parseScenario(raw);
  let { pairs, line } = inputs;
  let config: Partial<AssessConfig> = { ...(inputs.config ?? {}) };
  const who = subjectWords(pairs);
  const asOfMs =
    opts.asOfMs ??
    Math.max(
      ...pairs.flatMap((p) => [p.top, p.bottom]).flatMap((w) => w.ledger.map((s) => s.endMs ?? s.startMs)),
    );
  // A parameters lever first: the others then act on that set's values.
  scenario.levers.forEach((l, i) => {
    if (l.kind !== 'parameters') return;
    const key = l.parameterSetId === null ? 'typed' : String(l.parameterSetId);
    const other = opts.parameterLines?.[key];
    if (!other)
      throw new ScenarioError(
        `lever ${i + 1} (parameters): ${l.parameterSetId === null ? 'the typed values are' : `parameter set ${l.parameterSetId} is`} not loaded (no such stored set?)`,
        i,
      );
    line = other;
  });
  scenario.levers.forEach((l, i) => {
    const fail = (m: string): never => {
      throw new ScenarioError(`lever ${i + 1} (${l.kind}): ${m}`, i);
    };
    switch (l.kind) {
      case 'parameters':
        return;
      case 'clean': {
        const c = line.cleans[l.cleanId];
        if (!c)
          fail(
            `unknown clean "${l.cleanId}" (known: ${Object.keys(line.cleans).sort().join(', ') || 'none'})`,
          );
        let p = cleanLogistic(c!);
        if (l.d50M !== undefined) p = { ...p, halfSizeM: l.d50M };
        if (l.widthDecades !== undefined) p = { ...p, widthDecades: l.widthDecades };
        if (l.maxEfficiency !== undefined) p = { ...p, maxEfficiency: l.maxEfficiency };
        if (l.removalAt) p = curveThrough(p, l.removalAt.diameterM, l.removalAt.efficiency);
        const curveChanged =
          l.d50M !== undefined ||
          l.widthDecades !== undefined ||
          l.maxEfficiency !== undefined ||
          l.removalAt;
        if (curveChanged) line = { ...line, cleans: { ...line.cleans, [l.cleanId]: withClean(c!, p) } };
        const n = l.extraPasses ?? 0;
        if (n > 0) pairs = pairs.map((p) => withExtraPasses(p, c!, n, asOfMs));
        return;
      }
      case 'wait': {
        let steps = 0;
        pairs = mapWafers(pairs, (w) => {
          if (!w.ledger.some((s) => isExposure(s) && s.locationId === l.locationId)) return w;
          return {
            ...w,
            ledger: w.ledger.map((s) => {
              if (!isExposure(s) || s.locationId !== l.locationId) return s;
              steps++;
              const out: LedgerStepInput = { ...s };
              if (l.durationS !== undefined) out.scenarioDurationS = l.durationS;
              if (l.carrier !== undefined) out.carrier = l.carrier;
              if (l.isolation !== undefined) out.scenarioIsolation = l.isolation;
              return out;
            }),
          };
        });
        if (steps === 0) fail(`no wafer of ${who} waits at location "${l.locationId}"`);
        return;
      }
      case 'air': {
        const loc = line.locations[l.locationId];
        const series = line.counters[l.locationId];
        if (!loc || !series)
          fail(
            `location "${l.locationId}" is not on the route of ${who} (its air is not used; visited: ${Object.keys(line.counters).sort().join(', ') || 'none'})`,
          );
        let f = l.scale ?? 1;
        if (l.isoClass !== undefined) {
          if (loc!.isoClass === null)
            fail(`location "${l.locationId}" states no ISO class to scale from; give a scale factor instead`);
          f = 10 ** (l.isoClass - loc!.isoClass!);
        }
        line = {
          ...line,
          counters: { ...line.counters, [l.locationId]: scaleSeries(series!, f) },
          locations:
            l.isoClass !== undefined
              ? { ...line.locations, [l.locationId]: { ...loc!, isoClass: l.isoClass } }
              : line.locations,
        };
        return;
      }
      case 'adders': {
        const t = line.tools[l.toolKey];
        if (!t) fail(`unknown tool "${l.toolKey}" (known: ${Object.keys(line.tools).sort().join(', ')})`);
        let nt: ToolInput;
        if (l.factor !== undefined) nt = scaleTool(t!, l.factor);
        else {
          if (!t!.adders) fail(`tool "${l.toolKey}" states its adders per size band: give a factor instead`);
          nt = { ...t!, adders: { ...t!.adders!, countAbove: l.countAbove! } };
        }
        line = { ...line, tools: { ...line.tools, [l.toolKey]: nt } };
        return;
      }
      case 'adders-scale': {
        const tools: Record<string, ToolInput> = {};
        for (const [k, t] of Object.entries(line.tools)) tools[k] = scaleTool(t, l.factor);
        line = { ...line, tools };
        return;
      }
      case 'removal-scale': {
        const cleans: Record<string, CleanInput> = {};
        for (const [k, c] of Object.entries(line.cleans)) {
          const p = cleanLogistic(c);
          const d50 = Math.min(D50_RANGE_M[1], Math.max(D50_RANGE_M[0], p.halfSizeM * l.d50Factor));
          cleans[k] = withClean(c, { ...p, halfSizeM: d50 });
        }
        line = { ...line, cleans };
        return;
      }
      case 'energy':
      case 'tail-slope': {
        const products: Record<string, ProductInput> = { ...line.products };
        for (const pid of new Set(pairs.map((p) => p.productId))) {
          const p = products[pid];
          if (!p) continue;
          products[pid] =
            l.kind === 'energy'
              ? { ...p, surfacePrep: { ...p.surfacePrep, energyJm2: l.energyJm2 } }
              : { ...p, incoming: { ...p.incoming, slope: l.slope } };
        }
        line = { ...line, products };
        // Every scan's tail takes the stated slope: no scan has enough particles for its own fit.
        if (l.kind === 'tail-slope') config = { ...config, minTailParticles: Number.MAX_SAFE_INTEGER };
        return;
      }
      case 'threshold': {
        pairs = mapWafers(pairs, (w) => {
          const s = w.latestScan;
          if (!s) return w;
          if (l.thresholdM < s.thresholdM * (1 - 1e-9))
            fail(
              `scan ${s.scanId} of wafer ${w.waferId} was taken at ${+(s.thresholdM * 1e9).toPrecision(4)} nm: a threshold can only rise (what lies below it is unknown)`,
            );
          const p = s.particles;
          const keep: number[] = [];
          for (let k = 0; k < p.count; k++) if (p.diameterM[k]! >= l.thresholdM) keep.push(k);
          const pick = (a: Float64Array) => Float64Array.from(keep, (k) => a[k]!);
          return {
            ...w,
            latestScan: {
              ...s,
              thresholdM: l.thresholdM,
              particles: { count: keep.length, xM: pick(p.xM), yM: pick(p.yM), diameterM: pick(p.diameterM) },
            },
          };
        });
        return;
      }
      case 'deposition': {
        config = {
          ...config,
          depositionFactor: (config.depositionFactor ?? DEFAULT_ASSESS_CONFIG.depositionFactor) * l.factor,
        };
        return;
      }
      case 'isolation': {
        config = { ...config, closedIsolation: l.isolation, purgedIsolation: l.isolation };
        return;
      }
    }
  });
  return { pairs, line, config };
}
