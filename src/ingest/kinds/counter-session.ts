/**
 * The rows of a counter-samples file (src/ingest/kinds/counter-samples.ts): each row normalised to SI,
 * checked on its own (volume, duration, cumulative counts not rising with size) and against its
 * series (the samples of one counter at one location, in file order: gaps, time running backwards,
 * all-channel zero runs, repeated identical rows), written through the store's CounterSampleWriter
 * with its per-sample flags, and added to the hourly aggregates; at the end, the flag summary.
 */
import { HourlyAccumulator, refreshCounterHourly } from '../../store/counter-hourly.ts';
import { CounterSampleWriter } from '../../store/counter-sample-writer.ts';
import type { FileContext, ImportFlag, KindSession } from '../types.ts';
import { toSi, type UnitDef } from '../units.ts';
import {
  BATCH_MODE,
  HOURLY_MODE,
  QUALITY,
  ROOM_STATE_CODE,
  type ROOM_STATES,
  SAMPLE_FLAGS,
} from './counter-columns.ts';

/** What the header and metadata of a file decided (counter-samples.ts `begin`). */
export interface CounterPlan {
  /** Row id in counter_channel_sets of the file's channels. */
  setId: number;
  differential: boolean;
  /** Parsed-row keys and headers as written of the channels, in ascending order of size. */
  channelKeys: string[];
  channelWritten: string[];
  /** Lower size of each channel, whole nm (the hourly aggregates' key). */
  sizesNm: number[];
  /** The duration column ('end' for an end time) and its unit; the volume and flow columns. */
  durCol: string;
  durUnit: UnitDef | null;
  volCol: string | null;
  volUnit: UnitDef | null;
  flowCol: string | null;
  flowUnit: UnitDef | null;
  /** The unit of concentration counts (null for raw counts). */
  concUnit: UnitDef | null;
  ratedMaxPerM3: number | null;
  /** ROOM_STATE_CODE of rows without a room_state cell (0: not stated). */
  defaultRoom: number;
}

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

/** The session of one file: `row` per parsed row, `finish` at the end (inside the transaction). */
export function counterSession(ctx: FileContext, plan: CounterPlan): KindSession {
  const { db, importId } = ctx;
  const {
    setId,
    differential,
    channelKeys,
    channelWritten,
    sizesNm,
    durCol,
    durUnit,
    volCol,
    volUnit,
    flowCol,
    flowUnit,
    concUnit,
    ratedMaxPerM3,
    defaultRoom,
  } = plan;
  const k = channelKeys.length;
  const smallestIsAll = !differential; // cumulative ≥ smallest holds everything counted
  const writer = new CounterSampleWriter(db, {
    importId,
    channelSet: setId,
    channels: k,
    batchRows: BATCH_MODE.rows,
  });
  const counts = new Float64Array(k);
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
        writer.orFlagsAt(SAMPLE_FLAGS.gapBefore, loc, counter, w.start);
        hourly?.changed(loc, w.start, w.start);
      }
    }
    s.warm = [];
  };

  return {
    row(row, line) {
      const locName = row.location_id as string;
      const loc = writer.locationId(locName);
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
      const counter = writer.counterId(counterName);

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
      const before = writer.latestStoredBefore(loc);
      if (writer.batching && start > s.lastStart && start > before) {
        // A new key: (location, counter) later than any row of this file or stored before.
        writer.addNew(counts, loc, start, counter, durationMs, volumeM3, flags, roomCode, line);
      } else if (
        !writer.addChecked(counts, loc, start, counter, durationMs, volumeM3, flags, roomCode, line)
      ) {
        const prior = writer.prior(loc, start, counter, durationMs);
        if (prior && prior.import_id === importId) tally.dupWithinFile++;
        if (prior && prior.channel_set === setId && Buffer.compare(prior.counts, writer.checkedCounts) === 0)
          tally.dupSame++;
        else tally.dupConflict++;
        return 'duplicate';
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
          writer.orFlags(SAMPLE_FLAGS.zeroRun, loc, counter, s.zero.from, start);
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
          writer.orFlags(SAMPLE_FLAGS.sentinel, loc, counter, r.from, start);
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
      writer.flush();
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
}
