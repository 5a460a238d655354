/**
 * Read helpers for the Areas page (owned by the pages), on top of the store's own readers
 * (src/store/locations.ts, src/store/counters.ts): locations with the area they belong to, counter
 * samples as cumulative concentrations per sample, the sample span of a location, and the wafers
 * whose ledger puts them in a location's air at a given time (migration 0014 ledger).
 */
import { readCounterSeries } from './counters.ts';
import type { Db } from './db.ts';
import { type LocationRecord, listLocations } from './locations.ts';

export interface LocationView extends LocationRecord {
  /** The area the location belongs to (its nearest ancestor of level "area", itself if an area). */
  areaId: string;
  areaName: string;
}

function tableExists(db: Db, name: string): boolean {
  return db.prepare("SELECT 1 FROM sqlite_master WHERE type = 'table' AND name = ?").get(name) !== undefined;
}

/** Every location with its area, ordered by area name then id. */
export function listLocationsWithAreas(db: Db): LocationView[] {
  if (!tableExists(db, 'locations')) return [];
  const rows = listLocations(db);
  const byId = new Map(rows.map((r) => [r.locationId, r]));
  const areaOf = (id: string): { id: string; name: string } => {
    let cur = byId.get(id);
    const seen = new Set<string>();
    let top = cur;
    while (cur && !seen.has(cur.locationId)) {
      if (cur.level === 'area') return { id: cur.locationId, name: cur.name };
      seen.add(cur.locationId);
      top = cur;
      cur = cur.parentId ? byId.get(cur.parentId) : undefined;
    }
    return top ? { id: top.locationId, name: top.name } : { id, name: id };
  };
  return rows
    .map((r) => {
      const a = areaOf(r.locationId);
      return { ...r, areaId: a.id, areaName: a.name };
    })
    .sort((x, y) => x.areaName.localeCompare(y.areaName) || x.locationId.localeCompare(y.locationId));
}

export interface CumulativeSample {
  startMs: number;
  durationMs: number;
  /** Low 8 bits of the sample's flags (fault 1, lower bound 2, sentinel 4, …). */
  flags: number;
  /** Channel lower sizes, ascending, m (the sizes every sample in the read shares). */
  sizesM: number[];
  /** Concentration ≥ each size, particles per m³. */
  cumulativePerM3: number[];
}

/** Counter samples of one location overlapping [fromMs, toMs), in start order, as cumulative concentrations. */
export function readCumulativeSamples(
  db: Db,
  locationId: string,
  fromMs: number,
  toMs: number,
): CumulativeSample[] {
  if (!tableExists(db, 'counter_samples')) return [];
  const s = readCounterSeries(db, locationId, clampMs(fromMs), clampMs(toMs));
  const sizes = Array.from(s.channelSizesM);
  const k = sizes.length;
  const out: CumulativeSample[] = [];
  for (let i = 0; i < s.startMs.length; i++)
    out.push({
      startMs: s.startMs[i]!,
      durationMs: s.endMs[i]! - s.startMs[i]!,
      flags: s.flags[i]!,
      sizesM: sizes,
      cumulativePerM3: Array.from(s.cumulativePerM3.subarray(i * k, (i + 1) * k)),
    });
  return out;
}

function clampMs(v: number): number {
  if (v === Number.POSITIVE_INFINITY) return Number.MAX_SAFE_INTEGER;
  if (v === Number.NEGATIVE_INFINITY) return Number.MIN_SAFE_INTEGER;
  return Math.round(v);
}

/** First and last sample start of a location (null when it has none) and the sample count. */
export function sampleSpan(
  db: Db,
  locationId: string,
): { firstMs: number | null; lastMs: number | null; count: number } {
  if (!tableExists(db, 'counter_samples')) return { firstMs: null, lastMs: null, count: 0 };
  const r = db
    .prepare(
      `SELECT MIN(s.start_ms) AS firstMs, MAX(s.start_ms) AS lastMs, COUNT(*) AS count
         FROM counter_samples s JOIN locations l ON l.id = s.location WHERE l.location_id = ?`,
    )
    .get(locationId) as { firstMs: number | null; lastMs: number | null; count: number };
  return r;
}

export interface ExposedWafer {
  waferId: string;
  lotId: string;
  step: string;
}

/**
 * The wafers whose ledger steps put them in `locationId`'s air during [fromMs, toMs): steps at
 * that location overlapping the interval and not inside a closed tool. A lot-level step (no
 * wafer) stands for every wafer of its lot.
 */
export function wafersExposedAt(db: Db, locationId: string, fromMs: number, toMs: number): ExposedWafer[] {
  if (!tableExists(db, 'ledger_steps')) return [];
  const rows = db
    .prepare(
      `SELECT ls.lot_id AS lotId, ls.wafer_id AS waferId, ls.step AS step
         FROM ledger_steps ls
        WHERE ls.location_id = ? AND ls.carrier <> 'in-tool'
          AND ls.start_ms < ? AND (ls.end_ms IS NULL OR ls.end_ms > ?)
        ORDER BY ls.lot_id, ls.wafer_id, ls.start_ms`,
    )
    .all(locationId, clampMs(toMs), clampMs(fromMs)) as {
    lotId: string;
    waferId: string | null;
    step: string;
  }[];
  const out: ExposedWafer[] = [];
  const seen = new Set<string>();
  for (const r of rows) {
    const wafers =
      r.waferId !== null
        ? [r.waferId]
        : (
            db.prepare('SELECT id FROM wafers WHERE lot_id = ? ORDER BY id').all(r.lotId) as { id: string }[]
          ).map((w) => w.id);
    for (const w of wafers) {
      if (seen.has(w)) continue;
      seen.add(w);
      out.push({ waferId: w, lotId: r.lotId, step: r.step });
    }
  }
  return out;
}
