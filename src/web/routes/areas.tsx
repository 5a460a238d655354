/**
 * Areas: ISO 14644-1 status per location, the trend panel (htmx swap at /areas/trend), and the
 * excursion log. Thin: read (src/store/views-areas.ts), classify (src/model/iso14644.ts), render.
 * The status and the log read the hourly counter aggregates (migration 0023); raw samples are read
 * only for the trend and inside the hours whose peak passed an action level.
 */
import type { Context, Hono } from 'hono';
import {
  type AreaGroup,
  AreasPage,
  type ExcursionRow,
  type LocationStatus,
} from '../../../views/pages/areas.tsx';
import {
  sameSize,
  TREND_WINDOWS,
  TrendPanel,
  type TrendPanelProps,
  type TrendWindow,
} from '../../../views/partials/trend-panel.tsx';
import { bestClassAchieved, isoClassLimit, isoTable1Value, roundIsoLimit } from '../../model/iso14644.ts';
import {
  type CumulativeSample,
  hourlyMeans,
  hoursAbove,
  type LocationView,
  listLocationsWithAreas,
  locationChannels,
  readCumulativeSamples,
  sampleSpan,
  type WindowMeans,
  wafersExposedAt,
  windowMeans,
} from '../../store/views-areas.ts';
import type { AppContext } from '../context.ts';
import { BadParamError, positiveNumberValue, queryTrendWindow } from '../params.ts';
import { isFragmentRequest, renderFragment, renderPage } from '../render.ts';

/** Samples flagged as instrument fault (1) or sentinel values (4) are not used (src/engine/types.ts SAMPLE_FLAG). */
const UNUSABLE_FLAGS = 1 | 4;
/** The classification uses the last 30 days of each location's data. */
const CLASS_WINDOW_MS = 30 * 86_400_000;
const MAX_EXCURSIONS = 50;
/** Most samples the trend draws one by one (Choice); a longer window draws hourly means. */
const TREND_MAX_SAMPLES = 2000;
const ISO_MIN_M = 0.1e-6;
const ISO_MAX_M = 5e-6;

export function register(app: Hono, ctx: AppContext): void {
  app.get('/areas', (c) => {
    const locations = listLocationsWithAreas(ctx.db);
    const groups = new Map<string, AreaGroup>();
    const excursions: ExcursionRow[] = [];
    for (const loc of locations) {
      const span = sampleSpan(ctx.db, loc.locationId);
      const window =
        span.lastMs === null ? null : { fromMs: span.lastMs - CLASS_WINDOW_MS, toMs: span.lastMs + 1 };
      const means = window ? windowMeans(ctx.db, loc.locationId, window.fromMs, window.toMs) : null;
      const status = classifyLocation(loc, means, span.count, span.lastMs);
      const g = groups.get(loc.areaId) ?? { area: loc.areaName, locations: [] };
      g.locations.push(status);
      groups.set(loc.areaId, g);
      if (window) excursions.push(...findExcursions(ctx, loc, window));
    }
    excursions.sort((a, b) => b.startMs - a.startMs);
    // Without a choice, the trend opens on the location of the newest excursion.
    const trend = trendProps(ctx, c, locations, excursions[0]?.locationId);
    return renderPage(c, ctx, {
      title: 'Areas',
      active: '/areas',
      body: AreasPage({
        groups: [...groups.values()],
        classWindow:
          'the last 30 days of each location’s samples; instrument-fault and sentinel samples left out',
        trend,
        excursions,
        excursionsShown: MAX_EXCURSIONS,
      }),
    });
  });

  app.get('/areas/trend', (c) => {
    const locations = listLocationsWithAreas(ctx.db);
    const props = trendProps(ctx, c, locations);
    if (isFragmentRequest(c)) return renderFragment(c, TrendPanel(props));
    // Without script the form's action is /areas itself; this URL still answers with the page.
    const q = new URL(c.req.url).search;
    return c.redirect(`/areas${q}#trend-panel`, 303);
  });
}

function usable(s: CumulativeSample): boolean {
  return (s.flags & UNUSABLE_FLAGS) === 0;
}

/** Sizes every usable sample reports, ascending (m): the channels with as many usable samples as any. */
function commonSizes(m: WindowMeans): number[] {
  const most = Math.max(0, ...m.usable);
  return most === 0 ? [] : m.sizesM.filter((_, j) => m.usable[j] === most);
}

function valueAt(s: CumulativeSample, d: number): number | null {
  const j = s.sizesM.findIndex((x) => sameSize(x, d));
  return j < 0 ? null : (s.cumulativePerM3[j] ?? null);
}

/**
 * ISO 14644-1:2015 status of one location: the mean concentration at each considered size over
 * the window, the cleanest class those means meet (bestClassAchieved, steps of 0.1), and pass
 * when that class is at or below the target. Considered sizes: the channels in 0.1–5 µm that
 * every usable sample reports and, for a target class, where its Table 1 cell is applicable.
 */
export function classifyLocation(
  loc: LocationView,
  windowed: WindowMeans | null,
  count: number,
  lastMs: number | null,
): LocationStatus {
  const m: WindowMeans = windowed ?? { sizesM: [], usable: [], meanPerM3: [] };
  const base = {
    locationId: loc.locationId,
    parentId: loc.parentId,
    level: loc.level,
    name: loc.name,
    environment: loc.environment,
    targetClass: loc.isoClass,
    samples: count,
    lastSampleMs: lastMs,
  };
  const nUsable = Math.max(0, ...m.usable);
  let sizes = commonSizes(m).filter((d) => d >= ISO_MIN_M * (1 - 1e-9) && d <= ISO_MAX_M * (1 + 1e-9));
  if (loc.isoClass !== null) {
    const n = Math.round(loc.isoClass);
    sizes = sizes.filter((d) => {
      try {
        return isoTable1Value(n, d) !== null;
      } catch {
        return true; // not a Table 1 size: the formula applies (ISO 14644-1:2015 eq. (1))
      }
    });
  }
  if (nUsable === 0 || sizes.length === 0)
    return {
      ...base,
      achievedClass: null,
      pass: null,
      state: nUsable === 0 ? 'no data' : 'not classified',
      sizesM: sizes,
      note:
        count === 0
          ? 'no counter samples'
          : nUsable === 0
            ? 'no usable samples'
            : 'no channel in 0.1–5 µm applicable to the class',
    };
  const means = sizes.map((d) => m.meanPerM3[m.sizesM.findIndex((x) => sameSize(x, d))] ?? 0);
  const achieved = bestClassAchieved({ sizesM: sizes, locationMeansPerM3: [means] });
  return {
    ...base,
    achievedClass: achieved,
    pass: loc.isoClass === null ? null : achieved !== null && achieved <= loc.isoClass + 1e-9,
    state:
      loc.isoClass === null
        ? 'no target'
        : achieved !== null && achieved <= loc.isoClass + 1e-9
          ? 'pass'
          : 'fail',
    sizesM: sizes,
    note: loc.isoClass === null ? 'no target class' : achieved === null ? 'above ISO 9' : null,
  };
}

/**
 * Excursions: runs of consecutive usable samples above a level's action value at one location
 * (one event from the first such sample's start to the last one's end, with its peak), and the
 * wafers whose ledger puts them in that air during the event. The samples are read only in the
 * blocks of hours whose peak passed the action value (hoursAbove): no run can be elsewhere.
 */
function findExcursions(
  ctx: AppContext,
  loc: LocationView,
  window: { fromMs: number; toMs: number },
): ExcursionRow[] {
  const out: ExcursionRow[] = [];
  for (const lv of loc.levels) {
    if (lv.actionPerM3 === null) continue;
    const action = lv.actionPerM3;
    const blocks = hoursAbove(
      ctx.db,
      loc.locationId,
      Math.round(lv.diameterM * 1e9),
      window.fromMs,
      window.toMs,
      action,
    );
    let run: { startMs: number; endMs: number; peak: number; n: number } | null = null;
    const close = () => {
      if (!run) return;
      out.push({
        locationId: loc.locationId,
        locationName: loc.name,
        startMs: run.startMs,
        endMs: run.endMs,
        samples: run.n,
        diameterM: lv.diameterM,
        valuePerM3: run.peak,
        actionPerM3: action,
        wafers: wafersExposedAt(ctx.db, loc.locationId, run.startMs, run.endMs),
      });
      run = null;
    };
    for (const b of blocks) {
      const samples = readCumulativeSamples(ctx.db, loc.locationId, b.fromMs, b.toMs);
      for (const s of samples) {
        if (s.startMs < b.fromMs || !usable(s)) continue;
        const v = valueAt(s, lv.diameterM);
        if (v === null || v <= action) {
          close();
          continue;
        }
        if (run) {
          run.endMs = s.startMs + s.durationMs;
          run.peak = Math.max(run.peak, v);
          run.n++;
        } else run = { startMs: s.startMs, endMs: s.startMs + s.durationMs, peak: v, n: 1 };
      }
      // The hour after a block holds no sample above the value: a run ends with its block.
      close();
    }
  }
  return out;
}

function trendProps(
  ctx: AppContext,
  c: Context,
  locations: LocationView[],
  preferredId?: string,
): TrendPanelProps {
  const q = c.req.query();
  const window: TrendWindow = queryTrendWindow(c);
  const asked = q.location?.trim() ? locations.find((l) => l.locationId === q.location) : undefined;
  if (q.location?.trim() && !asked)
    throw new BadParamError('location', `names no location: there is no location "${q.location}"`, 404);
  const withData = locations.filter((l) => sampleSpan(ctx.db, l.locationId).count > 0);
  const chosen =
    asked ??
    locations.find((l) => l.locationId === preferredId) ??
    withData.find((l) => l.levels.some((x) => x.actionPerM3 !== null)) ??
    withData[0] ??
    locations[0] ??
    null;
  const list = locations.map((l) => ({ locationId: l.locationId, name: l.name, area: l.areaName }));
  const empty = {
    locations: list,
    locationId: chosen?.locationId ?? null,
    channels: [],
    channelM: null,
    window,
    fromMs: 0,
    toMs: 0,
    points: [],
    alertPerM3: null,
    actionPerM3: null,
    levelsAtM: null,
    classLimit: null,
  };
  if (!chosen) return { ...empty, problem: 'No locations yet: import a locations file and counter samples.' };
  const span = sampleSpan(ctx.db, chosen.locationId);
  if (span.lastMs === null || span.firstMs === null)
    return { ...empty, problem: `No counter samples for ${chosen.name} yet.` };
  const w = TREND_WINDOWS.find((x) => x.key === window)!;
  const toMs = span.lastMs + 1;
  const fromMs = Number.isFinite(w.ms) ? Math.max(span.firstMs, toMs - w.ms) : span.firstMs;
  const channels = locationChannels(ctx.db, chosen.locationId);
  const uniq = channels.filter((d, i) => i === 0 || !sameSize(d, channels[i - 1]!));
  const askedUm = positiveNumberValue('channel', q.channel, 1000) ?? Number.NaN;
  const level = chosen.levels.find((l) => l.actionPerM3 !== null) ?? chosen.levels[0] ?? null;
  const channelM =
    (Number.isFinite(askedUm) && askedUm > 0 ? uniq.find((d) => sameSize(d, askedUm * 1e-6)) : undefined) ??
    (level ? uniq.find((d) => sameSize(d, level.diameterM)) : undefined) ??
    uniq.find((d) => sameSize(d, 0.5e-6)) ??
    uniq[0] ??
    null;
  if (channelM === null)
    return { ...empty, channels: uniq, problem: `No channels in ${chosen.name}'s samples.` };
  // Each sample while the window holds at most TREND_MAX_SAMPLES of them; beyond, the hourly means of the
  // aggregates (a month of one-minute samples is more points than the chart has pixels).
  const hourly = hourlyMeans(ctx.db, chosen.locationId, Math.round(channelM * 1e9), fromMs - 3_599_999, toMs);
  const inWindow = hourly.reduce((a, h) => a + h.samples, 0);
  const byHour = inWindow > TREND_MAX_SAMPLES;
  const points = byHour
    ? hourly.map((h) => ({ tMs: h.tMs, value: h.meanPerM3 }))
    : readCumulativeSamples(ctx.db, chosen.locationId, fromMs, toMs).map((s) => ({
        tMs: s.startMs,
        value: usable(s) ? valueAt(s, channelM) : null,
      }));
  const lv = chosen.levels.find((l) => sameSize(l.diameterM, channelM)) ?? level;
  return {
    ...empty,
    locationId: chosen.locationId,
    channels: uniq,
    channelM,
    fromMs,
    toMs,
    points,
    pointsAre: byHour ? 'hourly means' : 'samples',
    alertPerM3: lv?.alertPerM3 ?? null,
    actionPerM3: lv?.actionPerM3 ?? null,
    levelsAtM: lv?.diameterM ?? null,
    classLimit: classLimitAt(chosen.isoClass, channelM),
  };
}

/** The target class's limit at a channel size, where ISO 14644-1:2015 defines one. */
function classLimitAt(classN: number | null, d: number): { value: number; label: string } | null {
  if (classN === null || d < ISO_MIN_M * (1 - 1e-9) || d > ISO_MAX_M * (1 + 1e-9)) return null;
  try {
    if (Number.isInteger(classN) && isoTable1Value(classN, d) === null) return null;
  } catch {
    // not a Table 1 size: the formula still applies
  }
  const label = `ISO ${Number.isInteger(classN) ? classN : classN.toFixed(1)} limit`;
  return { value: roundIsoLimit(isoClassLimit(classN, d)), label };
}
