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
 *
 * This file holds the kind and its file-level checks (header, units, metadata); the columns and
 * thresholds are in counter-columns.ts, the rows in counter-session.ts, the statements in
 * src/store/counter-sample-writer.ts.
 */
import { channelSetId } from '../../store/counter-sample-writer.ts';
import { CELL_FAIL, enumCell } from '../cells.ts';
import type { FileContext, ImportKind, KindIssue, KindSession } from '../types.ts';
import {
  CONCENTRATION_UNITS,
  DURATION_UNITS,
  FLOW_UNITS,
  findUnit,
  toSi,
  type UnitDef,
  VOLUME_UNITS,
} from '../units.ts';
import {
  CHANNEL_COLUMNS,
  type ChannelHeader,
  COUNTER_COLUMNS,
  COUNTER_METADATA,
  ROOM_STATE_CODE,
  ROOM_STATES,
} from './counter-columns.ts';
import { counterSession } from './counter-session.ts';

export {
  BATCH_MODE,
  CHANNEL_COLUMNS,
  type ChannelHeader,
  COUNTER_COLUMNS,
  COUNTER_METADATA,
  HOURLY_MODE,
  parseChannelHeader,
  QUALITY,
  ROOM_STATE_CODE,
  ROOM_STATES,
  SAMPLE_FLAGS,
  STATUS_VALUES,
} from './counter-columns.ts';
export type { CounterPlan } from './counter-session.ts';

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
  plainRows: true,
  // location and counter resolved by name (a location must exist), the channel set and the import
  // row written by this import: counter-session.ts and counter-sample-writer.ts.
  ownKeyChecks: true,
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
    // Channel set; the rows.
    const k = sorted.length;
    const mode = differential ? 'differential' : 'cumulative';
    const setId = channelSetId(ctx.db, mode, JSON.stringify(sorted.map((x) => [x.c.lowM, x.c.highM])), k);
    return counterSession(ctx, {
      setId,
      differential,
      channelKeys: sorted.map((x) => x.h.key),
      channelWritten: sorted.map((x) => x.h.written),
      sizesNm: sorted.map((x) => Math.round(x.c.lowM * 1e9)),
      durCol: durCol!,
      durUnit,
      volCol,
      volUnit,
      flowCol,
      flowUnit,
      concUnit,
      ratedMaxPerM3,
      defaultRoom,
    });
  },
};
