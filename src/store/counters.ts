/**
 * Read helpers for counter samples, shaped for the engine: columnar typed arrays, one prepared
 * statement per connection, one range scan of the clustered primary key (location, start_ms).
 *
 * `readCounterSamples` returns what is stored (raw counts in each channel set's mode, SI volume and
 * times, the flag bitmask). `toCumulativeSeries` turns that into cumulative concentrations per m³
 * on the channel sizes every sample shares, which is the shape of the engine's CounterSeriesInput.
 */
import type { Db } from './db.ts';

/** Longest sample the importer accepts, ms (a sample that started before `from` may reach into the range). */
export const MAX_SAMPLE_DURATION_MS = 86_400_000;

export interface ChannelSet {
  id: number;
  mode: 'cumulative' | 'differential';
  /** Lower channel bounds, ascending, m. */
  lowerM: number[];
  /** Upper bounds, m (null: open, "≥ lower"). Cumulative channels are all open. */
  upperM: (number | null)[];
}

export interface CounterSamples {
  locationId: string;
  n: number;
  /** Sample start and end, UTC ms. */
  startMs: Float64Array;
  endMs: Float64Array;
  /** Sampled air volume, m³. */
  volumeM3: Float64Array;
  /** Counter of each sample: index into counterIds. */
  counter: Uint16Array;
  counterIds: string[];
  /** Channel set of each sample: index into channelSets. */
  channelSet: Uint16Array;
  channelSets: ChannelSet[];
  /** Row width of `counts`: the largest channel count among the sets. */
  width: number;
  /** n × width raw counts, row-major, in each sample's set mode; cells past a set's channels are NaN. */
  counts: Float64Array;
  /** Flag bitmask per sample (see SAMPLE_FLAGS in src/ingest/kinds/counter-samples.ts). */
  flags: Uint32Array;
  /** 0 not stated, 1 as-built, 2 at-rest, 3 operational. */
  roomState: Uint8Array;
  importId: Int32Array;
}

const LITTLE_ENDIAN = new Uint8Array(new Float64Array([1]).buffer)[7] === 0x3f;

interface Statements {
  location: { get: (id: string) => unknown };
  chunkEnd: { get: (...a: unknown[]) => unknown };
  packed: { get: (...a: unknown[]) => unknown };
  range: { raw: (on: boolean) => { all: (...a: unknown[]) => unknown[][] } };
  set: { get: (id: number) => unknown };
  counter: { get: (id: number) => unknown };
}

const cache = new WeakMap<Db, Statements>();

function statements(db: Db): Statements {
  let s = cache.get(db);
  if (!s) {
    s = {
      location: db.prepare('SELECT id FROM locations WHERE location_id = ?').pluck(),
      range: db.prepare(
        `SELECT start_ms, duration_ms, volume_m3, counter, channel_set, counts, flags, room_state, import_id
          FROM counter_samples WHERE location = ? AND start_ms > ? AND start_ms < ?
         ORDER BY start_ms, counter, duration_ms`,
      ),
      // Where the next chunk of a read ends: the start of the sample `chunkRows` places after a start
      // (null: the rest of the range is one chunk).
      chunkEnd: db
        .prepare(
          `SELECT start_ms FROM counter_samples WHERE location = ? AND start_ms >= ? AND start_ms < ?
            ORDER BY start_ms LIMIT 1 OFFSET ?`,
        )
        .pluck(),
      // One chunk of a read as one row: each column as a JSON array (SQLite writes REALs with 17
      // significant digits, so they round-trip exactly) and the counts as one hex string. Far fewer
      // JS objects than one row (and one Buffer) per sample; the order is verified after parsing.
      packed: db.prepare(
        `SELECT count(*) AS n, json_group_array(start_ms) AS s, json_group_array(duration_ms) AS d,
           json_group_array(volume_m3) AS v, json_group_array(counter) AS c, json_group_array(channel_set) AS cs,
           json_group_array(flags) AS f, json_group_array(room_state) AS r, json_group_array(import_id) AS i,
           group_concat(hex(counts), '') AS x
         FROM (SELECT start_ms, duration_ms, volume_m3, counter, channel_set, flags, room_state, import_id, counts
               FROM counter_samples WHERE location = ? AND start_ms >= ? AND start_ms < ? AND start_ms + duration_ms > ?
               ORDER BY start_ms, counter, duration_ms)`,
      ),
      set: db.prepare('SELECT id, mode, sizes FROM counter_channel_sets WHERE id = ?'),
      counter: db.prepare('SELECT counter_id FROM counters WHERE id = ?').pluck(),
    } as unknown as Statements;
    cache.set(db, s);
  }
  return s;
}

/**
 * Samples per chunk of a read (`chunkRows`; the tests make it small). Each chunk is one packed row
 * (see the `packed` statement): its texts stay about a megabyte whatever the range, so a read grows
 * with its samples, not faster (one text per column over the whole range grew faster than the rows
 * it held).
 */
export const COUNTER_READ = { chunkRows: 65_536 };

interface Packed {
  n: number;
  s: string;
  d: string;
  v: string;
  c: string;
  cs: string;
  f: string;
  r: string;
  i: string;
  x: string | null;
}

/** One chunk, parsed: its columns and its counts' bytes. */
interface Chunk {
  n: number;
  start: number[];
  dur: number[];
  vol: number[];
  counter: number[];
  set: number[];
  flags: number[];
  room: number[];
  imp: number[];
  bytes: Buffer;
}

/**
 * Samples of one location overlapping [fromUtcMs, toUtcMs) — start < to and end > from — in
 * (start, counter, duration) order. An unknown location gives an empty result (n = 0).
 *
 * Reads the range in chunks of COUNTER_READ.chunkRows samples, each as one packed row (the `packed` statement);
 * if the rows did not arrive in key order it falls back to readCounterSamplesByRows (the same
 * result, one JS row per sample; its plain twin, which the tests compare it with).
 */
export function readCounterSamples(
  db: Db,
  locationId: string,
  fromUtcMs: number,
  toUtcMs: number,
): CounterSamples {
  const st = statements(db);
  const loc = st.location.get(locationId) as number | undefined;
  if (loc === undefined) return readCounterSamplesByRows(db, locationId, fromUtcMs, toUtcMs);
  // Samples start at whole milliseconds: "start > from − MAX" is "start ≥ from − MAX + 1".
  const chunks: Chunk[] = [];
  let total = 0;
  let prev: { start: number; counter: number; dur: number } | null = null;
  for (let a = Math.floor(fromUtcMs - MAX_SAMPLE_DURATION_MS) + 1; a < toUtcMs; ) {
    const end = st.chunkEnd.get(loc, a, toUtcMs, COUNTER_READ.chunkRows) as number | undefined;
    // (a chunk holds every sample of its starts: past its first start even if they fill it)
    const b = end === undefined ? toUtcMs : Math.max(end, a + 1);
    const p = st.packed.get(loc, a, b, fromUtcMs) as Packed;
    const c: Chunk = {
      n: p.n,
      start: JSON.parse(p.s) as number[],
      dur: JSON.parse(p.d) as number[],
      vol: JSON.parse(p.v) as number[],
      counter: JSON.parse(p.c) as number[],
      set: JSON.parse(p.cs) as number[],
      flags: JSON.parse(p.f) as number[],
      room: JSON.parse(p.r) as number[],
      imp: JSON.parse(p.i) as number[],
      bytes: p.n > 0 ? Buffer.from(p.x ?? '', 'hex') : Buffer.alloc(0),
    };
    // The rows must have come in key order (start, counter, duration), within and across chunks.
    for (let j = 0; j < c.n; j++) {
      const k = { start: c.start[j]!, counter: c.counter[j]!, dur: c.dur[j]! };
      if (
        prev &&
        (k.start < prev.start ||
          (k.start === prev.start &&
            (k.counter < prev.counter || (k.counter === prev.counter && k.dur <= prev.dur))))
      )
        return readCounterSamplesByRows(db, locationId, fromUtcMs, toUtcMs);
      prev = k;
    }
    chunks.push(c);
    total += c.n;
    if (end === undefined) break;
    a = b;
  }
  const sets = new Sets(st);
  for (const c of chunks) for (let j = 0; j < c.n; j++) sets.index(c.set[j]!);
  const out = emptySamples(locationId, total, sets);
  const counters = new Counters(st, out.counterIds);
  const countBytes = new Uint8Array(out.counts.buffer);
  const w = out.width;
  let i = 0;
  for (const c of chunks) {
    let off = 0;
    for (let j = 0; j < c.n; j++, i++) {
      out.startMs[i] = c.start[j]!;
      out.endMs[i] = c.start[j]! + c.dur[j]!;
      out.volumeM3[i] = c.vol[j]!;
      out.counter[i] = counters.index(c.counter[j]!);
      const si = sets.index(c.set[j]!);
      out.channelSet[i] = si;
      const k = sets.list[si]!.lowerM.length;
      countBytes.set(c.bytes.subarray(off, off + 8 * k), i * w * 8);
      off += 8 * k;
      for (let q = k; q < w; q++) out.counts[i * w + q] = Number.NaN;
      out.flags[i] = c.flags[j]!;
      out.roomState[i] = c.room[j]!;
      out.importId[i] = c.imp[j]!;
    }
    if (off !== c.bytes.length)
      throw new Error(`counter samples at ${locationId}: stored counts do not match their channel sets`);
  }
  return out;
}

/** Channel sets met in a read, by row id → index. */
class Sets {
  readonly list: ChannelSet[] = [];
  readonly byId = new Map<number, number>();
  width = 0;
  constructor(private readonly st: Statements) {}
  index(id: number): number {
    let i = this.byId.get(id);
    if (i === undefined) {
      const row = this.st.set.get(id) as { id: number; mode: ChannelSet['mode']; sizes: string };
      const sizes = JSON.parse(row.sizes) as [number, number | null][];
      i = this.list.length;
      this.byId.set(id, i);
      this.list.push({
        id: row.id,
        mode: row.mode,
        lowerM: sizes.map((x) => x[0]),
        upperM: sizes.map((x) => x[1]),
      });
      this.width = Math.max(this.width, sizes.length);
    }
    return i;
  }
}

/** Counter ids met in a read, by row id → index into `ids`. */
class Counters {
  readonly byId = new Map<number, number>();
  constructor(
    private readonly st: Statements,
    readonly ids: string[],
  ) {}
  index(id: number): number {
    let i = this.byId.get(id);
    if (i === undefined) {
      i = this.ids.length;
      this.byId.set(id, i);
      this.ids.push(this.st.counter.get(id) as string);
    }
    return i;
  }
}

function emptySamples(locationId: string, n: number, sets: Sets): CounterSamples {
  if (!LITTLE_ENDIAN) throw new Error('readCounterSamples needs a little-endian platform');
  const width = sets.width;
  return {
    locationId,
    n,
    startMs: new Float64Array(n),
    endMs: new Float64Array(n),
    volumeM3: new Float64Array(n),
    counter: new Uint16Array(n),
    counterIds: [],
    channelSet: new Uint16Array(n),
    channelSets: sets.list,
    width,
    counts: new Float64Array(n * width),
    flags: new Uint32Array(n),
    roomState: new Uint8Array(n),
    importId: new Int32Array(n),
  };
}

/** The same as readCounterSamples, one JS row per sample (the reference path; also its fallback). */
export function readCounterSamplesByRows(
  db: Db,
  locationId: string,
  fromUtcMs: number,
  toUtcMs: number,
): CounterSamples {
  const st = statements(db);
  const loc = st.location.get(locationId) as number | undefined;
  const all =
    loc === undefined ? [] : st.range.raw(true).all(loc, fromUtcMs - MAX_SAMPLE_DURATION_MS, toUtcMs);
  // Keep the samples that reach into the range (those that started up to a day before it may).
  const kept = all.filter((r) => (r[0] as number) + (r[1] as number) > fromUtcMs);
  const n = kept.length;
  const setIndex = new Map<number, number>();
  const channelSets: ChannelSet[] = [];
  const counterIndex = new Map<number, number>();
  const counterIds: string[] = [];
  let width = 0;
  for (const r of kept) {
    const sid = r[4] as number;
    if (!setIndex.has(sid)) {
      const row = st.set.get(sid) as { id: number; mode: ChannelSet['mode']; sizes: string };
      const sizes = JSON.parse(row.sizes) as [number, number | null][];
      setIndex.set(sid, channelSets.length);
      channelSets.push({
        id: row.id,
        mode: row.mode,
        lowerM: sizes.map((x) => x[0]),
        upperM: sizes.map((x) => x[1]),
      });
      width = Math.max(width, sizes.length);
    }
  }
  const out: CounterSamples = {
    locationId,
    n,
    startMs: new Float64Array(n),
    endMs: new Float64Array(n),
    volumeM3: new Float64Array(n),
    counter: new Uint16Array(n),
    counterIds,
    channelSet: new Uint16Array(n),
    channelSets,
    width,
    counts: new Float64Array(n * width),
    flags: new Uint32Array(n),
    roomState: new Uint8Array(n),
    importId: new Int32Array(n),
  };
  if (!LITTLE_ENDIAN) throw new Error('readCounterSamples needs a little-endian platform');
  const countBytes = new Uint8Array(out.counts.buffer);
  let i = 0;
  for (const r of kept) {
    const start = r[0] as number;
    const dur = r[1] as number;
    out.startMs[i] = start;
    out.endMs[i] = start + dur;
    out.volumeM3[i] = r[2] as number;
    const cid = r[3] as number;
    let ci = counterIndex.get(cid);
    if (ci === undefined) {
      ci = counterIds.length;
      counterIndex.set(cid, ci);
      counterIds.push(st.counter.get(cid) as string);
    }
    out.counter[i] = ci;
    const si = setIndex.get(r[4] as number)!;
    out.channelSet[i] = si;
    const blob = r[5] as Buffer;
    const k = blob.length >> 3;
    const base = i * width;
    // One copy of the little-endian doubles into the array's bytes (every platform Node supports
    // in production is little-endian; checked once below).
    countBytes.set(blob, base * 8);
    for (let c = k; c < width; c++) out.counts[base + c] = Number.NaN;
    out.flags[i] = r[6] as number;
    out.roomState[i] = r[7] as number;
    out.importId[i] = r[8] as number;
    i++;
  }
  return out;
}

/** Cumulative concentrations on shared channel sizes: the engine's CounterSeriesInput shape. */
export interface CumulativeSeries {
  locationId: string;
  /** Channel lower sizes, ascending, m. */
  channelSizesM: Float64Array;
  startMs: Float64Array;
  endMs: Float64Array;
  /** n × channels cumulative concentrations (≥ size), particles per m³. */
  cumulativePerM3: Float64Array;
  /** The low 8 bits of each sample's flags (fault 1, lower bound 2, sentinel 4, …). */
  flags: Uint8Array;
}

/**
 * Cumulative concentration C(≥ d) = N(≥ d) / V per sample, on the sizes that every channel set
 * present can give: a cumulative set gives each of its sizes; a differential set gives each lower
 * bound d_i as Σ_{j ≥ i} n_j (exact when its top channel is open, otherwise the particles above the
 * top bound are not counted, as with the instrument itself). Throws when the sets share no size.
 */
export function toCumulativeSeries(s: CounterSamples): CumulativeSeries {
  let sizes: number[] | null = null;
  for (const set of s.channelSets) {
    sizes = sizes === null ? [...set.lowerM] : sizes.filter((d) => set.lowerM.includes(d));
  }
  sizes ??= [];
  if (s.n > 0 && sizes.length === 0) {
    throw new Error(`counter samples at ${s.locationId} have channel sets with no size in common`);
  }
  const k = sizes.length;
  // For each set: which of its channels gives each shared size.
  const pick = s.channelSets.map((set) => sizes.map((d) => set.lowerM.indexOf(d)));
  const out = new Float64Array(s.n * k);
  const flags = new Uint8Array(s.n);
  const w = s.width;
  for (let i = 0; i < s.n; i++) {
    const si = s.channelSet[i]!;
    const set = s.channelSets[si]!;
    const idx = pick[si]!;
    const v = s.volumeM3[i]!;
    const base = i * w;
    if (set.mode === 'cumulative') {
      for (let c = 0; c < k; c++) out[i * k + c] = s.counts[base + idx[c]!]! / v;
    } else {
      // Suffix sums of the differential channels.
      const m = set.lowerM.length;
      let acc = 0;
      let c = k - 1;
      for (let j = m - 1; j >= 0 && c >= 0; j--) {
        acc += s.counts[base + j]!;
        while (c >= 0 && idx[c] === j) {
          out[i * k + c] = acc / v;
          c--;
        }
      }
    }
    flags[i] = s.flags[i]! & 0xff;
  }
  return {
    locationId: s.locationId,
    channelSizesM: Float64Array.from(sizes),
    startMs: s.startMs,
    endMs: s.endMs,
    cumulativePerM3: out,
    flags,
  };
}

/** readCounterSamples followed by toCumulativeSeries. */
export function readCounterSeries(
  db: Db,
  locationId: string,
  fromUtcMs: number,
  toUtcMs: number,
): CumulativeSeries {
  return toCumulativeSeries(readCounterSamples(db, locationId, fromUtcMs, toUtcMs));
}
