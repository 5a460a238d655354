/**
 * What-if contexts from the database: the pair or lot loaded once (src/engine/loader.ts, the adopted
 * parameter set applied), with a reader of other parameter sets for a `parameters` lever (the typed
 * values are read once, a stored set applied to them). Reads only; a scenario never writes.
 */
import type { Db } from '../../store/db.ts';
import { listLotsForApi, loadLot, loadPair } from '../loader.ts';
import { readAdoptedParameterSet, readParameterSet } from '../parameter-sets.ts';
import { applyParameterSet } from '../parameters.ts';
import type { LineData } from '../types.ts';
import { parseScenario } from './scenario.ts';
import { type Scenario, ScenarioError, type WaitingWhatIf } from './types.ts';
import {
  type ContextOptions,
  createLotContext,
  createPairContext,
  type LotContext,
  type PairContext,
  whatIfLot,
} from './whatif.ts';

function parameterReader(db: Db, typed: () => LineData | null): (key: string) => LineData | null {
  return (key) => {
    const base = typed();
    if (!base) return null;
    if (key === 'typed') return base;
    const id = Number(key);
    const set = Number.isInteger(id) ? readParameterSet(db, id) : null;
    return set ? applyParameterSet(base, set) : null;
  };
}

/** A pair's what-if context, or null when there is no such pair. */
export function openPairContext(db: Db, pairId: string, opts: ContextOptions): PairContext | null {
  const loaded = loadPair(db, pairId, opts.asOfMs);
  if (!loaded) return null;
  const ctx = createPairContext(loaded.pair, loaded.line, opts);
  ctx.parameterSet = readAdoptedParameterSet(db);
  let typed: LineData | null | undefined;
  ctx.parameterLine = parameterReader(db, () => {
    if (typed === undefined) typed = loadPair(db, pairId, opts.asOfMs, null)?.line ?? null;
    return typed;
  });
  return ctx;
}

/** A lot's what-if context, or null when there is no such lot. */
export function openLotContext(db: Db, lotId: string, opts: ContextOptions): LotContext | null {
  const loaded = loadLot(db, lotId, opts.asOfMs);
  if (!loaded) return null;
  const ctx = createLotContext(loaded.lot, loaded.line, opts);
  ctx.parameterSet = readAdoptedParameterSet(db);
  let typed: LineData | null | undefined;
  ctx.parameterLine = parameterReader(db, () => {
    if (typed === undefined) typed = loadLot(db, lotId, opts.asOfMs, undefined, null)?.line ?? null;
    return typed;
  });
  return ctx;
}

/** Lots waiting to bond at asOfMs: with pairs, and some pair not yet bonded. */
export function waitingLotIds(db: Db, asOfMs: number): string[] {
  const out: string[] = [];
  for (const l of listLotsForApi(db)) {
    if (l.pairCount === 0) continue;
    const loaded = loadLot(db, l.lotId, asOfMs);
    if (loaded?.lot.pairs.some((p) => p.bondTimeMs === null)) out.push(l.lotId);
  }
  return out;
}

/**
 * The waiting lots and their contexts as a caller has them already (the web routes keep them per
 * data generation and time): the same as waitingLotIds and openLotContext with the same options.
 */
export interface WaitingSources {
  lotIds: string[];
  context: (lotId: string) => LotContext | null;
}

/**
 * The scenario on every waiting lot. A lot the scenario cannot apply to (e.g. it never waits at the
 * location a lever names) is listed in `skipped` with the lever's message; other errors propagate.
 * `sources`: the waiting lots and their contexts when the caller has them (else read here).
 */
export function whatIfWaiting(
  db: Db,
  scenario: Scenario,
  opts: ContextOptions,
  sources?: WaitingSources,
): WaitingWhatIf {
  parseScenario(scenario); // a lever of the wrong shape is refused once, not lot by lot
  const lots: WaitingWhatIf['lots'] = [];
  const skipped: WaitingWhatIf['skipped'] = [];
  for (const lotId of sources?.lotIds ?? waitingLotIds(db, opts.asOfMs)) {
    const ctx = sources ? sources.context(lotId) : openLotContext(db, lotId, opts);
    if (!ctx) continue;
    try {
      lots.push(whatIfLot(ctx, scenario));
    } catch (e) {
      if (e instanceof ScenarioError && e.leverIndex !== null)
        skipped.push({ lotId, reason: (e as Error).message });
      else throw e;
    }
  }
  return { asOfMs: opts.asOfMs, scenario, lots, skipped };
}
