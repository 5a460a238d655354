/**
 * Read helpers for the Areas page (owned by the pages), on top of the store's own readers
 * (src/store/locations.ts, src/store/counters.ts, src/store/counter-hourly.ts): locations with the
 * area they belong to, a location's means over a window and the hours whose peak passes a value —
 * both from the hourly aggregates, so that the page does not read a month of raw samples —, counter
 * samples as cumulative concentrations per sample (for the trend and an excursion's exact
 * samples), the sample span of a location, and the wafers whose ledger puts them in a location's air
 * at a given time (migration 0014 ledger).
 */
import { readHourlyTotals } from './counter-hourly.ts';
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

/**
 * First and last sample start of a location (null when it has none) and the sample count. The first
 * and last starts are two seeks of the samples' key; the count comes from the hourly aggregates (the
 * samples of the channel that holds the most, per hour and occupancy state).
 */
export function sampleSpan(
  db: Db,
  locationId: string,
): { firstMs: number | null; lastMs: number | null; count: number } {
  if (!tableExists(db, 'counter_samples')) return { firstMs: null, lastMs: null, count: 0 };
  const loc = db.prepare('SELECT id FROM locations WHERE location_id = ?').pluck().get(locationId) as
    | number
    | undefined;
  if (loc === undefined) return { firstMs: null, lastMs: null, count: 0 };
  const first = db
    .prepare('SELECT start_ms FROM counter_samples WHERE location = ? ORDER BY start_ms LIMIT 1')
    .pluck()
    .get(loc) as number | undefined;
  if (first === undefined) return { firstMs: null, lastMs: null, count: 0 };
  const last = db
    .prepare('SELECT start_ms FROM counter_samples WHERE location = ? ORDER BY start_ms DESC LIMIT 1')
    .pluck()
    .get(loc) as number;
  const count = tableExists(db, 'counter_hourly')
    ? ((
        db
          .prepare(
            `SELECT coalesce(sum(m), 0) AS c FROM (SELECT max(n) AS m FROM counter_hourly WHERE location = ?
               GROUP BY room_state, hour_ms)`,
          )
          .get(loc) as { c: number }
      ).c ?? 0)
    : 0;
  return { firstMs: first, lastMs: last, count };
}

/** A location's usable-sample means per channel over whole hours, from the hourly aggregates. */
export interface WindowMeans {
  /** Channels, ascending, m. */
  sizesM: number[];
  /** Per channel: usable samples. */
  usable: number[];
  /** Per channel: the plain mean of the usable samples' concentrations ≥ size, per m³ (null: none). */
  meanPerM3: (number | null)[];
}

/** Means of the usable samples of the hours starting in [fromMs, toMs), per channel. */
export function windowMeans(db: Db, locationId: string, fromMs: number, toMs: number): WindowMeans {
  const rows = readHourlyTotals(db, {
    locationIds: [locationId],
    fromMs: clampMs(fromMs),
    toMs: clampMs(toMs),
  });
  return {
    sizesM: rows.map((r) => r.diameterNm / 1e9),
    usable: rows.map((r) => r.nUsable),
    meanPerM3: rows.map((r) => (r.nUsable > 0 ? r.concSum / r.nUsable : null)),
  };
}

/**
 * Blocks of consecutive hours of a location, starting in [fromMs, toMs), in which some usable sample
 * of the channel (whole nm) exceeded `valuePerM3` — with any neighbouring hours that hold only
 * unusable samples, which do not break a run — as [fromMs, toMs) intervals: the only places where a
 * run of samples above the value can be, so that the raw samples are read there alone.
 */
export function hoursAbove(
  db: Db,
  locationId: string,
  diameterNm: number,
  fromMs: number,
  toMs: number,
  valuePerM3: number,
): { fromMs: number; toMs: number }[] {
  if (!tableExists(db, 'counter_hourly')) return [];
  const rows = db
    .prepare(
      `SELECT h.hour_ms AS hourMs, max(h.max_per_m3) AS peak, sum(h.n_usable) AS usable
         FROM counter_hourly h JOIN locations l ON l.id = h.location
        WHERE l.location_id = ? AND h.diameter_nm = ? AND h.hour_ms >= ? AND h.hour_ms < ?
        GROUP BY h.hour_ms ORDER BY h.hour_ms`,
    )
    .all(locationId, diameterNm, clampMs(fromMs), clampMs(toMs)) as {
    hourMs: number;
    peak: number | null;
    usable: number;
  }[];
  const H = 3_600_000;
  const out: { fromMs: number; toMs: number }[] = [];
  let cur: { fromMs: number; toMs: number; hot: boolean } | null = null;
  for (const r of rows) {
    const hot = r.peak !== null && r.peak > valuePerM3;
    const neutral = r.usable === 0;
    if (hot || (neutral && cur)) {
      if (cur && cur.toMs === r.hourMs) {
        cur.toMs = r.hourMs + H;
        cur.hot ||= hot;
      } else {
        if (cur?.hot) out.push({ fromMs: cur.fromMs, toMs: cur.toMs });
        cur = { fromMs: r.hourMs, toMs: r.hourMs + H, hot };
      }
    } else {
      if (cur?.hot) out.push({ fromMs: cur.fromMs, toMs: cur.toMs });
      cur = null;
    }
  }
  if (cur?.hot) out.push({ fromMs: cur.fromMs, toMs: cur.toMs });
  return out;
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

/** Hourly means of one location and channel (whole nm) over the hours starting in [fromMs, toMs). */
export function hourlyMeans(
  db: Db,
  locationId: string,
  diameterNm: number,
  fromMs: number,
  toMs: number,
): { tMs: number; samples: number; meanPerM3: number | null }[] {
  if (!tableExists(db, 'counter_hourly')) return [];
  return (
    db
      .prepare(
        `SELECT h.hour_ms AS tMs, sum(h.n) AS samples, sum(h.conc_sum) AS s, sum(h.n_usable) AS u
           FROM counter_hourly h JOIN locations l ON l.id = h.location
          WHERE l.location_id = ? AND h.diameter_nm = ? AND h.hour_ms >= ? AND h.hour_ms < ?
          GROUP BY h.hour_ms ORDER BY h.hour_ms`,
      )
      .all(locationId, diameterNm, clampMs(fromMs), clampMs(toMs)) as {
      tMs: number;
      samples: number;
      s: number;
      u: number;
    }[]
  ).map((r) => ({ tMs: r.tMs, samples: r.samples, meanPerM3: r.u > 0 ? r.s / r.u : null }));
}

/** Channels (m, ascending) a location's aggregates hold. */
export function locationChannels(db: Db, locationId: string): number[] {
  if (!tableExists(db, 'counter_hourly')) return [];
  return (
    db
      .prepare(
        `SELECT DISTINCT h.diameter_nm FROM counter_hourly h JOIN locations l ON l.id = h.location
          WHERE l.location_id = ? ORDER BY h.diameter_nm`,
      )
      .pluck()
      .all(locationId) as number[]
  ).map((nm) => nm / 1e9);
}
