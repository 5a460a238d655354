/**
 * The counter-samples format (src/ingest/kinds/counter-samples.ts): its columns, channel headers,
 * metadata entries, per-sample flag bits and the thresholds of its data-quality checks.
 */
import { z } from 'zod';
import { CELL_FAIL, enumCell, enumListCell, idCell, numberCell, timeCell } from '../cells.ts';
import type { Cell, ColumnSpec, MetadataSpec, PatternColumnSpec } from '../types.ts';
import { parseSize } from '../units.ts';

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
 * row-by-row twin the tests compare against. 512 rows: measured on 10⁶ rows, the insert's CPU time
 * fell from 64 to 256 rows per statement and only a little beyond (src/store/counter-sample-writer.ts).
 */
export const BATCH_MODE = { rows: 512 };

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
