/**
 * Excursions of an area's air over a period, by configurable rules, on the hourly aggregates.
 * Pure over its inputs.
 *
 * Points are UTC hours: an hour's mean is Σ counts / Σ volume of its usable samples (fault and
 * sentinel samples left out), its peak the largest single usable sample. An hour without usable
 * samples is no point (never "below the level"). Rules (names ours):
 *
 *   action-point  every hour whose mean is above the action level; consecutive hours form one excursion
 *   alert-run     m of n consecutive hours above the alert level: the hours from the first above-alert
 *                 hour of a window that holds m of them to the window's last above-alert hour
 *   area-alert    hours in which at least `locations` locations of the area have some channel above
 *                 its alert level within the window (the window's hours ending at that hour)
 *   ratio-shift   |ln ratio − median| > k·σ for `points` consecutive hours, ratio = (count ≥ large + ½) /
 *                 (count ≥ small + ½), median and σ = 1.4826·MAD of the period's hours with at least
 *                 `minCount` counts ≥ small (a new source has another spectrum)
 *   data-quality  hours in which at least `fraction` of the samples are flagged as an instrument fault,
 *                 a sentinel or part of a long all-zero run: an instrument finding
 *
 * An excursion spans whole hours: start = the first hour's start, end = the last hour's end. Above-level
 * rules are evaluated per channel; spans of one rule and location that overlap are merged and list
 * every channel. **Nature** (Choice): `instrument` when the data-quality rule found it or at least half
 * of its samples are so flagged; `air` when under a tenth are; `unclear` in between.
 */
import { nmToM, sizeWords } from './common.ts';
import { AuditInputError } from './errors.ts';
import type { ChannelSeries, HourPoint } from './series.ts';
import type {
  DataQualityBeside,
  Excursion,
  ExcursionNature,
  ExcursionRuleId,
  ExcursionRules,
  LevelRecord,
} from './types.ts';

export const HOUR_MS = 3_600_000;

export { type ChannelSeries, type HourPoint, seriesFromRows } from './series.ts';

export const DEFAULT_RULES: ExcursionRules = {
  actionPoint: true,
  alertRun: { m: 2, n: 3 },
  areaAlert: { locations: 2, windowMs: HOUR_MS },
  ratioShift: { smallM: 1e-7, largeM: 5e-7, k: 4, points: 2, minCount: 20 },
  dataQuality: { fraction: 0.5 },
};

export interface ExcursionInput {
  areaId: string;
  series: readonly ChannelSeries[];
  /** Levels in force (loadCurrentLevels). */
  levels: readonly LevelRecord[];
  rules: ExcursionRules;
  period: { fromMs: number; toMs: number };
}

/** Checks rule settings; a bad one is refused with the setting's name. */
export function checkRules(r: ExcursionRules): ExcursionRules {
  if (
    r.alertRun &&
    !(
      Number.isInteger(r.alertRun.m) &&
      Number.isInteger(r.alertRun.n) &&
      r.alertRun.m >= 1 &&
      r.alertRun.m <= r.alertRun.n &&
      r.alertRun.n <= 1000
    )
  )
    throw new AuditInputError('alert run: m and n must be whole numbers with 1 ≤ m ≤ n ≤ 1000');
  if (
    r.areaAlert &&
    !(
      Number.isInteger(r.areaAlert.locations) &&
      r.areaAlert.locations >= 2 &&
      r.areaAlert.windowMs >= HOUR_MS
    )
  )
    throw new AuditInputError('area alert: at least 2 locations and a window of at least 1 hour');
  if (r.ratioShift) {
    const q = r.ratioShift;
    if (
      !(
        q.smallM > 0 &&
        q.largeM > q.smallM &&
        q.k > 0 &&
        Number.isInteger(q.points) &&
        q.points >= 1 &&
        q.minCount >= 0
      )
    )
      throw new AuditInputError('ratio shift: sizes small < large, k > 0, points a whole number ≥ 1');
  }
  if (r.dataQuality && !(r.dataQuality.fraction > 0 && r.dataQuality.fraction <= 1))
    throw new AuditInputError('data quality: the flagged fraction must be in (0, 1]');
  return r;
}

interface Grid {
  from: number;
  size: number;
}

function gridOf(period: { fromMs: number; toMs: number }): Grid {
  const from = Math.floor(period.fromMs / HOUR_MS) * HOUR_MS;
  return { from, size: Math.max(0, Math.ceil((period.toMs - from) / HOUR_MS)) };
}

/** Per grid hour: the point, or null. */
function onGrid(s: ChannelSeries, g: Grid): (HourPoint | null)[] {
  const out: (HourPoint | null)[] = new Array(g.size).fill(null);
  for (const h of s.hours) {
    const i = Math.round((h.hourMs - g.from) / HOUR_MS);
    if (i >= 0 && i < g.size) out[i] = h;
  }
  return out;
}

const meanOf = (h: HourPoint | null): number | null => (h && h.volumeM3 > 0 ? h.countSum / h.volumeM3 : null);

/** Runs of true as [start, end) index pairs. */
function runs(flags: readonly boolean[]): [number, number][] {
  const out: [number, number][] = [];
  let start = -1;
  flags.forEach((f, i) => {
    if (f && start < 0) start = i;
    if (!f && start >= 0) {
      out.push([start, i]);
      start = -1;
    }
  });
  if (start >= 0) out.push([start, flags.length]);
  return out;
}

function median(xs: number[]): number {
  const a = [...xs].sort((p, q) => p - q);
  const m = a.length >> 1;
  return a.length % 2 ? a[m]! : (a[m - 1]! + a[m]!) / 2;
}

interface Span {
  rule: ExcursionRuleId;
  locationIds: string[];
  diametersNm: number[];
  start: number;
  end: number;
  level: number | null;
  words: string;
}

export function findExcursions(input: ExcursionInput): Excursion[] {
  const rules = checkRules(input.rules);
  const g = gridOf(input.period);
  const byLoc = new Map<string, ChannelSeries[]>();
  for (const s of input.series) {
    const list = byLoc.get(s.locationId) ?? [];
    list.push(s);
    byLoc.set(s.locationId, list);
  }
  for (const list of byLoc.values()) list.sort((a, b) => a.diameterNm - b.diameterNm);
  const levelOf = (loc: string, nm: number) =>
    input.levels.find((l) => l.locationId === loc && Math.round(l.diameterM * 1e9) === nm) ?? null;
  const grids = new Map<string, (HourPoint | null)[]>();
  const gridFor = (s: ChannelSeries) => {
    const key = `${s.locationId}|${s.diameterNm}`;
    let v = grids.get(key);
    if (!v) {
      v = onGrid(s, g);
      grids.set(key, v);
    }
    return v;
  };
  const spans: Span[] = [];
  const aboveAlertByLoc = new Map<string, boolean[]>();

  for (const [loc, list] of byLoc) {
    const locAbove: boolean[] = new Array(g.size).fill(false);
    for (const s of list) {
      const lv = levelOf(loc, s.diameterNm);
      if (!lv) continue;
      const pts = gridFor(s);
      const means = pts.map(meanOf);
      const size = sizeWords(nmToM(s.diameterNm));
      if (rules.actionPoint && lv.actionPerM3 !== null) {
        const action = lv.actionPerM3;
        for (const [a, b] of runs(means.map((m) => m !== null && m > action)))
          spans.push({
            rule: 'action-point',
            locationIds: [loc],
            diametersNm: [s.diameterNm],
            start: a,
            end: b,
            level: action,
            words: `hourly mean above the action level ${fmt(action)} per m³ at ≥ ${size} for ${b - a} h`,
          });
      }
      if (lv.alertPerM3 !== null) {
        const alert = lv.alertPerM3;
        const above = means.map((m) => m !== null && m > alert);
        above.forEach((v, i) => {
          if (v) locAbove[i] = true;
        });
        if (rules.alertRun) {
          const { m, n } = rules.alertRun;
          const marked: boolean[] = new Array(g.size).fill(false);
          let inWindow = 0;
          for (let i = 0; i < g.size; i++) {
            if (above[i]) inWindow++;
            if (i - n >= 0 && above[i - n]) inWindow--;
            if (inWindow >= m && above[i]) {
              for (let j = Math.max(0, i - n + 1); j <= i; j++)
                if (above[j]) {
                  for (let q = j; q <= i; q++) marked[q] = true;
                  break;
                }
            }
          }
          for (const [a, b] of runs(marked))
            spans.push({
              rule: 'alert-run',
              locationIds: [loc],
              diametersNm: [s.diameterNm],
              start: a,
              end: b,
              level: alert,
              words: `${m} of ${n} consecutive hourly means above the alert level ${fmt(alert)} per m³ at ≥ ${size}`,
            });
        }
      }
    }
    aboveAlertByLoc.set(loc, locAbove);

    // Ratio shift between two channels of this location.
    if (rules.ratioShift) {
      const q = rules.ratioShift;
      const small = list.find((s) => s.diameterNm === Math.round(q.smallM * 1e9));
      const large = list.find((s) => s.diameterNm === Math.round(q.largeM * 1e9));
      if (small && large) {
        const ps = gridFor(small);
        const pl = gridFor(large);
        const lr: (number | null)[] = ps.map((a, i) => {
          const b = pl[i];
          return a && b && a.volumeM3 > 0 && a.countSum >= q.minCount
            ? Math.log((b.countSum + 0.5) / (a.countSum + 0.5))
            : null;
        });
        const vals = lr.filter((x): x is number => x !== null);
        if (vals.length >= 24) {
          const med = median(vals);
          const sigma = 1.4826 * median(vals.map((x) => Math.abs(x - med)));
          if (sigma > 0) {
            const shifted = lr.map((x) => x !== null && Math.abs(x - med) > q.k * sigma);
            for (const [a, b] of runs(shifted))
              if (b - a >= q.points)
                spans.push({
                  rule: 'ratio-shift',
                  locationIds: [loc],
                  diametersNm: [small.diameterNm, large.diameterNm],
                  start: a,
                  end: b,
                  level: null,
                  words: `the ratio of counts ≥ ${sizeWords(q.largeM)} to ≥ ${sizeWords(q.smallM)} left its usual value (median ${Math.exp(med).toPrecision(3)}) by more than ${q.k} σ for ${b - a} h`,
                });
          }
        }
      }
    }

    // Data quality on the smallest channel (flags belong to samples, the same in every channel).
    if (rules.dataQuality && list.length > 0) {
      const pts = gridFor(list[0]!);
      const flagged = pts.map((h) =>
        h && h.n > 0
          ? Math.min(1, (h.nFault + h.nSentinel + h.nZeroRun) / h.n) >= rules.dataQuality!.fraction
          : false,
      );
      for (const [a, b] of runs(flagged))
        spans.push({
          rule: 'data-quality',
          locationIds: [loc],
          diametersNm: [list[0]!.diameterNm],
          start: a,
          end: b,
          level: null,
          words: `${b - a} h in which at least ${Math.round(rules.dataQuality.fraction * 100)} % of the samples are flagged (instrument fault, sentinel or long all-zero run)`,
        });
    }
  }

  // Several locations above alert together.
  if (rules.areaAlert) {
    const w = Math.ceil(rules.areaAlert.windowMs / HOUR_MS);
    const k = rules.areaAlert.locations;
    const trig: boolean[] = new Array(g.size).fill(false);
    const involved: Set<string>[] = Array.from({ length: g.size }, () => new Set());
    for (let i = 0; i < g.size; i++) {
      for (const [loc, above] of aboveAlertByLoc)
        for (let j = Math.max(0, i - w + 1); j <= i; j++) if (above[j]) involved[i]!.add(loc);
      trig[i] = involved[i]!.size >= k;
    }
    for (const [a, b] of runs(trig)) {
      const locs = new Set<string>();
      for (let i = a; i < b; i++) for (const l of involved[i]!) locs.add(l);
      const ids = [...locs].sort();
      spans.push({
        rule: 'area-alert',
        locationIds: ids,
        diametersNm: [],
        start: a,
        end: b,
        level: null,
        words: `${ids.length} locations of ${input.areaId} above their alert levels within ${w} h: ${ids.join(', ')}`,
      });
    }
  }

  // Merge overlapping spans of one rule and location across channels.
  const merged: Span[] = [];
  const sorted = [...spans].sort(
    (x, y) =>
      x.rule.localeCompare(y.rule) ||
      x.locationIds.join().localeCompare(y.locationIds.join()) ||
      x.start - y.start,
  );
  for (const s of sorted) {
    const last = merged.at(-1);
    if (
      last &&
      last.rule === s.rule &&
      last.rule !== 'area-alert' &&
      last.locationIds.join() === s.locationIds.join() &&
      s.start < last.end
    ) {
      last.end = Math.max(last.end, s.end);
      for (const d of s.diametersNm) if (!last.diametersNm.includes(d)) last.diametersNm.push(d);
      last.diametersNm.sort((a, b) => a - b);
    } else merged.push({ ...s, diametersNm: [...s.diametersNm] });
  }

  return merged
    .map((s) => toExcursion(s, input.areaId, byLoc, gridFor, g, spans))
    .sort(
      (a, b) =>
        a.startMs - b.startMs || a.rule.localeCompare(b.rule) || a.locationId.localeCompare(b.locationId),
    );
}

function fmt(v: number): string {
  return v >= 100 ? v.toFixed(0) : v.toPrecision(3);
}

function toExcursion(
  s: Span,
  areaId: string,
  byLoc: Map<string, ChannelSeries[]>,
  gridFor: (s: ChannelSeries) => (HourPoint | null)[],
  g: Grid,
  all: Span[],
): Excursion {
  const loc0 = s.locationIds[0] ?? areaId;
  const quality: DataQualityBeside = {
    samples: 0,
    fault: 0,
    lowerBound: 0,
    sentinel: 0,
    zeroRun: 0,
    gapBefore: 0,
  };
  let peak = -1;
  let peakIdx = s.start;
  const channels = s.diametersNm.length > 0 ? s.diametersNm : [];
  let baseline: number | null = null;
  for (const loc of s.locationIds) {
    const list = byLoc.get(loc) ?? [];
    if (list.length === 0) continue;
    const q = gridFor(list[0]!);
    for (let i = s.start; i < s.end; i++) {
      const h = q[i];
      if (!h) continue;
      quality.samples += h.n;
      quality.fault += h.nFault;
      quality.lowerBound += h.nLowerBound;
      quality.sentinel += h.nSentinel;
      quality.zeroRun += h.nZeroRun;
      quality.gapBefore += h.nGap;
    }
    const peakChannel = list.find((x) => x.diameterNm === (channels[0] ?? list[0]!.diameterNm)) ?? list[0]!;
    const pts = gridFor(peakChannel);
    for (let i = s.start; i < s.end; i++) {
      const v = pts[i]?.maxPerM3 ?? null;
      if (v !== null && v > peak) {
        peak = v;
        peakIdx = i;
      }
    }
    if (loc === loc0) {
      const means = pts.map(meanOf).filter((x): x is number => x !== null);
      baseline = means.length ? median(means) : null;
    }
  }
  const flagged =
    quality.samples > 0
      ? Math.min(1, (quality.fault + quality.sentinel + quality.zeroRun) / quality.samples)
      : 0;
  let nature: ExcursionNature;
  let natureWords: string;
  const pct = `${Math.round(flagged * 100)} %`;
  if (s.rule === 'data-quality' || flagged >= 0.5) {
    nature = 'instrument';
    natureWords = `${pct} of the ${quality.samples} samples are flagged (fault ${quality.fault}, sentinel ${quality.sentinel}, all-zero run ${quality.zeroRun}): the counter, not the air — check its inlet and flow`;
  } else if (flagged < 0.1) {
    nature = 'air';
    const ratio = all.some(
      (x) => x.rule === 'ratio-shift' && x.locationIds.includes(loc0) && x.start < s.end && s.start < x.end,
    );
    natureWords = `${pct} of the ${quality.samples} samples flagged${ratio && s.rule !== 'ratio-shift' ? '; the size spectrum changed at the same time (a source of another spectrum)' : ''}: the air`;
  } else {
    nature = 'unclear';
    natureWords = `${pct} of the ${quality.samples} samples flagged: check the counter before reading it as the air`;
  }
  const startMs = g.from + s.start * HOUR_MS;
  const nmKey = channels[0] ?? 0;
  return {
    id: `${s.rule}:${s.rule === 'area-alert' ? areaId : loc0}:${nmKey}:${startMs}`,
    rule: s.rule,
    areaId,
    locationId: loc0,
    locationIds: s.locationIds,
    startMs,
    endMs: g.from + s.end * HOUR_MS,
    peakMs: g.from + peakIdx * HOUR_MS,
    peakPerM3: Math.max(0, peak),
    channelsM: channels.map(nmToM),
    levelPerM3: s.level,
    baselinePerM3: baseline,
    nature,
    natureWords,
    quality,
    words: s.words,
    acknowledgement: null,
  };
}
