/**
 * The added cost of an event (one or more overlapping excursions, src/engine/audit/events.ts) from
 * the database: the wafers the ledger puts in the event's air during its windows, and for each pair
 * they are in, the difference of two assessments (src/engine/audit/cost.ts) — once per event, with
 * every window of the event capped in the second, so that excursions of one event are not counted
 * twice. With loader.ts, the audit's database access.
 */

import { exposedSteps } from '../../store/audit-exposure.ts';
import type { Db } from '../../store/db.ts';
import { pageClockMs } from '../../store/settings.ts';
import { latestImportId } from '../../store/views-imports.ts';
import { loadPair } from '../loader.ts';
import { assessPair } from '../pair.ts';
import { readAdoptedParameterSet } from '../parameter-sets.ts';
import type { AssessOptions } from '../types.ts';
import { mToNm } from './common.ts';
import { pairDelta, withoutExcess } from './cost.ts';
import { eventOf } from './events.ts';
import { loadHourly } from './loader.ts';
import type {
  AuditPeriod,
  EventCost,
  Excursion,
  ExcursionEvent,
  ExposedWaferCost,
  LotCost,
} from './types.ts';

/** Length of the baseline before an excursion, ms (Choice: a week). */
export const BASELINE_MS = 7 * 86_400_000;
/** Monte Carlo draws of the two assessments (only their expected values are used). */
const COST_DRAWS = 20;

function median(xs: number[]): number {
  const a = [...xs].sort((p, q) => p - q);
  const m = a.length >> 1;
  return a.length % 2 ? a[m]! : (a[m - 1]! + a[m]!) / 2;
}

/** Per channel (whole nm): the median hourly mean of the location over the week before the excursion (else after). */
export function baselineByChannel(db: Db, locationId: string, exc: AuditPeriod): Map<number, number> {
  const windows: AuditPeriod[] = [
    { fromMs: exc.fromMs - BASELINE_MS, toMs: exc.fromMs },
    { fromMs: exc.toMs, toMs: exc.toMs + BASELINE_MS },
  ];
  for (const w of windows) {
    const rows = loadHourly(db, [locationId], w, 'any');
    const byNm = new Map<number, Map<number, { c: number; v: number }>>();
    for (const r of rows) {
      const m = byNm.get(r.diameterNm) ?? new Map<number, { c: number; v: number }>();
      const h = m.get(r.hourMs) ?? { c: 0, v: 0 };
      h.c += r.countSum;
      h.v += r.volumeM3;
      m.set(r.hourMs, h);
      byNm.set(r.diameterNm, m);
    }
    const out = new Map<number, number>();
    for (const [nm, m] of byNm) {
      const means = [...m.values()].filter((h) => h.v > 0).map((h) => h.c / h.v);
      if (means.length > 0) out.set(nm, median(means));
    }
    if (out.size > 0) return out;
  }
  return new Map();
}

export interface CostOptions {
  /** Assessment time (default: the installation clock, else now floored to the minute). */
  asOfMs?: number;
}

/**
 * Costs computed in this process, by database, event (its windows and nature), assessment time, the
 * latest import and the adopted parameter set: a cost is two assessments of every exposed pair (about
 * 50 ms each), so a warm page or report reads it from here; any new import or adoption changes the
 * key (an acknowledgement does not: it changes no input of a cost). Without a given time or an
 * installation clock the costs are assessed at now floored to the minute (the pages' rule,
 * src/web/routes/lots.tsx asOfFrom), so that requests within a minute share them.
 */
const cache = new WeakMap<Db, Map<string, EventCost>>();
const CACHE_LIMIT = 500;

/** The wafers in an event's air and the voids and die loss its excess added, per wafer and lot (once per event). */
export function eventCostInDb(db: Db, ev: ExcursionEvent, opts: CostOptions = {}): EventCost {
  const asOfMs = opts.asOfMs ?? pageClockMs(db);
  const lastImport = latestImportId(db);
  const set = readAdoptedParameterSet(db);
  const key = `${ev.id}|${JSON.stringify(ev.windows)}|${ev.excursionIds.join(',')}|${ev.nature}|${asOfMs}|${lastImport}|${set ? `${set.id}` : 'typed'}`;
  let m = cache.get(db);
  if (!m) {
    m = new Map();
    cache.set(db, m);
  }
  const hit = m.get(key);
  if (hit) return hit;
  const cost = computeCost(db, ev, asOfMs);
  if (m.size >= CACHE_LIMIT) m.delete(m.keys().next().value as string);
  m.set(key, cost);
  return cost;
}

/** The cost of one excursion on its own (the event it alone makes). */
export function excursionCostInDb(db: Db, exc: Excursion, opts: CostOptions = {}): EventCost {
  return eventCostInDb(db, eventOf([exc]), opts);
}

function computeCost(db: Db, ev: ExcursionEvent, asOfMs: number): EventCost {
  const period = { fromMs: ev.startMs, toMs: ev.endMs };
  const notes: string[] = [];
  const method =
    'as measured minus with the excess over the baseline removed in every window of the event (two assessments of each pair, once per event; the chain is linear in the deposited particles)';
  const steps = ev.windows.flatMap((w) => exposedSteps(db, w.locationId, w.fromMs, w.toMs));
  const base = {
    eventId: ev.id,
    excursionIds: ev.excursionIds,
    locationIds: ev.locationIds,
    period,
    windows: ev.windows,
    method,
  };
  if (ev.nature === 'instrument')
    return {
      ...base,
      wafers: [],
      lots: [],
      totalAddedVoids: 0,
      totalAddedDieLoss: 0,
      notes: ['an instrument finding: the counter, not the air — no added particles to cost'],
    };
  if (steps.length === 0)
    return {
      ...base,
      wafers: [],
      lots: [],
      totalAddedVoids: 0,
      totalAddedDieLoss: 0,
      notes: ['no wafer was in this air during the event (ledger)'],
    };
  const locs = [...new Set(ev.windows.map((w) => w.locationId))];
  // Per location: the baseline of the span its windows cover (the week before it, else after).
  const baselines = new Map(
    locs.map((loc) => {
      const ws = ev.windows.filter((w) => w.locationId === loc);
      const span = { fromMs: Math.min(...ws.map((w) => w.fromMs)), toMs: Math.max(...ws.map((w) => w.toMs)) };
      return [loc, baselineByChannel(db, loc, span)];
    }),
  );
  const assessOpts: AssessOptions = { asOfMs, detail: 'summary', config: { draws: COST_DRAWS } };
  const deltas = new Map<string, ReturnType<typeof pairDelta>>();
  const missing = new Set<string>();
  for (const pairId of new Set(steps.map((s) => s.pairId).filter((p): p is string => p !== null))) {
    const loaded = loadPair(db, pairId, asOfMs);
    if (!loaded) continue;
    const asMeasured = assessPair(loaded.pair, loaded.line, assessOpts);
    const counters = { ...loaded.line.counters };
    for (const loc of locs) {
      const s = counters[loc];
      const b = baselines.get(loc);
      if (!s || !b || b.size === 0) {
        missing.add(loc);
        continue;
      }
      const perChannel = Array.from(s.channelSizesM, (d) => b.get(mToNm(d)) ?? Number.NaN);
      let capped = s;
      for (const w of ev.windows)
        if (w.locationId === loc) capped = withoutExcess(capped, w.fromMs, w.toMs, perChannel);
      counters[loc] = capped;
    }
    const without = assessPair(loaded.pair, { ...loaded.line, counters }, assessOpts);
    deltas.set(pairId, pairDelta(asMeasured, without, locs));
  }
  for (const loc of missing)
    notes.push(`${loc}: no baseline hours in the week before or after the event; its excess is not removed`);
  const wafers: ExposedWaferCost[] = steps.map((s) => {
    const d = s.pairId ? deltas.get(s.pairId) : undefined;
    return {
      ...s,
      addedParticles: d?.addedParticles.get(s.waferId) ?? 0,
      addedVoids: d ? d.addedVoids : null,
      addedDieLoss: d ? d.addedDieLoss : null,
    };
  });
  const unpaired = new Set(steps.filter((s) => s.pairId === null).map((s) => s.waferId));
  if (unpaired.size > 0)
    notes.push(
      `${unpaired.size} exposed wafer${unpaired.size === 1 ? ' is' : 's are'} in no pair yet: their added voids wait for the pair`,
    );
  const lots = new Map<string, LotCost>();
  const waferCount = new Map<string, Set<string>>();
  for (const s of steps) {
    const set = waferCount.get(s.lotId) ?? new Set<string>();
    set.add(s.waferId);
    waferCount.set(s.lotId, set);
  }
  for (const [lotId, set] of waferCount)
    lots.set(lotId, { lotId, wafers: set.size, addedVoids: 0, addedDieLoss: 0 });
  for (const d of deltas.values()) {
    const l = lots.get(d.lotId);
    if (!l) continue;
    l.addedVoids += d.addedVoids;
    l.addedDieLoss += d.addedDieLoss;
  }
  const lotList = [...lots.values()].sort((a, b) => a.lotId.localeCompare(b.lotId));
  return {
    ...base,
    wafers,
    lots: lotList,
    totalAddedVoids: lotList.reduce((a, l) => a + l.addedVoids, 0),
    totalAddedDieLoss: lotList.reduce((a, l) => a + l.addedDieLoss, 0),
    notes,
  };
}
