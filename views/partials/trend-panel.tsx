/**
 * The trend panel of the Areas page: pick a location, a counter channel and a time window, and
 * the chart swaps in (htmx); without script the same form reloads the page with the choice in the
 * query. One partial serves the full page and the swap.
 */
import { type TrendPoint, trend } from '../charts/trend.tsx';
import { fmtConc, fmtDiameter, fmtUtc } from './format.ts';

export const TREND_WINDOWS = [
  { key: '24h', label: 'last 24 h', ms: 86_400_000 },
  { key: '7d', label: 'last 7 days', ms: 7 * 86_400_000 },
  { key: '30d', label: 'last 30 days', ms: 30 * 86_400_000 },
  { key: 'all', label: 'all data', ms: Number.POSITIVE_INFINITY },
] as const;
export type TrendWindow = (typeof TREND_WINDOWS)[number]['key'];

export function parseTrendWindow(v: string | undefined): TrendWindow {
  return TREND_WINDOWS.find((w) => w.key === v)?.key ?? '7d';
}

export interface TrendPanelProps {
  locations: { locationId: string; name: string; area: string }[];
  locationId: string | null;
  channels: number[];
  channelM: number | null;
  window: TrendWindow;
  fromMs: number;
  toMs: number;
  points: TrendPoint[];
  /** What the points are: each sample, or hourly means of the samples (long windows). Default samples. */
  pointsAre?: 'samples' | 'hourly means';
  alertPerM3: number | null;
  actionPerM3: number | null;
  /** The levels' own size when it differs from the channel (then they are not drawn). */
  levelsAtM: number | null;
  classLimit: { value: number; label: string } | null;
  /** Why there is nothing to draw, in words. */
  problem?: string | null;
}

export function TrendPanel(props: TrendPanelProps) {
  const loc = props.locations.find((l) => l.locationId === props.locationId) ?? null;
  const levelsApply =
    props.levelsAtM !== null && props.channelM !== null && sameSize(props.levelsAtM, props.channelM);
  const above = props.points.filter(
    (p) => p.value !== null && props.actionPerM3 !== null && levelsApply && p.value > props.actionPerM3,
  ).length;
  return (
    <section class="vc-trend-panel vc-panel" id="trend-panel">
      <form
        class="vc-inline-form"
        method="get"
        action="/areas#trend-panel"
        hx-get="/areas/trend"
        hx-target="#trend-panel"
        hx-swap="outerHTML"
        hx-trigger="change, submit"
      >
        <label>
          Location{' '}
          <select name="location">
            {props.locations.map((l) => (
              <option value={l.locationId} selected={l.locationId === props.locationId}>
                {l.area} › {l.name}
              </option>
            ))}
          </select>
        </label>
        <label>
          Channel{' '}
          <select name="channel">
            {props.channels.map((c) => (
              <option
                value={String(Number((c * 1e6).toPrecision(6)))}
                selected={props.channelM !== null && sameSize(c, props.channelM)}
              >
                ≥ {fmtDiameter(c)}
              </option>
            ))}
          </select>
        </label>
        <label>
          Window{' '}
          <select name="window">
            {TREND_WINDOWS.map((w) => (
              <option value={w.key} selected={w.key === props.window}>
                {w.label}
              </option>
            ))}
          </select>
        </label>
        <button type="submit">Show</button>
      </form>
      {props.problem || !loc || props.channelM === null ? (
        <p class="vc-small">{props.problem ?? 'No counter data to show.'}</p>
      ) : (
        <div>
          {trend({
            id: 'trend-chart',
            title: `${loc.name}: particles ≥ ${fmtDiameter(props.channelM)} per m³`,
            channelLabel: `≥ ${fmtDiameter(props.channelM)}`,
            unit: 'particles/m³',
            points: props.points,
            alert: levelsApply ? props.alertPerM3 : null,
            action: levelsApply ? props.actionPerM3 : null,
            classLimit: props.classLimit,
            fromMs: props.fromMs,
            toMs: props.toMs,
            width: 900,
            height: 300,
          })}
          <p class="vc-small">
            {props.points.length} {props.pointsAre ?? 'samples'} from {fmtUtc(props.fromMs)} to{' '}
            {fmtUtc(props.toMs)}
            {levelsApply
              ? `; alert ${fmtConc(props.alertPerM3 ?? Number.NaN)}, action ${fmtConc(props.actionPerM3 ?? Number.NaN)} per m³; ${above} above action`
              : props.levelsAtM !== null
                ? `; this location's alert and action levels are set at ≥ ${fmtDiameter(props.levelsAtM)}, pick that channel to see them`
                : '; no alert or action levels set for this location'}
            {props.classLimit ? `; ${props.classLimit.label} at this size` : ''}. Flagged samples (instrument
            fault, sentinel values) are left out and show as gaps.
          </p>
        </div>
      )}
    </section>
  );
}

export function sameSize(a: number, b: number): boolean {
  return Math.abs(a - b) <= 1e-3 * Math.max(a, b);
}
