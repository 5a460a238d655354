/**
 * The line view of the audit, over a period: a Pareto of expected voids across every assessed lot
 * (by tool, wait location, last clean and particle size band), each tool chamber's history of adders
 * per pass (the passes learning found, src/engine/learn/) with the lots it touched, and the search by
 * wafer, pair, lot, tool or location id. Reads the database through the engine's loaders and the
 * store's search.
 *
 * Pareto (Choice): the lots with pairs and a ledger step in the period, each assessed at the
 * assessment time (summary detail); a pair's contributions are summed by category — `tool`
 * (tool/chamber adders), `wait location` (deposition during waits), `clean` (the last clean the
 * contribution's particles passed before bonding, whatever their source) — and shares are of the
 * category's total.
 *
 * By size band: each lot's own size-band Pareto (src/engine/attribution.ts `SIZE_BANDS`, the
 * expected reportable voids per size bin of the particle at the interface, `Evaluation.voidsBins`,
 * which a summary assessment keeps), summed over the lots. Bands (Choice): the same seven bands as
 * the pair and lot pages (< 30 nm, 30–50 nm, 50–100 nm, 0.1–0.3 µm, 0.3–1 µm, 1–5 µm, ≥ 5 µm; a
 * bin belongs to the band holding its geometric centre), so that a lot's band on its own page adds
 * into the line's; they are finer below 0.1 µm than counter channels are because at a direct bond a
 * particle of a few tens of nanometres already leaves a void hundreds of times wider. The bands'
 * voids sum to the voids of particle sources; voids no scanned particle explains (an adopted
 * parameter set's calibrated rate) have no particle size and are reported apart
 * (`unexplainedVoids`), never spread over the bands.
 */

import { garwoodInterval } from '../../model/index.ts';
import { lotsActiveIn, type SearchRow, searchIds } from '../../store/audit-line.ts';
import type { Db } from '../../store/db.ts';
import { pageClockMs } from '../../store/settings.ts';
import { SIZE_BANDS } from '../attribution.ts';
import { keptResult } from '../cache.ts';
import { learnAdders } from '../learn/adders.ts';
import { assessLotFromDb } from '../loader.ts';
import { checkPeriod } from './common.ts';
import type { AuditPeriod, ChamberHistory, LineParetoEntry, ParetoCategory, SearchHit } from './types.ts';

export interface LinePareto {
  period: AuditPeriod;
  asOfMs: number;
  lots: string[];
  entries: LineParetoEntry[];
  /** Expected voids of every particle source summed over the assessed pairs (= the size bands' sum). */
  particleVoids: number;
  /** Expected voids no scanned particle explains, summed over the pairs: no size, so in no band. */
  unexplainedVoids: number;
  notes: string[];
}

/**
 * The Pareto of expected voids across the lots active in the period, kept until the data change
 * (src/engine/cache.ts: per the store's data generation, so an import or an adopted parameter set
 * starts afresh). Without a given time it is assessed at the installation clock, else now floored to
 * the minute. The result must not be mutated.
 */
export function lineParetoFromDb(db: Db, period: AuditPeriod, asOfMs?: number): LinePareto {
  const p = checkPeriod(period);
  const asOf = asOfMs ?? pageClockMs(db);
  return keptResult(db, `line-pareto|${p.fromMs}|${p.toMs}|${asOf}`, () => linePareto(db, p, asOf));
}

/** lineParetoFromDb without the keeping. */
export function linePareto(db: Db, p: AuditPeriod, asOf: number): LinePareto {
  const lots = lotsActiveIn(db, p.fromMs, p.toMs);
  const sums = new Map<
    string,
    { category: ParetoCategory; key: string; label: string; voids: number; lots: Set<string> }
  >();
  const add = (category: ParetoCategory, k: string, label: string, voids: number, lot: string) => {
    const id = `${category}|${k}`;
    const e = sums.get(id) ?? { category, key: k, label, voids: 0, lots: new Set<string>() };
    e.voids += voids;
    if (voids > 0) e.lots.add(lot);
    sums.set(id, e);
  };
  const notes: string[] = [];
  let particleVoids = 0;
  let unexplainedVoids = 0;
  for (const lotId of lots) {
    const a = assessLotFromDb(db, lotId, { asOfMs: asOf, detail: 'summary', config: { draws: 20 } });
    if (!a) continue;
    for (const b of a.pareto.bySizeBand) add('size band', b.label, b.label, b.expectedVoids, lotId);
    for (const pair of a.pairs)
      for (const c of pair.contributions) {
        if (c.kind === 'tool' && c.toolId)
          add(
            'tool',
            c.chamber ? `${c.toolId}/${c.chamber}` : c.toolId,
            c.groupLabel,
            c.expectedVoids,
            lotId,
          );
        if (c.kind === 'wait' && c.locationId)
          add('wait location', c.locationId, c.groupLabel, c.expectedVoids, lotId);
        if (c.lastCleanId) add('clean', c.lastCleanId, `last clean ${c.lastCleanId}`, c.expectedVoids, lotId);
        if (c.kind === 'unexplained') unexplainedVoids += c.expectedVoids;
        else particleVoids += c.expectedVoids;
      }
  }
  if (lots.length === 0)
    notes.push('no assessed lot in the period (lots with pairs and a ledger step in it)');
  const bands = new Map(SIZE_BANDS.map((b, i) => [b.label, { ...b, order: i }]));
  const entries: LineParetoEntry[] = [];
  for (const category of ['tool', 'wait location', 'clean', 'size band'] as const) {
    // A size band no lot has voids in is left out, as the chart leaves out an empty bar.
    const list = [...sums.values()]
      .filter((e) => e.category === category && (category !== 'size band' || e.voids > 0))
      .sort(
        (a, b) =>
          b.voids - a.voids ||
          (bands.get(a.key)?.order ?? 0) - (bands.get(b.key)?.order ?? 0) ||
          a.key.localeCompare(b.key),
      );
    const total = list.reduce((s, e) => s + e.voids, 0);
    let cum = 0;
    for (const e of list) {
      cum += e.voids;
      const band = category === 'size band' ? bands.get(e.key) : undefined;
      entries.push({
        ...(band ? { fromM: band.fromM, toM: Number.isFinite(band.toM) ? band.toM : null } : {}),
        category,
        key: e.key,
        label: e.label,
        expectedVoids: e.voids,
        share: total > 0 ? e.voids / total : 0,
        cumulativeShare: total > 0 ? cum / total : 0,
        lots: e.lots.size,
      });
    }
  }
  return { period: p, asOfMs: asOf, lots, entries, particleVoids, unexplainedVoids, notes };
}

/**
 * Each tool chamber's history: the adders of every pass learning found (new defects at or above the
 * fit's reference size), with the exact 95 % Poisson interval of each count (Garwood 1936), in time
 * order, and the lots it touched. `toolId` limits it to one tool.
 */
export function chamberHistoryFromDb(db: Db, toolId?: string, period?: AuditPeriod): ChamberHistory[] {
  const report = learnAdders(db, { toolId });
  return report.results.map((r) => {
    const passes = r.passes.filter((x) => !period || (x.timeMs >= period.fromMs && x.timeMs < period.toMs));
    return {
      toolId: r.toolId,
      chamber: r.chamber,
      points: passes.map((x) => {
        const g = garwoodInterval(x.adders, 0.95);
        return {
          atMs: x.timeMs,
          addersPerPass: x.adders,
          lower: g.lower,
          upper: g.upper,
          lotId: x.lotId,
          waferId: x.waferId,
        };
      }),
      lots: [...new Set(passes.map((x) => x.lotId))].sort(),
    };
  });
}

/** Search by id (wafer, pair, lot, tool, location) or a name's words. */
export function searchLine(db: Db, text: string, limit = 20): SearchHit[] {
  return searchIds(db, text, limit).map((r: SearchRow) => ({ kind: r.kind, id: r.id, label: r.label }));
}
