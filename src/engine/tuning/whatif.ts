/**
 * What-if: a scenario's assessment beside the as-is one, for a pair, a lot, or every waiting lot.
 *
 * Load once, evaluate many: a context (createPairContext / createLotContext, or the loaders in
 * load.ts) holds the loaded inputs, the engine session and the as-is assessment; each scenario then
 * costs one assessment. The scenario's session shares the as-is session's caches for every part the
 * scenario leaves unchanged (a location's exposure index when its counters and location are the same
 * objects; the product physics when the product and the config are) and its scratch arrays.
 * A scenario with no levers gives the as-is figures exactly (the same inputs through the same engine).
 */
import { ModelInputError } from '../../model/errors.ts';
import { resolveConfig } from '../config.ts';
import { assessLotInSession } from '../lot.ts';
import { assessPairInSession, createSession, type EngineSession } from '../pair.ts';
import type { ParameterSet } from '../parameter-set-types.ts';
import type {
  AssessConfig,
  LineData,
  LotAssessment,
  LotInput,
  PairAssessment,
  PairFigures,
  PairInput,
} from '../types.ts';
import { applyScenario, leverWords, parseScenario, type ScenarioInputs } from './scenario.ts';
import { type FiguresDelta, type LotWhatIf, type PairWhatIf, type Scenario, ScenarioError } from './types.ts';

export interface ContextOptions {
  asOfMs: number;
  config?: Partial<AssessConfig>;
  /** 'full' (pair default: void map, die grid, spectrum) or 'summary' (lot default). */
  detail?: 'full' | 'summary';
}

interface BaseContext {
  asOfMs: number;
  detail: 'full' | 'summary';
  inputs: ScenarioInputs;
  session: EngineSession;
  /**
   * Line data under another parameter set ("typed" or the set id), for a `parameters` lever; the
   * loaders (load.ts) give one that reads the store once per set. Absent: that lever is refused.
   */
  parameterLine?: (key: string) => LineData | null;
  parameterLines: Record<string, LineData>;
  /** The parameter set the line data carries (the loaders set it; sensitivity takes its intervals). */
  parameterSet?: ParameterSet | null;
}

export interface PairContext extends BaseContext {
  kind: 'pair';
  pair: PairInput;
  asIs: PairAssessment;
}

export interface LotContext extends BaseContext {
  kind: 'lot';
  lot: LotInput;
  asIs: LotAssessment;
}

export type WhatIfContext = PairContext | LotContext;

/** A pair's what-if context: its inputs, session and as-is assessment (computed once, here). */
export function createPairContext(pair: PairInput, line: LineData, opts: ContextOptions): PairContext {
  const session = createSession(line, opts.config);
  const detail = opts.detail ?? 'full';
  const asIs = assessPairInSession(pair, session, { asOfMs: opts.asOfMs, config: opts.config, detail });
  return {
    kind: 'pair',
    asOfMs: opts.asOfMs,
    detail,
    inputs: { pairs: [pair], line, config: opts.config },
    session,
    pair,
    asIs,
    parameterLines: {},
  };
}

/** A lot's what-if context. */
export function createLotContext(lot: LotInput, line: LineData, opts: ContextOptions): LotContext {
  const session = createSession(line, opts.config);
  const detail = opts.detail ?? 'summary';
  const asIs = assessLotInSession(lot, session, { asOfMs: opts.asOfMs, config: opts.config, detail });
  return {
    kind: 'lot',
    asOfMs: opts.asOfMs,
    detail,
    inputs: { pairs: lot.pairs, line, config: opts.config },
    session,
    lot,
    asIs,
    parameterLines: {},
  };
}

function sameConfig(a: AssessConfig, b: AssessConfig): boolean {
  for (const k of Object.keys(a) as (keyof AssessConfig)[]) if (a[k] !== b[k]) return false;
  return true;
}

/** A session for the scenario's inputs, sharing the base session's caches where nothing changed. */
export function scenarioSession(base: EngineSession, changed: ScenarioInputs): EngineSession {
  const config = resolveConfig(changed.config);
  const s = createSession(changed.line, config);
  s.scratch = base.scratch;
  const bl = base.line;
  const nl = changed.line;
  for (const [loc, ix] of base.exposure)
    if (nl.counters[loc] === bl.counters[loc] && nl.locations[loc] === bl.locations[loc])
      s.exposure.set(loc, ix);
  if (sameConfig(config, base.config))
    for (const [key, ph] of base.physics) {
      const pid = key.slice(0, key.lastIndexOf('|'));
      if (nl.products[pid] === bl.products[pid]) s.physics.set(key, ph);
    }
  return s;
}

/** Applies the scenario to the context's inputs (loading another parameter set's line if it asks). */
export function scenarioInputs(ctx: WhatIfContext, scenario: Scenario): ScenarioInputs {
  const parsed = parseScenario(scenario);
  for (const l of parsed.levers)
    if (l.kind === 'parameters') {
      const key = l.parameterSetId === null ? 'typed' : String(l.parameterSetId);
      if (!ctx.parameterLines[key] && ctx.parameterLine) {
        const line = ctx.parameterLine(key);
        if (line) ctx.parameterLines[key] = line;
      }
    }
  return applyScenario(ctx.inputs, parsed, { parameterLines: ctx.parameterLines, asOfMs: ctx.asOfMs });
}

function dieLoss(f: PairFigures, model: 'poisson' | 'negative-binomial' | null): number | null {
  const e = model === 'poisson' ? f.dieKillsPoisson : f.dieKillsNB;
  return e ? e.value : null;
}

/** Scenario − as-is of the headline figures (die loss in the spec's yield form). */
export function figuresDelta(
  asIs: PairFigures,
  whatIf: PairFigures,
  yieldModel: 'poisson' | 'negative-binomial' | null,
): FiguresDelta {
  const a = dieLoss(asIs, yieldModel);
  const b = dieLoss(whatIf, yieldModel);
  return {
    voids: whatIf.voids.value - asIs.voids.value,
    unbondedAreaM2: whatIf.unbondedAreaM2.value - asIs.unbondedAreaM2.value,
    unbondedFraction: whatIf.unbondedFraction.value - asIs.unbondedFraction.value,
    dieLoss: a === null || b === null ? null : b - a,
  };
}

function yieldModelOf(ctx: WhatIfContext, productId: string): 'poisson' | 'negative-binomial' | null {
  return ctx.inputs.line.products[productId]?.spec.yieldModel ?? null;
}

/** The pair assessed under the scenario (no as-is beside it): what solvers and sensitivity run. */
export function assessPairScenario(
  ctx: PairContext,
  scenario: Scenario,
  detail: 'full' | 'summary' = ctx.detail,
): PairAssessment {
  const changed = scenarioInputs(ctx, scenario);
  const session = scenarioSession(ctx.session, changed);
  return inModelRange(() =>
    assessPairInSession(changed.pairs[0]!, session, { asOfMs: ctx.asOfMs, config: changed.config, detail }),
  );
}

/** A model refusing a value a scenario led to is the scenario's fault: a ScenarioError naming the rule. */
function inModelRange<T>(run: () => T): T {
  try {
    return run();
  } catch (e) {
    if (e instanceof ModelInputError)
      throw new ScenarioError(`the scenario takes an input outside the model's range: ${e.message}`);
    throw e;
  }
}

/** The lot assessed under the scenario. */
export function assessLotScenario(
  ctx: LotContext,
  scenario: Scenario,
  detail: 'full' | 'summary' = ctx.detail,
): LotAssessment {
  const changed = scenarioInputs(ctx, scenario);
  const session = scenarioSession(ctx.session, changed);
  return inModelRange(() =>
    assessLotInSession({ ...ctx.lot, pairs: changed.pairs }, session, {
      asOfMs: ctx.asOfMs,
      config: changed.config,
      detail,
    }),
  );
}

/** What-if of one pair: the scenario's assessment beside the as-is one. Throws ScenarioError for a bad lever. */
export function whatIfPair(ctx: PairContext, scenario: Scenario): PairWhatIf {
  const whatIf = assessPairScenario(ctx, scenario);
  const parsed = parseScenario(scenario);
  return {
    pairId: ctx.pair.pairId,
    lotId: ctx.pair.lotId,
    asOfMs: ctx.asOfMs,
    scenario: parsed,
    applied: parsed.levers.map(leverWords),
    asIs: ctx.asIs,
    whatIf,
    delta: figuresDelta(ctx.asIs.figures, whatIf.figures, yieldModelOf(ctx, ctx.pair.productId)),
    callChanged: whatIf.call !== ctx.asIs.call,
  };
}

/** What-if of a lot: every pair under the scenario, the lot call, and the change pair by pair. */
export function whatIfLot(ctx: LotContext, scenario: Scenario): LotWhatIf {
  const whatIf = assessLotScenario(ctx, scenario);
  const parsed = parseScenario(scenario);
  const ym = yieldModelOf(ctx, ctx.lot.productId);
  const before = new Map(ctx.asIs.pairs.map((p) => [p.pairId, p]));
  const pairs = whatIf.pairs.map((w) => {
    const a = before.get(w.pairId)!;
    return {
      pairId: w.pairId,
      asIsCall: a.call,
      whatIfCall: w.call,
      delta: figuresDelta(a.figures, w.figures, ym),
    };
  });
  const nb = (l: LotAssessment) => l.totals.dieKillsNB;
  const a = nb(ctx.asIs);
  const b = nb(whatIf);
  return {
    lotId: ctx.lot.lotId,
    asOfMs: ctx.asOfMs,
    scenario: parsed,
    applied: parsed.levers.map(leverWords),
    asIs: ctx.asIs,
    whatIf,
    pairs,
    delta: {
      voids: whatIf.totals.voids - ctx.asIs.totals.voids,
      dieKillsNB: a === null || b === null ? null : b - a,
    },
    callChanged: whatIf.call !== ctx.asIs.call,
  };
}
