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
         FROM counter_samples WHERE location = ? AND start_ms > ? AND start_ms < ? ORDER BY start_ms, counter`,
      ),
      set: db.prepare('SELECT id, mode, sizes FROM counter_channel_sets WHERE id = ?'),
      counter: db.prepare('SELECT counter_id FROM counters WHERE id = ?').pluck(),
    } as unknown as Statements;
    cache.set(db, s);
  }
  return s;
}

/**
 * Samples of one location overlapping [fromUtcMs, toUtcMs) — start < to and end > from — in start order.
 * An unknown location gives an empty result (n = 0).
 */
export function readCounterSamples(
  db: Db,
  locationId: string,
  fromUtcMs: number,
  toUtcMs: number,
): CounterSamples {
  const st = statements(db);
  const loc = st.location.get(locationId) as number | undefined;
  const rows =
    loc === undefined ? [] : st.range.raw(true).all(loc, fromUtcMs - MAX_SAMPLE_DURATION_MS, toUtcMs);
  // Keep the samples that reach into the range (those that started up to a day before it may).
  let n = 0;
  for (const r of rows) if ((r[0] as number) + (r[1] as number) > fromUtcMs) n++;
  const setIndex = new Map<number, number>();
  const channelSets: ChannelSet[] = [];
  const counterIndex = new Map<number, number>();
  const counterIds: string[] = [];
  let width = 0;
  for (const r of rows) {
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
  for (const r of rows) {
    const start = r[0] as number;
    const dur = r[1] as number;
    if (start + dur <= fromUtcMs) continue;
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
