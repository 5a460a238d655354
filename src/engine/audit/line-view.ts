/**
 * The line view of the audit, over a period: a Pareto of expected voids across every assessed lot
 * (by tool, wait location, last clean and source kind), each tool chamber's history of adders per
 * pass (the passes learning found, src/engine/learn/) with the lots it touched, and the search by
 * wafer, pair, lot, tool or location id. Reads the database through the engine's loaders and the
 * store's search.
 *
 * Pareto (Choice): the lots with pairs and a ledger step in the period, each assessed at the
 * assessment time (summary detail); a pair's contributions are summed by category — `tool`
 * (tool/chamber adders), `wait location` (deposition during waits), `clean` (the last clean the
 * contribution's particles passed before bonding, whatever their source) — and shares are of the
 * category's total. A size-band breakdown needs the per-source spectra of a full assessment and is
 * not part of this summary.
 */

import { garwoodInterval } from '../../model/index.ts';
import { lotsActiveIn, type SearchRow, searchIds } from '../../store/audit-line.ts';
import type { Db } from '../../store/db.ts';
import { installationClockMs } from '../../store/settings.ts';
import { learnAdders } from '../learn/adders.ts';
import { assessLotFromDb } from '../loader.ts';
import { readAdoptedParameterSet } from '../parameter-sets.ts';
import { checkPeriod } from './common.ts';
import type { AuditPeriod, ChamberHistory, LineParetoEntry, ParetoCategory, SearchHit } from './types.ts';

export interface LinePareto {
  period: AuditPeriod;
  asOfMs: number;
  lots: string[];
  entries: LineParetoEntry[];
  notes: string[];
}

const paretoCache = new WeakMap<Db, Map<string, LinePareto>>();

/** The Pareto of expected voids across the lots active in the period (cached per import and parameter set). */
export function lineParetoFromDb(db: Db, period: AuditPeriod, asOfMs?: number): LinePareto {
  const p = checkPeriod(period);
  const asOf = asOfMs ?? installationClockMs(db) ?? Date.now();
  const lastImport = (db.prepare('SELECT max(id) AS m FROM imports').get() as { m: number | null }).m;
  const set = readAdoptedParameterSet(db);
  const key = `${p.fromMs}|${p.toMs}|${asOf}|${lastImport}|${set ? set.id : 'typed'}`;
  let m = paretoCache.get(db);
  if (!m) {
    m = new Map();
    paretoCache.set(db, m);
  }
  const hit = m.get(key);
  if (hit) return hit;
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
  for (const lotId of lots) {
    const a = assessLotFromDb(db, lotId, { asOfMs: asOf, detail: 'summary', config: { draws: 20 } });
    if (!a) continue;
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
      }
  }
  if (lots.length === 0)
    notes.push('no assessed lot in the period (lots with pairs and a ledger step in it)');
  const entries: LineParetoEntry[] = [];
  for (const category of ['tool', 'wait location', 'clean'] as const) {
    const list = [...sums.values()].filter((e) => e.category === category).sort((a, b) => b.voids - a.voids);
    const total = list.reduce((s, e) => s + e.voids, 0);
    let cum = 0;
    for (const e of list) {
      cum += e.voids;
      entries.push({
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
  const out = { period: p, asOfMs: asOf, lots, entries, notes };
  if (m.size > 50) m.clear();
  m.set(key, out);
  return out;
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
