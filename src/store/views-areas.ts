/**
 * Read helpers for the Areas page (owned by the pages): locations with their area and levels,
 * counter samples as cumulative concentrations, excursions above action levels, and the wafers
 * whose ledger puts them in a location's air at a given time.
 *
 * Read-only; the tables are the ingest's (migrations 0003 locations, 0004 counter samples,
 * 0014 ledger). Counts are stored in the channel set's mode: cumulative rows are concentrations
 * ≥ each channel's lower size once divided by the sampled volume; differential rows are summed
 * from the top channel down to give the cumulative value at each lower size.
 */
import type { Db } from './db.ts';

export interface LocationView {
  locationId: string;
  parentId: string | null;
  level: string;
  name: string;
  environment: string;
  isoClass: number | null;
  /** The area the location belongs to (its nearest ancestor of level "area", itself if an area). */
  areaId: string;
  areaName: string;
  levels: { diameterM: number; alertPerM3: number | null; actionPerM3: number | null }[];
}

function tableExists(db: Db, name: string): boolean {
  return db.prepare("SELECT 1 FROM sqlite_master WHERE type = 'table' AND name = ?").get(name) !== undefined;
}

/** Every location with its area and alert/action levels, ordered by area then id. */
export function listLocationsWithAreas(db: Db): LocationView[] {
  if (!tableExists(db, 'locations')) return [];
  const rows = db
    .prepare(
      `SELECT location_id AS locationId, parent_id AS parentId, level, name, environment, iso_class AS isoClass
         FROM locations ORDER BY location_id`,
    )
    .all() as Omit<LocationView, 'areaId' | 'areaName' | 'levels'>[];
  const byId = new Map(rows.map((r) => [r.locationId, r]));
  const levels = tableExists(db, 'location_levels')
    ? (db
        .prepare(
          `SELECT location_id AS locationId, diameter_m AS diameterM, alert_per_m3 AS alertPerM3,
                  action_per_m3 AS actionPerM3
             FROM location_levels ORDER BY location_id, diameter_m`,
        )
        .all() as {
        locationId: string;
        diameterM: number;
        alertPerM3: number | null;
        actionPerM3: number | null;
      }[])
    : [];
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
      return {
        ...r,
        areaId: a.id,
        areaName: a.name,
        levels: levels
          .filter((l) => l.locationId === r.locationId)
          .map(({ diameterM, alertPerM3, actionPerM3 }) => ({ diameterM, alertPerM3, actionPerM3 })),
      };
    })
    .sort((x, y) => x.areaName.localeCompare(y.areaName) || x.locationId.localeCompare(y.locationId));
}

export interface CumulativeSample {
  startMs: number;
  durationMs: number;
  flags: number;
  roomState: number;
  /** Channel lower sizes, ascending, m. */
  sizesM: number[];
  /** Concentration ≥ each size, particles per m³. */
  cumulativePerM3: number[];
}

interface SampleRow {
  start_ms: number;
  duration_ms: number;
  volume_m3: number;
  counts: Buffer;
  flags: number;
  room_state: number;
  mode: 'cumulative' | 'differential';
  sizes: string;
}

function decodeDoubles(blob: Uint8Array): number[] {
  const out: number[] = [];
  const view = new DataView(blob.buffer, blob.byteOffset, blob.byteLength);
  for (let o = 0; o + 8 <= blob.byteLength; o += 8) out.push(view.getFloat64(o, true));
  return out;
}

function toCumulative(r: SampleRow): CumulativeSample {
  const sizes = (JSON.parse(r.sizes) as [number, number | null][]).map((s) => s[0]);
  const counts = decodeDoubles(r.counts);
  const cum = new Array<number>(sizes.length).fill(0);
  if (r.mode === 'cumulative') for (let j = 0; j < sizes.length; j++) cum[j] = (counts[j] ?? 0) / r.volume_m3;
  else {
    let run = 0;
    for (let j = sizes.length - 1; j >= 0; j--) {
      run += counts[j] ?? 0;
      cum[j] = run / r.volume_m3;
    }
  }
  return {
    startMs: r.start_ms,
    durationMs: r.duration_ms,
    flags: r.flags,
    roomState: r.room_state,
    sizesM: sizes,
    cumulativePerM3: cum,
  };
}

/** Counter samples of one location with start in [fromMs, toMs), in start order, as cumulative concentrations. */
export function readCumulativeSamples(
  db: Db,
  locationId: string,
  fromMs: number,
  toMs: number,
): CumulativeSample[] {
  if (!tableExists(db, 'counter_samples')) return [];
  const rows = db
    .prepare(
      `SELECT s.start_ms, s.duration_ms, s.volume_m3, s.counts, s.flags, s.room_state, cs.mode, cs.sizes
         FROM counter_samples s
         JOIN locations l ON l.id = s.location
         JOIN counter_channel_sets cs ON cs.id = s.channel_set
        WHERE l.location_id = ? AND s.start_ms >= ? AND s.start_ms < ?
        ORDER BY s.start_ms`,
    )
    .all(locationId, clampMs(fromMs), clampMs(toMs)) as SampleRow[];
  return rows.map(toCumulative);
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

/** The latest sample start over all locations (the "now" of the counter data), or null. */
export function latestSampleMs(db: Db): number | null {
  if (!tableExists(db, 'counter_samples')) return null;
  return (db.prepare('SELECT MAX(start_ms) AS t FROM counter_samples').get() as { t: number | null }).t;
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
