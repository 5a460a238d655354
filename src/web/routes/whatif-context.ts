/**
 * What the what-if routes share: the subjects loaded once per data version and time (the as-is
 * assessment inside), the choices the levers offer, and the words of a refused lever.
 */
import type { Context } from 'hono';
import type { LeverOptions } from '../../../views/partials/whatif-levers.tsx';
import { EngineInputError } from '../../engine/pair.ts';
import {
  type LotContext,
  openLotContext,
  openPairContext,
  type PairContext,
  type Scenario,
  ScenarioError,
  type WaitingWhatIf,
  waitingLotIds,
  whatIfWaiting,
} from '../../engine/tuning/index.ts';
import type { LineData, PairInput } from '../../engine/types.ts';
import { ModelInputError, plainModelError } from '../../model/errors.ts';
import { listParameterSets } from '../../store/parameter-sets.ts';
import type { AppContext } from '../context.ts';
import { csrfToken } from '../csrf.ts';
import { BadParamError } from '../params.ts';
import { isFragmentRequest } from '../render.ts';
import { memoised } from './lots.tsx';

/** A what-if subject loaded once per data version and time (the as-is assessment inside it). */
export function pairContext(
  ctx: AppContext,
  id: string,
  asOfMs: number,
): PairContext | { problem: string } | null {
  return memoised(ctx, `whatif-pair|${id}|${asOfMs}`, () => {
    try {
      return openPairContext(ctx.db, id, { asOfMs, detail: 'full' });
    } catch (e) {
      if (e instanceof EngineInputError) return { problem: e.message };
      throw e;
    }
  });
}

export function lotContext(
  ctx: AppContext,
  id: string,
  asOfMs: number,
): LotContext | { problem: string } | null {
  return memoised(ctx, `whatif-lot|${id}|${asOfMs}`, () => {
    try {
      return openLotContext(ctx.db, id, { asOfMs, detail: 'summary' });
    } catch (e) {
      if (e instanceof EngineInputError) return { problem: e.message };
      throw e;
    }
  });
}

/** The choices the levers offer for a subject's wafers on its line. */
export function leverOptions(ctx: AppContext, line: LineData, pairs: PairInput[]): LeverOptions {
  const waitLocs = new Set<string>();
  const toolKeys = new Set<string>();
  const cleanIds = new Set<string>();
  let threshold: number | null = null;
  for (const p of pairs)
    for (const w of [p.top, p.bottom]) {
      if (w.latestScan)
        threshold =
          threshold === null ? w.latestScan.thresholdM : Math.min(threshold, w.latestScan.thresholdM);
      for (const s of w.ledger) {
        if ((s.kind === 'wait' || s.kind === 'transfer') && s.locationId) waitLocs.add(s.locationId);
        if (s.toolId) toolKeys.add(s.chamber ? `${s.toolId}/${s.chamber}` : s.toolId);
        if (s.cleanId) cleanIds.add(s.cleanId);
      }
    }
  const locName = (id: string) => {
    const l = line.locations[id];
    return l ? `${id} — ${l.name}` : id;
  };
  const product = line.products[pairs[0]?.productId ?? ''];
  const sets = (() => {
    try {
      return listParameterSets(ctx.db);
    } catch {
      return [];
    }
  })();
  return {
    cleans: Object.values(line.cleans)
      .sort(
        (a, b) =>
          Number(cleanIds.has(b.cleanId)) - Number(cleanIds.has(a.cleanId)) ||
          a.cleanId.localeCompare(b.cleanId),
      )
      .map((c) => ({
        value: c.cleanId,
        label: `${c.cleanId} — ${c.name}${cleanIds.has(c.cleanId) ? '' : ' (not on this route)'}`,
      })),
    waitLocations: [...waitLocs].sort().map((id) => ({ value: id, label: locName(id) })),
    airLocations: Object.keys(line.counters)
      .sort()
      .map((id) => ({ value: id, label: locName(id) })),
    tools: Object.keys(line.tools)
      .filter((k) => line.tools[k]!.adders !== null || (line.tools[k]!.adderBands?.length ?? 0) > 0)
      .sort((a, b) => Number(toolKeys.has(b)) - Number(toolKeys.has(a)) || a.localeCompare(b))
      .map((k) => ({ value: k, label: `${k} — ${line.tools[k]!.name}` })),
    parameterSets: [
      { value: 'typed', label: 'the typed values (no set)' },
      ...sets.map((s) => ({
        value: String(s.id),
        label: `set ${s.id} v${s.version} — ${s.label} (${s.state})`,
      })),
    ],
    energyJm2: product ? +product.surfacePrep.energyJm2.toPrecision(4) : null,
    thresholdNm: threshold === null ? null : +(threshold * 1e9).toPrecision(4),
  };
}

export function token(c: Context): string {
  try {
    return csrfToken(c);
  } catch {
    return '';
  }
}

/** A fragment for the htmx swap (a history restore asks for the whole page). */
export function wantsFragment(c: Context): boolean {
  return isFragmentRequest(c) && c.req.header('HX-History-Restore-Request') !== 'true';
}

/** The hidden fields the form carries along: the assessment time when the URL names one. */
export function hiddenOf(c: Context): Record<string, string> {
  const asOf = c.req.query('asOf');
  return asOf && asOf.trim() !== '' ? { asOf: asOf.trim() } : {};
}

/** The lever error (a field the scenario cannot use, or a lever the engine refuses) in words. */
export function leverError(e: unknown): string | null {
  if (e instanceof BadParamError && e.status === 400) return `${e.message}.`;
  if (e instanceof ScenarioError) return `${e.message}.`;
  // A lever that takes a model outside its range (a curve pushed past what it can describe).
  if (e instanceof ModelInputError)
    return `with these levers a computed quantity is outside its model's range (${plainModelError(e)}).`;
  return null;
}

/** Runs a what-if, turning a refused lever into its words. */
export function attempt<T>(run: () => T): { ok: T } | { error: string } {
  try {
    return { ok: run() };
  } catch (e) {
    const m = leverError(e);
    if (m) return { error: m };
    throw e;
  }
}

/**
 * The levers' choices for every waiting lot: each lot's loaded line data holds what its own pairs
 * use, so the choices (and the names a lever may use) are the union over the waiting lots.
 */
export function waitingOptions(
  ctx: AppContext,
  asOfMs: number,
): { options: LeverOptions; lines: LineData[] } {
  return memoised(ctx, `whatif-waiting-options|${asOfMs}`, () => {
    const pairs: PairInput[] = [];
    const lines: LineData[] = [];
    for (const id of waitingLotIdsOf(ctx, asOfMs)) {
      const lc = lotContext(ctx, id, asOfMs);
      if (!lc || 'problem' in lc) continue;
      lines.push(lc.inputs.line);
      pairs.push(...lc.lot.pairs);
    }
    if (lines.length === 0)
      return {
        lines,
        options: {
          cleans: [],
          waitLocations: [],
          airLocations: [],
          tools: [],
          parameterSets: [],
          energyJm2: null,
          thresholdNm: null,
        },
      };
    const merged: LineData = {
      ...lines[0]!,
      products: Object.assign({}, ...lines.map((l) => l.products)),
      tools: Object.assign({}, ...lines.map((l) => l.tools)),
      cleans: Object.assign({}, ...lines.map((l) => l.cleans)),
      locations: Object.assign({}, ...lines.map((l) => l.locations)),
      counters: Object.assign({}, ...lines.map((l) => l.counters)),
    };
    return { options: leverOptions(ctx, merged, pairs), lines };
  });
}

export function waitingLotIdsOf(ctx: AppContext, asOfMs: number): string[] {
  return memoised(ctx, `whatif-waiting-ids|${asOfMs}`, () => waitingLotIds(ctx.db, asOfMs));
}

/**
 * The scenario on every waiting lot, kept per data generation, time and scenario (the page, its swap
 * and its export share it), from the waiting lots' contexts kept for the levers' choices
 * (`lotContext`): the same as whatIfWaiting on the database (tested), without loading and assessing
 * each lot again.
 */
export function waitingWhatIf(ctx: AppContext, scenario: Scenario, asOfMs: number): WaitingWhatIf {
  return memoised(ctx, `whatif-waiting|${asOfMs}|${JSON.stringify(scenario)}`, () =>
    whatIfWaiting(
      ctx.db,
      scenario,
      { asOfMs },
      {
        lotIds: waitingLotIdsOf(ctx, asOfMs),
        context: (id) => {
          const lc = lotContext(ctx, id, asOfMs);
          // a lot that cannot be assessed: the engine's own error, as whatIfWaiting gives it
          return lc && 'problem' in lc ? openLotContext(ctx.db, id, { asOfMs, detail: 'summary' }) : lc;
        },
      },
    ),
  );
}
