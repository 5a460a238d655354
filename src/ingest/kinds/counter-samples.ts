/**
 * Import kind `counter-samples`: airborne particle-counter samples, one CSV row per sample with one
 * column per channel (wide layout).
 *
 * Channels are declared by their headers: `ge_0.1um` counts particles ≥ 0.1 µm (cumulative mode);
 * `d_0.1-0.2um` counts particles from 0.1 to 0.2 µm (differential mode), contiguous, optionally
 * topped by an open `ge_` channel at the last upper bound. What the channel cells count is declared
 * in the metadata block: `# units: counts=raw` (counts in the sampled volume) or a concentration
 * (`per_m3`, `per_L`, `per_ft3`), which is turned back into counts with the sampled volume.
 *
 * Stored in SI (counter_samples): start in UTC ms, duration in ms, volume in m³, raw counts in the
 * file's mode as a BLOB of float64, and a per-sample flag bitmask. Data-quality checks (zeros are
 * counts, never "missing"):
 *   - a cumulative row whose count rises with size fits neither mode: the row is rejected;
 *   - duplicates on (counter, location, start, duration), in the file or against stored rows:
 *     the first copy is kept, the rest counted (and differing copies reported as conflicts);
 *   - long all-channel zero runs, saturation near a declared rated maximum, sentinel values,
 *     time gaps, time running backwards and implausible implied flow rates are flagged per sample
 *     and summarised in import_flags.
 */
import { z } from 'zod';
import { HourlyAccumulator, refreshCounterHourly } from '../../store/counter-hourly.ts';
import { CELL_FAIL, enumCell, enumListCell, idCell, numberCell, timeCell } from '../cells.ts';
import type {
  Cell,
  ColumnSpec,
  FileContext,
  ImportFlag,
  ImportKind,
  KindIssue,
  KindSession,
  MetadataSpec,
  PatternColumnSpec,
} from '../types.ts';
import {
  CONCENTRATION_UNITS,
  DURATION_UNITS,
  FLOW_UNITS,
  findUnit,
  parseSize,
  toSi,
  type UnitDef,
  VOLUME_UNITS,
} from '../units.ts';

/**
 * Per-sample flag bits (counter_samples.flags). The low three bits are the ones the engine acts on
 * (src/engine/types.ts SAMPLE_FLAG): fault → not used, lowerBound → used as a lower bound,
 * sentinel → not used. The others are informative.
 */
export const SAMPLE_FLAGS = {
  /** The instrument reported a flow or laser fault. */
  fault: 1,
  /** Counts are a lower bound: overload reported, or saturation near the rated maximum. */
  lowerBound: 2,
  /** A sentinel constant (999, 9999 …) in every channel, or ≥ 3 identical repeated non-trivial rows. */
  sentinel: 4,
  /** Part of a long all-channel zero run (still a valid count: zeros are normal in clean air). */
  zeroRun: 8,
  /** More than GAP_FACTOR typical intervals since the previous sample of this counter here. */
  gapBefore: 16,
  /** Starts before the previous sample of this counter at this location (file order). */
  timeBackwards: 32,
  /** Implied flow rate (volume / duration) outside the plausible range of particle counters. */
  unitSuspect: 64,
  statusFlow: 256,
  statusLaser: 512,
  statusOverload: 1024,
  saturation: 2048,
} as const;

/** ISO 14644-1:2015 occupancy states (§3.3), coded in counter_samples.room_state. */
export const ROOM_STATES = ['as-built', 'at-rest', 'operational'] as const;
export const ROOM_STATE_CODE: Record<(typeof ROOM_STATES)[number], number> = {
  'as-built': 1,
  'at-rest': 2,
  operational: 3,
};

export const STATUS_VALUES = ['flow', 'laser', 'overload'] as const;

/**
 * Thresholds of the data-quality checks. Common practice with no single published source unless
 * stated; each is a default chosen to be conservative and is reported with the flag it raises.
 */
export const QUALITY = {
  /**
   * A run of all-zero samples is flagged once it has sampled this much air (m³). In ISO class 2 air
   * (100 particles/m³ ≥ 0.1 µm, ISO 14644-1:2015 Table 1) 1 m³ holds on average 100 particles at that
   * size, so a true zero over 1 m³ is improbable unless the smallest channel is large; the flag says
   * "check the inlet and flow", it does not discard the counts.
   */
  zeroRunMinVolumeM3: 1,
  /** Saturation: smallest-size concentration ≥ this fraction of the declared rated maximum. */
  saturationFraction: 0.9,
  /** Sentinel constants written by counters and loggers for "no value". */
  sentinels: [999, 9999, 99999, 999999, 9999999, 65535, 32767] as readonly number[],
  /** Identical rows in a row that make a sentinel run, and the least total count that counts. */
  repeatRun: 3,
  repeatMinTotal: 20,
  /** A gap is a start-to-start interval above GAP_FACTOR × the typical (median) interval. */
  gapFactor: 3,
  /** Intervals used to estimate the typical interval of a series. */
  gapWarmup: 64,
  /**
   * Plausible flow range of particle counters, L/min: 0.1 ft³/min (2.83 L/min) to 100 L/min
   * instruments exist (ISO 21501-4 instruments; common practice), so 0.5 to 200 L/min leaves margin.
   */
  flowMinLMin: 0.5,
  flowMaxLMin: 200,
  /** Volume and flow × duration given together must agree within this fraction. */
  volumeFlowTolerance: 0.02,
  /** Longest sample accepted, ms (a day). */
  maxDurationMs: 86_400_000,
} as const;

/**
 * How the import keeps the hourly aggregates (src/store/counter-hourly.ts): 'incremental' adds each
 * stored sample as it is stored (the default); 'refresh' recomputes the touched hours from the stored
 * samples at the end — the plain twin, kept for the tests that compare the two.
 */
export const HOURLY_MODE: { current: 'incremental' | 'refresh' } = { current: 'incremental' };

/**
 * Rows written per INSERT statement when their key is known to be new (later in time than every
 * sample of their counter in this file and every sample stored before at their location); other rows
 * go one by one, so that a duplicate is found and counted. `BATCH_MODE.rows = 1` is the plain
 * row-by-row twin the tests compare against.
 */
export const BATCH_MODE = { rows: 64 };

// ——— channels ———

export interface ChannelHeader {
  mode: 'ge' | 'd';
  lowM: number;
  highM: number | null;
  shown: string;
}

const GE = /^ge_(\d+(?:\.\d+)?)(um|µm|nm)$/;
const D = /^d_(\d+(?:\.\d+)?)-(\d+(?:\.\d+)?)(um|µm|nm)$/;

export function parseChannelHeader(key: string): ChannelHeader | null {
  let m = GE.exec(key);
  if (m) {
    const s = parseSize(`${m[1]}${m[2]}`);
    return s ? { mode: 'ge', lowM: s.m, highM: null, shown: `≥ ${s.shown}` } : null;
  }
  m = D.exec(key);
  if (m) {
    const lo = parseSize(`${m[1]}${m[3]}`);
    const hi = parseSize(`${m[2]}${m[3]}`);
    if (!lo || !hi || !(hi.m > lo.m)) return null;
    return { mode: 'd', lowM: lo.m, highM: hi.m, shown: `${m[1]}–${hi.shown}` };
  }
  return null;
}

/** Counts cell: whole numbers ≥ 0 for raw counts, numbers ≥ 0 for concentrations. */
function countCell(ctx: { units: ReadonlyMap<string, string> }): Cell<number> {
  const u = ctx.units.get('counts');
  const raw = u === undefined || u.toLowerCase() === 'raw';
  return numberCell(raw ? { min: 0, integer: true } : { min: 0, unit: u });
}

export const CHANNEL_COLUMNS: PatternColumnSpec = {
  pattern: 'ge_<size><um|nm> or d_<low>-<high><um|nm>',
  description:
    'one column per channel: ge_ counts particles at or above the size (cumulative), d_ those between two sizes (differential)',
  unit: 'as declared by # units: counts=… (raw, per_m3, per_L or per_ft3)',
  required: true,
  match: (key) => parseChannelHeader(key),
  cell: countCell,
};

// ——— fixed columns ———

const positive = (unit: string) => () => numberCell({ min: 0, minExclusive: true, unit });

export const COUNTER_COLUMNS: readonly ColumnSpec[] = [
  { name: 'counter_id', required: true, unit: null, description: 'the instrument', cell: idCell },
  {
    name: 'location_id',
    required: true,
    unit: null,
    description: 'where it sampled; must be a stored location',
    cell: idCell,
  },
  {
    name: 'start',
    required: true,
    unit: null,
    description: 'sample start, ISO 8601 with offset (or # zone:)',
    cell: (c) => timeCell(c.zone),
  },
  {
    name: 'end',
    required: false,
    group: 'duration',
    unit: null,
    description: 'sample end, ISO 8601 (instead of a duration)',
    cell: (c) => timeCell(c.zone),
  },
  {
    name: 'duration_s',
    required: false,
    group: 'duration',
    unit: 's',
    description: 'sample duration',
    cell: positive('s'),
  },
  {
    name: 'duration_min',
    required: false,
    group: 'duration',
    unit: 'min',
    description: 'sample duration',
    cell: positive('min'),
  },
  {
    name: 'duration',
    required: false,
    group: 'duration',
    unit: 's, min or h, declared in # units:',
    description: 'sample duration in the declared unit',
    cell: positive(''),
  },
  {
    name: 'volume_L',
    required: false,
    group: 'volume',
    unit: 'L',
    description: 'sampled air volume',
    cell: positive('L'),
  },
  {
    name: 'volume_m3',
    required: false,
    group: 'volume',
    unit: 'm³',
    description: 'sampled air volume',
    cell: positive('m³'),
  },
  {
    name: 'volume_ft3',
    required: false,
    group: 'volume',
    unit: 'ft³',
    description: 'sampled air volume',
    cell: positive('ft³'),
  },
  {
    name: 'volume',
    required: false,
    group: 'volume',
    unit: 'L, m3 or ft3, declared in # units:',
    description: 'sampled air volume in the declared unit',
    cell: positive(''),
  },
  {
    name: 'flow_L_min',
    required: false,
    group: 'flow',
    unit: 'L/min',
    description: 'sample flow rate (volume = flow × duration)',
    cell: positive('L/min'),
  },
  {
    name: 'flow_ft3_min',
    required: false,
    group: 'flow',
    unit: 'ft³/min',
    description: 'sample flow rate (volume = flow × duration)',
    cell: positive('ft³/min'),
  },
  {
    name: 'flow_m3_s',
    required: false,
    group: 'flow',
    unit: 'm³/s',
    description: 'sample flow rate (volume = flow × duration)',
    cell: positive('m³/s'),
  },
  {
    name: 'status',
    required: false,
    unit: null,
    description: `instrument status: ok, or ${STATUS_VALUES.join(', ')} separated by |`,
    cell: statusCell,
  },
  {
    name: 'room_state',
    required: false,
    unit: null,
    description: `occupancy state: ${ROOM_STATES.join(', ')} (or # room_state:)`,
    cell: () => enumCell(ROOM_STATES),
  },
];

/** The status of a sample without problems (shared: the hot path allocates nothing for it). */
const NO_STATUS: string[] = [];

function statusCell(): Cell<string[]> {
  const list = enumListCell(STATUS_VALUES);
  const text = `must be ok or values from ${STATUS_VALUES.join(', ')} separated by |`;
  const split = (s: string): string[] | typeof CELL_FAIL => {
    if (s === 'ok' || s.toLowerCase() === 'ok') return NO_STATUS;
    const v = list.fast!(s);
    return v === CELL_FAIL || v.length === 0 ? CELL_FAIL : v;
  };
  return {
    schema: z
      .string()
      .transform((s) => split(s))
      .refine((v) => v !== CELL_FAIL, { error: text }) as unknown as z.ZodType<string[], string>,
    fast: split,
  };
}

export const COUNTER_METADATA: readonly MetadataSpec[] = [
  {
    key: 'rated_max',
    description:
      'the counter’s rated maximum concentration at its smallest size, with unit (per_m3, per_L, per_ft3); enables the saturation check',
    example: '4000000 per_ft3',
  },
  {
    key: 'room_state',
    description: 'occupancy state of every row without a room_state cell',
    example: 'operational',
  },
];

// ——— the kind ———

interface Series {
  lastStart: number;
  /** Start-to-start intervals seen during warm-up, with the start they lead to. */
  warm: { dt: number; start: number }[];
  typical: number | null;
  gaps: number;
  longestGapMs: number;
  backwards: number;
  zero: { from: number; to: number; volume: number; n: number; flagged: boolean } | null;
  repeat: { counts: Float64Array; from: number; to: number; n: number } | null;
}

function sameCounts(a: Float64Array, b: Float64Array): boolean {
  for (let i = 0; i < a.length; i++) if (a[i] !== b[i]) return false;
  return true;
}

const FLAG_TEXT = {
  gap: 'time gap',
  zero: 'all-channel zero run',
};

function unitFromMeta(
  table: readonly UnitDef[],
  ctx: FileContext,
  quantity: string,
  allowed: string,
): { unit: UnitDef | null; issue: KindIssue | null } {
  const w = ctx.units.get(quantity);
  if (w === undefined) {
    return {
      unit: null,
      issue: {
        line: ctx.headerLine,
        column: quantity,
        value: null,
        rule: `column "${quantity}" has no unit: declare it (# units: ${quantity}=${allowed.split('|')[0]}) or write the unit in the header`,
      },
    };
  }
  const u = findUnit(table, w);
  if (!u) {
    return {
      unit: null,
      issue: {
        line: ctx.metadataLines?.get('units') ?? 0,
        column: null,
        value: w,
        rule: `unknown ${quantity} unit "${w}" in # units: (allowed: ${allowed})`,
      },
    };
  }
  return { unit: u, issue: null };
}

const unitOfColumn = (table: readonly UnitDef[], name: string): UnitDef => {
  const suffix = name.slice(name.indexOf('_') + 1);
  const u = findUnit(table, suffix);
  if (!u) throw new Error(`no unit for column ${name}`);
  return u;
};

export const counterSamples: ImportKind = {
  name: 'counter-samples',
  summary: 'airborne particle-counter samples, one row per sample, one column per channel',
  columns: COUNTER_COLUMNS,
  patternColumns: [CHANNEL_COLUMNS],
  metadata: COUNTER_METADATA,
  begin(ctx): KindSession | KindIssue[] {
    const issues: KindIssue[] = [];
    const has = (name: string) => ctx.header.some((h) => h.spec?.name === name);
    const present = (group: string) => COUNTER_COLUMNS.filter((c) => c.group === group && has(c.name));

    // Units of the counts.
    const countsWritten = ctx.units.get('counts');
    const metaLine = (key: string) => ctx.metadataLines?.get(key) ?? 0;
    let concUnit: UnitDef | null = null;
    if (countsWritten === undefined) {
      issues.push({
        line: 0,
        column: null,
        value: null,
        rule: 'declare what the channel columns hold: # units: counts=raw (counts in the sampled volume) or counts=per_m3, per_L or per_ft3',
      });
    } else if (countsWritten.toLowerCase() !== 'raw') {
      concUnit = findUnit(CONCENTRATION_UNITS, countsWritten);
      if (!concUnit)
        issues.push({
          line: metaLine('units'),
          column: null,
          value: countsWritten,
          rule: `unknown counts unit "${countsWritten}" in # units: (allowed: raw, per_m3, per_L, per_ft3)`,
        });
    }
    for (const q of ctx.units.keys()) {
      if (!['counts', 'volume', 'duration', 'flow'].includes(q))
        issues.push({
          line: metaLine('units'),
          column: null,
          value: q,
          rule: `# units: has an entry for "${q}"; counter-samples files declare counts, volume, duration or flow`,
        });
    }

    // Channels: one mode, ascending, contiguous for differential.
    const channelCols = ctx.header
      .filter((h) => h.pattern?.spec === CHANNEL_COLUMNS)
      .map((h) => ({ h, c: h.pattern!.descriptor as ChannelHeader }));
    if (channelCols.length === 0) {
      issues.push({
        line: ctx.headerLine,
        column: null,
        value: null,
        rule: 'no channel columns: name them ge_<size>um (cumulative) or d_<low>-<high>um (differential), e.g. ge_0.1um',
      });
    }
    if (channelCols.length > 16) {
      issues.push({ line: ctx.headerLine, column: null, value: null, rule: 'at most 16 channel columns' });
    }
    const sorted = [...channelCols].sort(
      (a, b) => a.c.lowM - b.c.lowM || (a.c.highM ?? Infinity) - (b.c.highM ?? Infinity),
    );
    for (let i = 1; i < channelCols.length; i++) {
      if (channelCols[i]!.c.lowM <= channelCols[i - 1]!.c.lowM) {
        issues.push({
          line: ctx.headerLine,
          column: channelCols[i]!.h.written,
          value: channelCols[i]!.h.written,
          rule: `channel columns must be in ascending order of size, each size once (after "${channelCols[i - 1]!.h.written}")`,
        });
        break;
      }
    }
    const differential = channelCols.some((x) => x.c.mode === 'd');
    if (differential) {
      sorted.forEach((x, i) => {
        if (x.c.mode === 'ge' && i !== sorted.length - 1) {
          issues.push({
            line: ctx.headerLine,
            column: x.h.written,
            value: x.h.written,
            rule: 'cumulative (ge_) and differential (d_) channels cannot be mixed, except one open ge_ channel at the top',
          });
        }
        const next = sorted[i + 1];
        if (next && x.c.highM !== null && next.c.lowM !== x.c.highM) {
          issues.push({
            line: ctx.headerLine,
            column: next.h.written,
            value: next.h.written,
            rule: `differential channels must be contiguous: "${x.h.written}" ends where the next must start`,
          });
        }
      });
    }

    // Duration, volume, flow.
    const dur = present('duration');
    const vol = present('volume');
    const flow = present('flow');
    if (dur.length !== 1) {
      issues.push({
        line: ctx.headerLine,
        column: dur[1]?.name ?? null,
        value: null,
        rule:
          dur.length === 0
            ? 'missing column: give the sample end (end) or its duration (duration_s, duration_min)'
            : `give either the sample end or its duration, once (found ${dur.map((d) => d.name).join(', ')})`,
      });
    }
    if (vol.length > 1 || flow.length > 1) {
      issues.push({
        line: ctx.headerLine,
        column: null,
        value: null,
        rule: `give the sampled volume once and the flow rate at most once (found ${[...vol, ...flow].map((d) => d.name).join(', ')})`,
      });
    }
    if (vol.length === 0 && flow.length === 0) {
      issues.push({
        line: ctx.headerLine,
        column: 'volume_L',
        value: null,
        rule: 'missing column: give the sampled volume (volume_L, volume_m3, volume_ft3) or the flow rate (flow_L_min, flow_ft3_min)',
      });
    }
    const durCol = dur[0]?.name ?? null;
    const volCol = vol[0]?.name ?? null;
    const flowCol = flow[0]?.name ?? null;
    let durUnit: UnitDef | null = null;
    let volUnit: UnitDef | null = null;
    if (durCol === 'duration') {
      const r = unitFromMeta(DURATION_UNITS, ctx, 'duration', 's|min|h');
      durUnit = r.unit;
      if (r.issue) issues.push(r.issue);
    } else if (durCol && durCol !== 'end') durUnit = unitOfColumn(DURATION_UNITS, durCol);
    if (volCol === 'volume') {
      const r = unitFromMeta(VOLUME_UNITS, ctx, 'volume', 'L|m3|ft3');
      volUnit = r.unit;
      if (r.issue) issues.push(r.issue);
    } else if (volCol) volUnit = unitOfColumn(VOLUME_UNITS, volCol);
    for (const [q, col] of [
      ['volume', volCol],
      ['duration', durCol],
      ['flow', flowCol],
    ] as const) {
      const declared = ctx.units.get(q);
      if (declared !== undefined && col !== null && col !== q && col !== 'end') {
        issues.push({
          line: ctx.headerLine,
          column: col,
          value: declared,
          rule: `unit conflict: the header says ${col} but # units: declares ${q}=${declared}`,
        });
      }
    }
    const flowUnit = flowCol ? unitOfColumn(FLOW_UNITS, flowCol) : null;

    // Rated maximum and default room state.
    let ratedMaxPerM3: number | null = null;
    const rated = ctx.metadata.get('rated_max');
    if (rated !== undefined) {
      const m = /^([0-9.eE+]+)\s+(\S+)$/.exec(rated);
      const u = m ? findUnit(CONCENTRATION_UNITS, m[2]!) : null;
      const v = m ? Number(m[1]) : Number.NaN;
      if (!u || !(v > 0)) {
        issues.push({
          line: metaLine('rated_max'),
          column: null,
          value: rated,
          rule: '# rated_max: must read "<number> <per_m3|per_L|per_ft3>", e.g. 4000000 per_ft3',
        });
      } else ratedMaxPerM3 = toSi(v, u);
    }
    let defaultRoom = 0;
    const roomMeta = ctx.metadata.get('room_state');
    if (roomMeta !== undefined) {
      const r = enumCell(ROOM_STATES).fast!(roomMeta);
      if (r === CELL_FAIL)
        issues.push({
          line: metaLine('room_state'),
          column: null,
          value: roomMeta,
          rule: `# room_state: must be one of ${ROOM_STATES.join(', ')}`,
        });
      else defaultRoom = ROOM_STATE_CODE[r];
    }
    if (issues.length > 0) return issues;

    // Channel set, counters, locations.
    const { db, importId } = ctx;
    const k = sorted.length;
    const mode = differential ? 'differential' : 'cumulative';
    const sizes = JSON.stringify(sorted.map((x) => [x.c.lowM, x.c.highM]));
    db.prepare(
      'INSERT OR IGNORE INTO counter_channel_sets (mode, sizes, channel_count) VALUES (?, ?, ?)',
    ).run(mode, sizes, k);
    const setId = (
      db.prepare('SELECT id FROM counter_channel_sets WHERE mode = ? AND sizes = ?').get(mode, sizes) as {
        id: number;
      }
    ).id;
    const channelKeys = sorted.map((x) => x.h.key);
    const channelWritten = sorted.map((x) => x.h.written);
    const smallestIsAll = !differential; // cumulative ≥ smallest holds everything counted

    const locStmt = db.prepare('SELECT id FROM locations WHERE location_id = ?').pluck();
    const counterGet = db.prepare('SELECT id FROM counters WHERE counter_id = ?').pluck();
    const counterAdd = db.prepare('INSERT INTO counters (counter_id) VALUES (?)');
    const locCache = new Map<string, number | null>();
    const counterCache = new Map<string, number>();
    const insert = db.prepare(
      // ON CONFLICT on the key only (OR IGNORE would also swallow NOT NULL and CHECK failures).
      `INSERT INTO counter_samples (location, start_ms, counter, duration_ms, volume_m3, channel_set, counts,
         flags, room_state, import_id, line) VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?)
       ON CONFLICT (location, start_ms, counter, duration_ms) DO NOTHING`,
    );
    const batchRows = Math.max(1, Math.floor(BATCH_MODE.rows));
    const rowSql = '(?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?)';
    // No ON CONFLICT: a batched key is new by construction, so a conflict is a fault and fails loudly.
    const insertMany =
      batchRows > 1
        ? db.prepare(
            `INSERT INTO counter_samples (location, start_ms, counter, duration_ms, volume_m3, channel_set, counts,
               flags, room_state, import_id, line) VALUES ${Array(batchRows).fill(rowSql).join(', ')}`,
          )
        : null;
    const insertOne = db.prepare(
      `INSERT INTO counter_samples (location, start_ms, counter, duration_ms, volume_m3, channel_set, counts,
         flags, room_state, import_id, line) VALUES ${rowSql}`,
    );
    const pending: unknown[] = [];
    let pendingRows = 0;
    /** Writes the rows waiting for a full batch (before any statement that must see them). */
    const flushPending = () => {
      if (pendingRows === 0) return;
      if (pendingRows === batchRows && insertMany) insertMany.run(pending);
      else for (let i = 0; i < pendingRows; i++) insertOne.run(pending.slice(i * 11, i * 11 + 11));
      pending.length = 0;
      pendingRows = 0;
    };
    // Per location row id: the latest sample start stored before this file (−∞ when none).
    const storedMax = db.prepare('SELECT max(start_ms) FROM counter_samples WHERE location = ?').pluck();
    const latestBefore = new Map<number, number>();
    const existing = db.prepare(
      'SELECT import_id, counts, channel_set FROM counter_samples WHERE location = ? AND start_ms = ? AND counter = ? AND duration_ms = ?',
    );
    const orFlags = db.prepare(
      `UPDATE counter_samples SET flags = flags | ? WHERE location = ? AND counter = ? AND start_ms >= ? AND start_ms <= ?
         AND import_id = ?`,
    );
    const orFlagsAt = db.prepare(
      'UPDATE counter_samples SET flags = flags | ? WHERE location = ? AND counter = ? AND start_ms = ? AND import_id = ?',
    );
    const countsBuf = Buffer.alloc(8 * k);
    const counts = new Float64Array(countsBuf.buffer, countsBuf.byteOffset, k);
    // Series by location key × 2^20 + counter key (both small integer row ids).
    const series = new Map<number, Series & { loc: number; counter: number }>();
    const tally = {
      fault: 0,
      overload: 0,
      saturation: 0,
      sentinel: 0,
      zeroRuns: 0,
      zeroSamples: 0,
      unitSuspect: 0,
      dupSame: 0,
      dupConflict: 0,
      dupWithinFile: 0,
    };
    const zeroRunDetails: string[] = [];
    let unitSuspectExample = '';
    // Per location row id: the earliest and latest sample start stored, for the hourly aggregates.
    const touched = new Map<number, { from: number; to: number }>();
    const hourly = HOURLY_MODE.current === 'incremental' ? new HourlyAccumulator(db) : null;
    const sizesNm = sorted.map((x) => Math.round(x.c.lowM * 1e9));
    const ge = new Float64Array(k);

    const seriesOf = (loc: number, counter: number): Series => {
      const key = loc * 1048576 + counter;
      let s = series.get(key);
      if (!s) {
        s = {
          loc,
          counter,
          lastStart: Number.NEGATIVE_INFINITY,
          warm: [],
          typical: null,
          gaps: 0,
          longestGapMs: 0,
          backwards: 0,
          zero: null,
          repeat: null,
        };
        series.set(key, s);
      }
      return s;
    };
    const median = (xs: number[]): number => {
      const a = [...xs].sort((p, q) => p - q);
      const m = a.length >> 1;
      return a.length % 2 ? a[m]! : (a[m - 1]! + a[m]!) / 2;
    };
    const closeZeroRun = (s: Series) => {
      const z0 = s.zero;
      if (z0?.flagged) {
        tally.zeroRuns++;
        tally.zeroSamples += z0.n;
        if (zeroRunDetails.length < 5) {
          zeroRunDetails.push(
            `${new Date(z0.from).toISOString()}–${new Date(z0.to).toISOString()} (${z0.n} samples, ${(z0.volume * 1000).toFixed(0)} L)`,
          );
        }
      }
      s.zero = null;
    };
    const settleWarmup = (s: Series, loc: number, counter: number) => {
      const dts = s.warm.filter((w) => w.dt > 0).map((w) => w.dt);
      if (dts.length === 0) {
        s.warm = [];
        return;
      }
      s.typical = median(dts);
      for (const w of s.warm) {
        if (w.dt > QUALITY.gapFactor * s.typical) {
          s.gaps++;
          s.longestGapMs = Math.max(s.longestGapMs, w.dt);
          flushPending();
          orFlagsAt.run(SAMPLE_FLAGS.gapBefore, loc, counter, w.start, importId);
          hourly?.changed(loc, w.start, w.start);
        }
      }
      s.warm = [];
    };

    return {
      row(row, line) {
        const locName = row.location_id as string;
        let loc = locCache.get(locName);
        if (loc === undefined) {
          loc = (locStmt.get(locName) as number | undefined) ?? null;
          locCache.set(locName, loc);
        }
        if (loc === null) {
          return [
            {
              line,
              column: 'location_id',
              value: locName,
              rule: `unknown location "${locName}": import it in a locations file first`,
            },
          ];
        }
        const start = row.start as number;
        let durationMs: number;
        if (durCol === 'end') {
          durationMs = (row.end as number) - start;
          if (!(durationMs > 0)) {
            return [{ line, column: 'end', value: null, rule: 'the sample must end after it starts' }];
          }
        } else {
          durationMs = Math.round(toSi(row[durCol!] as number, durUnit!) * 1000);
        }
        if (durationMs > QUALITY.maxDurationMs) {
          return [{ line, column: durCol, value: null, rule: 'a sample may last at most 24 h' }];
        }
        if (!(durationMs >= 1)) {
          return [{ line, column: durCol, value: null, rule: 'a sample must last at least 1 ms' }];
        }
        let volumeM3: number;
        const fromFlow = flowCol ? toSi(row[flowCol] as number, flowUnit!) * (durationMs / 1000) : null;
        if (volCol) {
          volumeM3 = toSi(row[volCol] as number, volUnit!);
          if (fromFlow !== null && Math.abs(fromFlow - volumeM3) > QUALITY.volumeFlowTolerance * volumeM3) {
            return [
              {
                line,
                column: volCol,
                value: String(row[volCol]),
                rule: `the volume disagrees with ${flowCol} × duration = ${(fromFlow * 1000).toPrecision(4)} L by more than ${QUALITY.volumeFlowTolerance * 100} %`,
              },
            ];
          }
        } else volumeM3 = fromFlow!;
        // An empty volume (or flow) cell leaves no volume: a row issue, never a NaN stored.
        if (!(Number.isFinite(volumeM3) && volumeM3 > 0)) {
          const col = volCol ?? flowCol;
          return [
            {
              line,
              column: col,
              value: null,
              rule: `the sampled volume is required: give ${col} as a number > 0`,
            },
          ];
        }

        // Counts, raw.
        let total = 0;
        let allSame = true;
        for (let i = 0; i < k; i++) {
          const v = row[channelKeys[i]!] as number;
          const raw = concUnit ? toSi(v, concUnit) * volumeM3 : v;
          counts[i] = raw;
          total += raw;
          if (i > 0 && raw !== counts[0]) allSame = false;
        }
        if (!differential) {
          for (let i = 1; i < k; i++) {
            if (counts[i]! > counts[i - 1]!) {
              return [
                {
                  line,
                  column: channelWritten[i]!,
                  value: String(row[channelKeys[i]!]),
                  rule: `cumulative counts must not rise with size: ${channelWritten[i]} = ${row[channelKeys[i]!]} is above ${channelWritten[i - 1]} = ${row[channelKeys[i - 1]!]}`,
                },
              ];
            }
          }
        }

        // Counter.
        const counterName = row.counter_id as string;
        let counter = counterCache.get(counterName);
        if (counter === undefined) {
          counter = counterGet.get(counterName) as number | undefined;
          if (counter === undefined) counter = Number(counterAdd.run(counterName).lastInsertRowid);
          counterCache.set(counterName, counter);
        }

        // Flags from the row itself.
        let flags = 0;
        const status = row.status as string[] | undefined;
        if (status) {
          for (const st of status) {
            if (st === 'flow') flags |= SAMPLE_FLAGS.statusFlow | SAMPLE_FLAGS.fault;
            else if (st === 'laser') flags |= SAMPLE_FLAGS.statusLaser | SAMPLE_FLAGS.fault;
            else if (st === 'overload') flags |= SAMPLE_FLAGS.statusOverload | SAMPLE_FLAGS.lowerBound;
          }
        }
        if (ratedMaxPerM3 !== null) {
          const smallest = smallestIsAll ? counts[0]! : total;
          if (smallest / volumeM3 >= QUALITY.saturationFraction * ratedMaxPerM3) {
            flags |= SAMPLE_FLAGS.saturation | SAMPLE_FLAGS.lowerBound;
          }
        }
        if (allSame && total > 0 && QUALITY.sentinels.includes(counts[0]!)) flags |= SAMPLE_FLAGS.sentinel;
        const flowLMin = (volumeM3 * 1000) / (durationMs / 60_000);
        if (flowLMin < QUALITY.flowMinLMin || flowLMin > QUALITY.flowMaxLMin) {
          flags |= SAMPLE_FLAGS.unitSuspect;
        }

        // Flags from the series (read only until the row is known to be stored).
        const s = seriesOf(loc, counter);
        const dt = start - s.lastStart;
        if (Number.isFinite(dt) && dt < 0) flags |= SAMPLE_FLAGS.timeBackwards;
        if (s.typical !== null && dt > QUALITY.gapFactor * s.typical) flags |= SAMPLE_FLAGS.gapBefore;
        const zero = total === 0;
        if (zero && s.zero?.flagged) flags |= SAMPLE_FLAGS.zeroRun;
        const repeatable = !zero && total >= QUALITY.repeatMinTotal;
        const repeating = repeatable && s.repeat !== null && sameCounts(s.repeat.counts, counts);
        if (repeating && s.repeat!.n + 1 >= QUALITY.repeatRun) flags |= SAMPLE_FLAGS.sentinel;

        const roomCode = row.room_state
          ? ROOM_STATE_CODE[row.room_state as (typeof ROOM_STATES)[number]]
          : defaultRoom;
        let before = latestBefore.get(loc);
        if (before === undefined) {
          before = (storedMax.get(loc) as number | null) ?? Number.NEGATIVE_INFINITY;
          latestBefore.set(loc, before);
        }
        if (insertMany && start > s.lastStart && start > before) {
          // A new key: (location, counter) later than any row of this file or stored before.
          pending.push(
            loc,
            start,
            counter,
            durationMs,
            volumeM3,
            setId,
            Buffer.from(countsBuf),
            flags,
            roomCode,
            importId,
            line,
          );
          if (++pendingRows === batchRows) flushPending();
        } else {
          flushPending();
          const res = insert.run(
            loc,
            start,
            counter,
            durationMs,
            volumeM3,
            setId,
            countsBuf,
            flags,
            roomCode,
            importId,
            line,
          );
          if (res.changes === 0) {
            const prior = existing.get(loc, start, counter, durationMs) as
              | { import_id: number; counts: Buffer; channel_set: number }
              | undefined;
            if (prior && prior.import_id === importId) tally.dupWithinFile++;
            if (prior && prior.channel_set === setId && Buffer.compare(prior.counts, countsBuf) === 0)
              tally.dupSame++;
            else tally.dupConflict++;
            return 'duplicate';
          }
        }

        // Stored: the hourly aggregates, the series state and tallies.
        if (hourly) {
          if (differential) {
            let acc = 0;
            for (let i = k - 1; i >= 0; i--) {
              acc += counts[i]!;
              ge[i] = acc;
            }
            hourly.add(loc, sizesNm, start, durationMs, volumeM3, ge, flags, roomCode);
          } else hourly.add(loc, sizesNm, start, durationMs, volumeM3, counts, flags, roomCode);
        } else {
          const span = touched.get(loc);
          if (!span) touched.set(loc, { from: start, to: start });
          else {
            if (start < span.from) span.from = start;
            if (start > span.to) span.to = start;
          }
        }
        if (flags & SAMPLE_FLAGS.fault) tally.fault++;
        if (flags & SAMPLE_FLAGS.statusOverload) tally.overload++;
        if (flags & SAMPLE_FLAGS.saturation) tally.saturation++;
        if (flags & SAMPLE_FLAGS.unitSuspect) {
          tally.unitSuspect++;
          if (!unitSuspectExample)
            unitSuspectExample = `line ${line}: ${(volumeM3 * 1000).toPrecision(4)} L in ${durationMs / 1000} s is ${flowLMin.toPrecision(3)} L/min`;
        }
        if (dt < 0) s.backwards++;
        else if (Number.isFinite(dt)) {
          if (s.typical === null) {
            s.warm.push({ dt, start });
            if (s.warm.length >= QUALITY.gapWarmup) settleWarmup(s, loc, counter);
          } else if (flags & SAMPLE_FLAGS.gapBefore) {
            s.gaps++;
            s.longestGapMs = Math.max(s.longestGapMs, dt);
          }
        }
        if (start > s.lastStart) s.lastStart = start;
        // Zero runs: flag the run's earlier rows once it has sampled enough air.
        if (zero) {
          if (!s.zero) s.zero = { from: start, to: start, volume: 0, n: 0, flagged: false };
          s.zero.to = start;
          s.zero.volume += volumeM3;
          s.zero.n++;
          if (!s.zero.flagged && s.zero.volume >= QUALITY.zeroRunMinVolumeM3) {
            s.zero.flagged = true;
            flushPending();
            orFlags.run(SAMPLE_FLAGS.zeroRun, loc, counter, s.zero.from, start, importId);
            hourly?.changed(loc, s.zero.from, start);
          }
        } else if (s.zero) closeZeroRun(s);
        // Repeated identical rows.
        if (!repeatable) s.repeat = null;
        else if (repeating) {
          const r = s.repeat!;
          r.n++;
          r.to = start;
          if (r.n === QUALITY.repeatRun) {
            flushPending();
            orFlags.run(SAMPLE_FLAGS.sentinel, loc, counter, r.from, start, importId);
            hourly?.changed(loc, r.from, start);
            tally.sentinel += r.n;
          } else if (r.n > QUALITY.repeatRun) tally.sentinel++;
        } else {
          if (s.repeat) {
            s.repeat.counts.set(counts);
            s.repeat.from = start;
            s.repeat.to = start;
            s.repeat.n = 1;
          } else s.repeat = { counts: Float64Array.from(counts), from: start, to: start, n: 1 };
          if (flags & SAMPLE_FLAGS.sentinel) tally.sentinel++;
        }
        return 'stored';
      },
      finish() {
        flushPending();
        const flags: ImportFlag[] = [];
        let gaps = 0;
        let longest = 0;
        let backwards = 0;
        for (const s of series.values()) {
          const { loc, counter } = s;
          if (s.typical === null) settleWarmup(s, loc, counter);
          closeZeroRun(s);
          gaps += s.gaps;
          longest = Math.max(longest, s.longestGapMs);
          backwards += s.backwards;
        }
        // The hourly aggregates of every hour this file stored a sample in, after the last flag
        // update above, in the file's transaction (a rejected file rolls them back with the samples).
        if (hourly) hourly.finish();
        else for (const [loc, span] of touched) refreshCounterHourly(db, loc, span.from, span.to);
        const add = (code: string, count: number, detail: string) => {
          if (count > 0) flags.push({ code, count, detail });
        };
        add(
          'fault',
          tally.fault,
          'samples with a flow or laser fault reported by the counter (not used for dose)',
        );
        add(
          'overload',
          tally.overload,
          'samples with an overload reported by the counter (counts are a lower bound)',
        );
        add(
          'saturation',
          tally.saturation,
          `samples at ≥ ${QUALITY.saturationFraction * 100} % of the rated maximum (counts are a lower bound)`,
        );
        add(
          'sentinel',
          tally.sentinel,
          `samples with a sentinel value in every channel or ≥ ${QUALITY.repeatRun} identical rows in a row (not used)`,
        );
        add(
          'zero-run',
          tally.zeroSamples,
          `${tally.zeroRuns} ${FLAG_TEXT.zero}(s) over ≥ ${QUALITY.zeroRunMinVolumeM3 * 1000} L of air (zeros kept as counts; check inlet and flow): ${zeroRunDetails.join('; ')}`,
        );
        add(
          'gap',
          gaps,
          `${FLAG_TEXT.gap}s longer than ${QUALITY.gapFactor} × the typical interval; longest ${(longest / 60_000).toFixed(1)} min`,
        );
        add(
          'time-backwards',
          backwards,
          'samples starting before the previous sample of their counter and location',
        );
        add(
          'unit-suspect',
          tally.unitSuspect,
          `implied flow outside ${QUALITY.flowMinLMin}–${QUALITY.flowMaxLMin} L/min: check the volume and duration units (${unitSuspectExample})`,
        );
        const dups = tally.dupSame + tally.dupConflict;
        add(
          'duplicate',
          dups,
          `${dups} samples repeat (counter, location, start, duration) — ${tally.dupWithinFile} within this file, ${dups - tally.dupWithinFile} already stored; the first copy was kept${tally.dupConflict ? `; ${tally.dupConflict} with different counts` : ''}`,
        );
        if (ratedMaxPerM3 === null) {
          return { flags, notes: ['no # rated_max declared: the saturation check was not run'] };
        }
        return { flags };
      },
    };
  },
};
