/**
 * Hourly aggregates of counter samples (table counter_hourly, migration 0023): per location,
 * channel (particles ≥ a size), occupancy state and UTC hour — counts and volume summed over the
 * usable samples, the largest single concentration, the smallest sample volume and time, and the
 * data-quality flags. The Areas page and the contamination audit read these, never the raw
 * samples, so that a month of a dozen locations is a few thousand rows.
 *
 * Kept current by `refreshCounterHourly`, which the counter-sample import calls for the hours it
 * touched, inside the import's own transaction (so a rejected file adds nothing here either). Every
 * path that stores samples — the CLI, the Imports page, the live feed and the drop folder — goes
 * through that import (src/ingest/pipeline.ts importFile).
 *
 * "Usable" samples: not flagged as an instrument fault (bit 1) or a sentinel (bit 4); the engine
 * drops those as gaps too (src/engine/types.ts SAMPLE_FLAG).
 */
import type { Db } from './db.ts';

export const HOUR_MS = 3_600_000;
/** Flag bits that make a sample unusable (fault 1 | sentinel 4). */
export const UNUSABLE_FLAGS = 5;

const registered = new WeakSet<Db>();

/**
 * Registers the SQL functions the aggregates need on a connection (idempotent):
 *   counter_ge(counts BLOB, mode TEXT, i INTEGER) → the count ≥ channel i's lower size: counts[i]
 *     for a cumulative set, Σ_{j ≥ i} counts[j] for a differential one (little-endian doubles);
 *   bit_or(x) aggregate → the bitwise OR of x.
 */
export function registerCounterFunctions(db: Db): void {
  if (registered.has(db)) return;
  db.function('counter_ge', { deterministic: true }, (blob: unknown, mode: unknown, i: unknown) => {
    const b = blob as Buffer;
    const k = b.length >> 3;
    const idx = Number(i);
    if (mode === 'cumulative') return b.readDoubleLE(idx * 8);
    let acc = 0;
    for (let j = idx; j < k; j++) acc += b.readDoubleLE(j * 8);
    return acc;
  });
  db.aggregate('bit_or', {
    start: 0,
    step: (acc: number, x: unknown) => acc | Number(x),
  });
  registered.add(db);
}

function floorHour(ms: number): number {
  return ms - (((ms % HOUR_MS) + HOUR_MS) % HOUR_MS);
}

/** One hour's running sums for one channel and room state: a stored row without its location. */
type Acc = Omit<HourlyRow, 'locationId'>;

/**
 * Recomputes the aggregates of one location (its row id in `locations`) for every hour that holds
 * a sample start in [fromMs, toMs] — whole hours, from the samples stored now. Call inside the
 * transaction that changed the samples. The same sums as the migration's SQL (0023), computed here
 * in one pass over the rows (a user function per sample and channel would cost seconds per month).
 */
export function refreshCounterHourly(db: Db, locationRowId: number, fromMs: number, toMs: number): void {
  const h0 = floorHour(fromMs);
  const h1 = floorHour(toMs) + HOUR_MS;
  const sets = new Map<number, { cumulative: boolean; sizesNm: number[] }>();
  const setOf = (id: number) => {
    let v = sets.get(id);
    if (!v) {
      const r = db.prepare('SELECT mode, sizes FROM counter_channel_sets WHERE id = ?').get(id) as {
        mode: string;
        sizes: string;
      };
      const sizes = JSON.parse(r.sizes) as [number, number | null][];
      v = { cumulative: r.mode === 'cumulative', sizesNm: sizes.map((x) => Math.round(x[0] * 1e9)) };
      sets.set(id, v);
    }
    return v;
  };
  const accs = new Map<number, Acc>();
  const sizeIndex = new Map<number, number>();
  const rows = db
    .prepare(
      `SELECT start_ms, duration_ms, volume_m3, channel_set, counts, flags, room_state FROM counter_samples
        WHERE location = ? AND start_ms >= ? AND start_ms < ?`,
    )
    .raw(true)
    .iterate(locationRowId, h0, h1) as IterableIterator<
    [number, number, number, number, Buffer, number, number]
  >;
  const ge = new Float64Array(64);
  for (const [start, dur, vol, setId, blob, flags, room] of rows) {
    const set = setOf(setId);
    const k = set.sizesNm.length;
    // Cumulative counts ≥ each channel's lower size.
    if (set.cumulative) for (let i = 0; i < k; i++) ge[i] = blob.readDoubleLE(i * 8);
    else {
      let acc = 0;
      for (let i = k - 1; i >= 0; i--) {
        acc += blob.readDoubleLE(i * 8);
        ge[i] = acc;
      }
    }
    const usable = (flags & UNUSABLE_FLAGS) === 0;
    const hour = floorHour(start);
    for (let i = 0; i < k; i++) {
      const d = set.sizesNm[i]!;
      let di = sizeIndex.get(d);
      if (di === undefined) {
        di = sizeIndex.size;
        sizeIndex.set(d, di);
      }
      // A numeric key: hour index, state (0–3), channel index (< 1024 distinct sizes).
      const key = ((hour - h0) / HOUR_MS) * 4096 + room * 1024 + di;
      let a = accs.get(key);
      if (!a) {
        a = newAcc(d, room, hour);
        accs.set(key, a);
      }
      addSample(a, flags, usable, ge[i]!, vol, dur);
    }
  }
  db.prepare('DELETE FROM counter_hourly WHERE location = ? AND hour_ms >= ? AND hour_ms < ?').run(
    locationRowId,
    h0,
    h1,
  );
  const insert = db.prepare(
    `INSERT INTO counter_hourly (location, diameter_nm, room_state, hour_ms, n, n_usable, count_sum, volume_m3,
       conc_sum, max_per_m3, min_volume_m3, min_duration_ms, flags, n_fault, n_lower_bound, n_sentinel, n_zero_run,
       n_gap)
     VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?)`,
  );
  for (const a of accs.values())
    insert.run(
      locationRowId,
      a.diameterNm,
      a.roomState,
      a.hourMs,
      a.n,
      a.nUsable,
      a.countSum,
      a.volumeM3,
      a.concSum,
      a.maxPerM3,
      a.minVolumeM3,
      a.minDurationMs,
      a.flags,
      a.nFault,
      a.nLowerBound,
      a.nSentinel,
      a.nZeroRun,
      a.nGap,
    );
}

/** SQL of the merge: this import's sums added to the stored row of the same key, if any. */
const UPSERT = `INSERT INTO counter_hourly (location, diameter_nm, room_state, hour_ms, n, n_usable, count_sum, volume_m3,
    conc_sum, max_per_m3, min_volume_m3, min_duration_ms, flags, n_fault, n_lower_bound, n_sentinel, n_zero_run, n_gap)
  VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?)
  ON CONFLICT (location, diameter_nm, room_state, hour_ms) DO UPDATE SET
    n = n + excluded.n, n_usable = n_usable + excluded.n_usable, count_sum = count_sum + excluded.count_sum,
    volume_m3 = volume_m3 + excluded.volume_m3, conc_sum = conc_sum + excluded.conc_sum,
    max_per_m3 = max(coalesce(max_per_m3, excluded.max_per_m3), coalesce(excluded.max_per_m3, max_per_m3)),
    min_volume_m3 = min(coalesce(min_volume_m3, excluded.min_volume_m3), coalesce(excluded.min_volume_m3, min_volume_m3)),
    min_duration_ms = min(coalesce(min_duration_ms, excluded.min_duration_ms),
      coalesce(excluded.min_duration_ms, min_duration_ms)),
    flags = flags | excluded.flags, n_fault = n_fault + excluded.n_fault,
    n_lower_bound = n_lower_bound + excluded.n_lower_bound, n_sentinel = n_sentinel + excluded.n_sentinel,
    n_zero_run = n_zero_run + excluded.n_zero_run, n_gap = n_gap + excluded.n_gap`;

/** Accumulators kept in memory before they are merged into the table (bounds the import's memory). */
const FLUSH_AT = 20_000;

/**
 * The hourly aggregates kept current during an import, sample by sample, instead of re-reading the
 * stored samples afterwards (`refreshCounterHourly`, the plain twin: test/integration checks both
 * against a recomputation). Each stored sample is added with the flags it was stored with; the sums
 * are merged into the table (added to what earlier imports stored for the same hour). Samples whose
 * flags the import changes afterwards (a zero run, repeated rows or a gap flagged back in time) are
 * declared with `changed`: those hours are recomputed from the stored samples by `finish`, after the
 * last merge. Use inside the import's transaction; call `finish` once, after the last flag update.
 */
export class HourlyAccumulator {
  private readonly accs = new Map<string, Acc>();
  /** Per location: the accumulators of the sample last added (file order is mostly by time). */
  private readonly last = new Map<number, { hour: number; room: number; setKey: object; list: Acc[] }>();
  private readonly changedSpans = new Map<number, [number, number][]>();
  private readonly upsert;
  constructor(private readonly db: Db) {
    this.upsert = db.prepare(UPSERT);
  }

  /**
   * One stored sample: `ge` holds the counts ≥ each channel's lower size (`sizesNm`, whole nm; the
   * same array object for every sample of a channel set).
   */
  add(
    loc: number,
    sizesNm: readonly number[],
    start: number,
    dur: number,
    vol: number,
    ge: ArrayLike<number>,
    flags: number,
    room: number,
  ): void {
    const hour = floorHour(start);
    let cur = this.last.get(loc);
    if (!cur || cur.hour !== hour || cur.room !== room || cur.setKey !== sizesNm) {
      const list: Acc[] = [];
      for (let i = 0; i < sizesNm.length; i++) {
        const d = sizesNm[i]!;
        const key = `${loc}|${hour}|${room}|${d}`;
        let a = this.accs.get(key);
        if (!a) {
          a = newAcc(d, room, hour);
          this.accs.set(key, a);
        }
        list.push(a);
      }
      cur = { hour, room, setKey: sizesNm, list };
      this.last.set(loc, cur);
    }
    const usable = (flags & UNUSABLE_FLAGS) === 0;
    const list = cur.list;
    for (let i = 0; i < list.length; i++) {
      const a = list[i]!;
      addSample(a, flags, usable, ge[i]!, vol, dur);
    }
    if (this.accs.size >= FLUSH_AT) this.flush();
  }

  /** Samples of `loc` starting in [fromMs, toMs] changed flags after they were added. */
  changed(loc: number, fromMs: number, toMs: number): void {
    let l = this.changedSpans.get(loc);
    if (!l) {
      l = [];
      this.changedSpans.set(loc, l);
    }
    const prev = l.at(-1);
    if (prev && fromMs <= prev[1] + HOUR_MS && toMs >= prev[0] - HOUR_MS) {
      prev[0] = Math.min(prev[0], fromMs);
      prev[1] = Math.max(prev[1], toMs);
    } else l.push([fromMs, toMs]);
  }

  /** Merges the accumulators into the table and forgets them. */
  private flush(): void {
    for (const [key, a] of this.accs) {
      const loc = Number(key.slice(0, key.indexOf('|')));
      this.upsert.run(
        loc,
        a.diameterNm,
        a.roomState,
        a.hourMs,
        a.n,
        a.nUsable,
        a.countSum,
        a.volumeM3,
        a.concSum,
        a.maxPerM3,
        a.minVolumeM3,
        a.minDurationMs,
        a.flags,
        a.nFault,
        a.nLowerBound,
        a.nSentinel,
        a.nZeroRun,
        a.nGap,
      );
    }
    this.accs.clear();
    this.last.clear();
  }

  /** The last merge, then the hours of changed samples recomputed from the stored samples. */
  finish(): void {
    this.flush();
    for (const [loc, spans] of this.changedSpans)
      for (const [from, to] of spans) refreshCounterHourly(this.db, loc, from, to);
    this.changedSpans.clear();
  }
}

/**
 * Adds one sample's channel to an hour's running sums: every sample counts and its flags are noted;
 * a usable one adds its count `c`, its volume `vol` (m³), its concentration and its duration `dur` (ms).
 */
function addSample(a: Acc, flags: number, usable: boolean, c: number, vol: number, dur: number): void {
  a.n++;
  a.flags |= flags;
  if (flags & 1) a.nFault++;
  if (flags & 2) a.nLowerBound++;
  if (flags & 4) a.nSentinel++;
  if (flags & 8) a.nZeroRun++;
  if (flags & 16) a.nGap++;
  if (!usable) return;
  a.nUsable++;
  a.countSum += c;
  a.volumeM3 += vol;
  const conc = c / vol;
  a.concSum += conc;
  if (a.maxPerM3 === null || conc > a.maxPerM3) a.maxPerM3 = conc;
  if (a.minVolumeM3 === null || vol < a.minVolumeM3) a.minVolumeM3 = vol;
  if (a.minDurationMs === null || dur < a.minDurationMs) a.minDurationMs = dur;
}

function newAcc(diameterNm: number, roomState: number, hourMs: number): Acc {
  return {
    diameterNm,
    roomState,
    hourMs,
    n: 0,
    nUsable: 0,
    countSum: 0,
    volumeM3: 0,
    concSum: 0,
    maxPerM3: null,
    minVolumeM3: null,
    minDurationMs: null,
    flags: 0,
    nFault: 0,
    nLowerBound: 0,
    nSentinel: 0,
    nZeroRun: 0,
    nGap: 0,
  };
}

/** One stored aggregate row. */
export interface HourlyRow {
  locationId: string;
  /** Channel: particles ≥ this size, whole nm. */
  diameterNm: number;
  roomState: number;
  hourMs: number;
  n: number;
  nUsable: number;
  countSum: number;
  volumeM3: number;
  concSum: number;
  maxPerM3: number | null;
  minVolumeM3: number | null;
  minDurationMs: number | null;
  flags: number;
  nFault: number;
  nLowerBound: number;
  nSentinel: number;
  nZeroRun: number;
  nGap: number;
}

export interface HourlyQuery {
  locationIds: readonly string[];
  fromMs: number;
  toMs: number;
  /** Occupancy state codes to include (0 not stated, 1 as-built, 2 at-rest, 3 operational); null: every state. */
  roomStates?: readonly number[] | null;
  /** Channels wanted, whole nm; omitted: all. */
  diametersNm?: readonly number[];
}

function tableExists(db: Db): boolean {
  return (
    db.prepare("SELECT 1 FROM sqlite_master WHERE type = 'table' AND name = 'counter_hourly'").get() !==
    undefined
  );
}

/**
 * Aggregate rows of the given locations for the hours starting in [fromMs, toMs), ordered by
 * location, channel, hour. A sample that started before `fromMs` in the same hour is included
 * with its hour only when the hour starts at or after `fromMs` (periods are whole hours).
 */
export function readHourly(db: Db, q: HourlyQuery): HourlyRow[] {
  if (!tableExists(db) || q.locationIds.length === 0) return [];
  const locs = q.locationIds.map(() => '?').join(',');
  const sizes = q.diametersNm && q.diametersNm.length > 0 ? q.diametersNm : null;
  const sql = `SELECT l.location_id AS locationId, h.diameter_nm AS diameterNm, h.room_state AS roomState,
      h.hour_ms AS hourMs, h.n, h.n_usable AS nUsable, h.count_sum AS countSum, h.volume_m3 AS volumeM3, h.conc_sum AS concSum,
      h.max_per_m3 AS maxPerM3, h.min_volume_m3 AS minVolumeM3, h.min_duration_ms AS minDurationMs,
      h.flags, h.n_fault AS nFault, h.n_lower_bound AS nLowerBound, h.n_sentinel AS nSentinel,
      h.n_zero_run AS nZeroRun, h.n_gap AS nGap
    FROM counter_hourly h JOIN locations l ON l.id = h.location
   WHERE l.location_id IN (${locs}) AND h.hour_ms >= ? AND h.hour_ms < ?
     ${q.roomStates ? `AND h.room_state IN (${q.roomStates.map(() => '?').join(',') || 'NULL'})` : ''}
     ${sizes ? `AND h.diameter_nm IN (${sizes.map(() => '?').join(',')})` : ''}
   ORDER BY l.location_id, h.diameter_nm, h.hour_ms, h.room_state`;
  const args: unknown[] = [...q.locationIds, Math.round(q.fromMs), Math.round(q.toMs)];
  if (q.roomStates) args.push(...q.roomStates);
  if (sizes) args.push(...sizes);
  return db.prepare(sql).all(...args) as HourlyRow[];
}

/** A location's totals over a period, per channel (sums of the hourly rows). */
export interface HourlyTotals {
  locationId: string;
  diameterNm: number;
  hours: number;
  n: number;
  nUsable: number;
  countSum: number;
  volumeM3: number;
  concSum: number;
  maxPerM3: number | null;
  minVolumeM3: number | null;
  minDurationMs: number | null;
  nFault: number;
  nLowerBound: number;
  nSentinel: number;
  nZeroRun: number;
}

/** Per location and channel, the totals over the hours starting in [fromMs, toMs). */
export function readHourlyTotals(db: Db, q: HourlyQuery): HourlyTotals[] {
  if (!tableExists(db) || q.locationIds.length === 0) return [];
  const locs = q.locationIds.map(() => '?').join(',');
  const sql = `SELECT l.location_id AS locationId, h.diameter_nm AS diameterNm, count(DISTINCT h.hour_ms) AS hours,
      sum(h.n) AS n, sum(h.n_usable) AS nUsable, sum(h.count_sum) AS countSum, sum(h.volume_m3) AS volumeM3,
      sum(h.conc_sum) AS concSum,
      max(h.max_per_m3) AS maxPerM3, min(h.min_volume_m3) AS minVolumeM3, min(h.min_duration_ms) AS minDurationMs,
      sum(h.n_fault) AS nFault, sum(h.n_lower_bound) AS nLowerBound, sum(h.n_sentinel) AS nSentinel,
      sum(h.n_zero_run) AS nZeroRun
    FROM counter_hourly h JOIN locations l ON l.id = h.location
   WHERE l.location_id IN (${locs}) AND h.hour_ms >= ? AND h.hour_ms < ?
     ${q.roomStates ? `AND h.room_state IN (${q.roomStates.map(() => '?').join(',') || 'NULL'})` : ''}
   GROUP BY l.location_id, h.diameter_nm
   ORDER BY l.location_id, h.diameter_nm`;
  const args: unknown[] = [...q.locationIds, Math.round(q.fromMs), Math.round(q.toMs)];
  if (q.roomStates) args.push(...q.roomStates);
  return db.prepare(sql).all(...args) as HourlyTotals[];
}

/**
 * Samples of a location in [fromMs, toMs) (and the state, when given) whose volume is below
 * `minVolumeM3` or whose time is below `minDurationMs` — the sample-volume check of ISO 14644-1
 * A.4.4, sample by sample. Reads the sample keys only (no counts).
 */
export function countShortSamples(
  db: Db,
  locationId: string,
  fromMs: number,
  toMs: number,
  roomStates: readonly number[] | null,
  minVolumeM3: number,
  minDurationMs: number,
): number {
  const r = db
    .prepare(
      `SELECT count(*) AS n FROM counter_samples s JOIN locations l ON l.id = s.location
        WHERE l.location_id = ? AND s.start_ms >= ? AND s.start_ms < ? AND (s.flags & 5) = 0
          ${roomStates ? `AND s.room_state IN (${roomStates.map(() => '?').join(',') || 'NULL'})` : ''}
          AND (s.volume_m3 < ? OR s.duration_ms < ?)`,
    )
    .get(
      ...([locationId, Math.round(fromMs), Math.round(toMs)] as unknown[]),
      ...(roomStates ?? []),
      minVolumeM3,
      minDurationMs,
    ) as { n: number };
  return r.n;
}

/** Location ids that hold any aggregate (any counter sample ever stored). */
export function locationsWithSamples(db: Db): Set<string> {
  if (!tableExists(db)) return new Set();
  return new Set(
    db
      .prepare(
        'SELECT l.location_id FROM locations l WHERE EXISTS (SELECT 1 FROM counter_hourly h WHERE h.location = l.id)',
      )
      .pluck()
      .all() as string[],
  );
}

/** First and last hour with samples of the given locations (null when none). */
export function hourlySpan(
  db: Db,
  locationIds: readonly string[],
): { firstMs: number | null; lastMs: number | null } {
  if (!tableExists(db) || locationIds.length === 0) return { firstMs: null, lastMs: null };
  return db
    .prepare(
      `SELECT min(h.hour_ms) AS firstMs, max(h.hour_ms) AS lastMs FROM counter_hourly h JOIN locations l ON l.id = h.location
        WHERE l.location_id IN (${locationIds.map(() => '?').join(',')})`,
    )
    .get(...locationIds) as { firstMs: number | null; lastMs: number | null };
}
