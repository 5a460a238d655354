/**
 * An area's whole audit over a period — classification, levels in force, excursions grouped into
 * events with each event's cost, control charts — from the database (through loader.ts and cost-loader.ts). The CLI's
 * `voidcast audit` and the report page read this one object.
 */
import type { Db } from '../../store/db.ts';
import { latestAcks } from '../../store/excursion-acks.ts';
import { pageClockMs } from '../../store/settings.ts';
import { keptResult } from '../cache.ts';
import { type ChartBaseline, type ChartInputPoint, controlChart } from './charts.ts';
import { checkPeriod } from './common.ts';
import { eventCostInDb } from './cost-loader.ts';
import { groupEvents } from './events.ts';
import { type ChannelSeries, DEFAULT_RULES, findExcursions } from './excursions.ts';
import { classifyAreaFromDb, loadAreaSeries, loadHourly } from './loader.ts';
import { seriesFromRows } from './series.ts';
import type {
  AreaAudit,
  AuditPeriod,
  ControlChart,
  ExcursionRules,
  LevelRecord,
  OccupancySelection,
} from './types.ts';

export interface AuditOptions {
  period: AuditPeriod;
  occupancy?: OccupancySelection;
  edition?: 2015 | 1999;
  classN?: number | null;
  sizesNm?: readonly number[] | null;
  rules?: ExcursionRules;
  /** Compute each event's cost (two assessments per exposed pair; cached). Default true. */
  costs?: boolean;
  /** Channels to chart, whole nm (default: every channel). */
  chartSizesNm?: readonly number[];
  /** Assessment time of the costs (default: the installation clock, else now floored to the minute). */
  asOfMs?: number;
  /**
   * The baseline window of the control charts' limits where a location and channel has no derived
   * levels with a window of their own (else the charted period itself, said on the chart).
   */
  chartBaseline?: AuditPeriod | null;
}

const toPoints = (hours: ChannelSeries['hours']): ChartInputPoint[] =>
  hours.map((h) => ({
    startMs: h.hourMs,
    count: h.countSum,
    volumeM3: h.volumeM3,
    excluded: h.nUsable === 0,
  }));

/** Where a chart's limits come from, per location and channel: its baseline, or null (the period itself). */
export type BaselineOf = (locationId: string, diameterNm: number) => ChartBaseline | null;

/** Control charts of every location and channel of the series (hours without usable samples excluded). */
export function chartsOf(
  series: readonly ChannelSeries[],
  sizesNm?: readonly number[],
  baselineOf: BaselineOf = () => null,
): ControlChart[] {
  return series
    .filter((s) => !sizesNm || sizesNm.includes(s.diameterNm))
    .map((s) =>
      controlChart(
        s.locationId,
        s.diameterNm / 1e9,
        toPoints(s.hours),
        baselineOf(s.locationId, s.diameterNm),
      ),
    )
    .sort((a, b) => a.locationId.localeCompare(b.locationId) || a.diameterM - b.diameterM);
}

/**
 * The Phase I baselines of an area's charts from the database: per location and channel, the window
 * its levels in force were derived from (levels with a baseline window), else `chosen`, else none.
 * The baseline's hours are read in the audit's occupancy state.
 */
export function chartBaselinesFromDb(
  db: Db,
  levels: readonly LevelRecord[],
  chosen: AuditPeriod | null,
  occupancy: OccupancySelection,
  locationIds: readonly string[],
): BaselineOf {
  const seriesByWindow = new Map<string, Map<string, ChannelSeries>>();
  const seriesIn = (w: AuditPeriod, locs: readonly string[]) => {
    const key = `${w.fromMs}|${w.toMs}|${locs.join(',')}`;
    let m = seriesByWindow.get(key);
    if (!m) {
      m = new Map(
        seriesFromRows(loadHourly(db, locs, w, occupancy)).map((x) => [`${x.locationId}|${x.diameterNm}`, x]),
      );
      seriesByWindow.set(key, m);
    }
    return m;
  };
  const own = (loc: string, nm: number) =>
    levels.find(
      (l) =>
        l.locationId === loc &&
        Math.round(l.diameterM * 1e9) === nm &&
        l.window !== null &&
        l.method !== 'typed',
    ) ?? null;
  return (loc, nm) => {
    const lv = own(loc, nm);
    if (lv?.window) {
      const s = seriesIn(lv.window, [loc]).get(`${loc}|${nm}`);
      return {
        points: toPoints(s?.hours ?? []),
        source: 'levels',
        window: lv.window,
        words: `the baseline window of the levels “${lv.name}” v${lv.version}`,
      };
    }
    if (chosen) {
      const s = seriesIn(chosen, locationIds).get(`${loc}|${nm}`);
      return {
        points: toPoints(s?.hours ?? []),
        source: 'chosen',
        window: chosen,
        words: 'the chosen baseline window',
      };
    }
    return null;
  };
}

/** The area's audit over the period. */
export function auditAreaFromDb(db: Db, areaId: string, opts: AuditOptions): AreaAudit {
  const t0 = performance.now();
  const period = checkPeriod(opts.period);
  const occupancy = opts.occupancy ?? 'operational';
  const classification = classifyAreaFromDb(db, areaId, {
    period,
    occupancy,
    edition: opts.edition,
    classN: opts.classN,
    sizesNm: opts.sizesNm,
  });
  const { levels, series } = loadAreaSeries(db, areaId, period, occupancy);
  const found = findExcursions({ areaId, series, levels, rules: opts.rules ?? DEFAULT_RULES, period });
  const acks = latestAcks(
    db,
    found.map((e) => e.id),
  );
  const excursions = found.map((e) => ({ ...e, acknowledgement: acks.get(e.id) ?? null }));
  const events = groupEvents(excursions);
  const costs =
    opts.costs === false ? [] : events.map((ev) => eventCostInDb(db, ev, { asOfMs: opts.asOfMs }));
  const chosen = opts.chartBaseline ? checkPeriod(opts.chartBaseline) : null;
  const charts = chartsOf(
    series,
    opts.chartSizesNm,
    chartBaselinesFromDb(
      db,
      levels,
      chosen,
      occupancy,
      classification.locations.map((l) => l.locationId),
    ),
  );
  return {
    areaId,
    period,
    occupancy,
    classification,
    levels,
    excursions,
    events,
    costs,
    charts,
    elapsedMs: performance.now() - t0,
  };
}

/**
 * The area's audit as `auditAreaFromDb` gives it, kept until the data change (src/engine/cache.ts:
 * any committed write — an import, a level derived, an acknowledgement — starts a new data
 * generation and the next caller computes afresh). Keyed by every option and by the costs'
 * assessment time resolved as auditAreaFromDb resolves it (the installation clock, else now floored
 * to the minute), so that the pages of one minute share one computation. The result must not be
 * mutated by its callers.
 */
export function keptAreaAudit(db: Db, areaId: string, opts: AuditOptions): AreaAudit {
  const asOfMs = opts.asOfMs ?? pageClockMs(db);
  const resolved: AuditOptions = { ...opts, asOfMs };
  const key = `area-audit|${areaId}|${JSON.stringify(resolved)}`;
  return keptResult(db, key, () => auditAreaFromDb(db, areaId, resolved));
}
