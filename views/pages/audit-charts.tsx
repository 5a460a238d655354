/**
 * The control charts of an area's audit: one per location and channel, drawn from the engine's
 * chart (src/engine/audit/types.ts ControlChart) with the location's alert and action levels.
 */
import type { ChartRuleId, ControlChart, LevelRecord } from '../../src/engine/audit/types.ts';
import { type ControlChartInput, type ControlChartRule, controlChart } from '../charts/control-chart.tsx';
import { fmtDiameter } from '../charts/svg.tsx';
import { limitsWords } from './audit-tables.ts';

/** The chart rules with their marks and words (our own names; NIST/SEMATECH §6.3.2-style run rules). */
export const CHART_RULES: (ControlChartRule & { code: ChartRuleId })[] = [
  { code: 'beyond-limit', mark: 'L', label: 'beyond a control limit' },
  { code: '2-of-3-beyond-2-sigma', mark: '2σ', label: '2 of 3 beyond 2σ, same side' },
  { code: 'run-of-8-above', mark: '8+', label: '8 in a row above the centre' },
  { code: 'run-of-8-below', mark: '8−', label: '8 in a row below the centre' },
];

const KIND = { c: 'c', u: 'u', 'laney-u': 'u-prime' } as const;

function sameSize(a: number, b: number): boolean {
  return Math.abs(a - b) <= 1e-3 * Math.max(a, b);
}

/** The chart input for one engine chart, with the levels in force for its location and channel. */
export function controlChartInput(ch: ControlChart, levels: LevelRecord[], width = 620): ControlChartInput {
  const lv = levels.find((l) => l.locationId === ch.locationId && sameSize(l.diameterM, ch.diameterM));
  // A c chart plots counts per subgroup of one volume: the levels (per m³) times that volume.
  const volume = ch.kind === 'c' ? (ch.points[0]?.volumeM3 ?? null) : 1;
  const scale = (v: number | null | undefined) =>
    v === null || v === undefined || volume === null ? null : v * volume;
  const channel = `≥ ${fmtDiameter(ch.diameterM)}`;
  return {
    id: `cc-${ch.locationId}-${Math.round(ch.diameterM * 1e9)}nm`,
    title: `${ch.locationId} ${channel}: ${ch.kind === 'laney-u' ? 'Laney u′' : ch.kind} chart`,
    kind: KIND[ch.kind],
    yLabel: ch.kind === 'c' ? `particles ${channel} per subgroup` : `particles ${channel} per m³`,
    xLabel: 'hour (UTC)',
    centre: ch.centre,
    alert: scale(lv?.alertPerM3),
    action: scale(lv?.actionPerM3),
    points: ch.points.map((p) => ({
      tMs: p.startMs,
      value: p.value,
      ucl: p.ucl,
      lcl: p.lcl,
      flags: p.rules,
    })),
    rules: CHART_RULES,
    emptyText: 'no counter samples in this period',
    width,
  };
}

export function ControlChartFigure(props: { chart: ControlChart; levels: LevelRecord[]; width?: number }) {
  const ch = props.chart;
  const flagged = ch.points.filter((p) => p.rules.length > 0).length;
  return (
    <figure class="vc-chart-block" data-chart-location={ch.locationId}>
      {controlChart(controlChartInput(ch, props.levels, props.width))}
      <figcaption>
        {ch.decidedBy}. {ch.points.length} hourly points, {flagged} flagged
        {ch.excludedPoints
          ? `, ${ch.excludedPoints} left out of the centre line (fault or sentinel hours)`
          : ''}
        . Centre line and limits from {limitsWords(ch)}.
        {ch.notes.length ? (
          <span class="vc-note" data-limits-note={ch.baseline.source}>
            {' '}
            {ch.notes.join('; ')}.
          </span>
        ) : null}
      </figcaption>
    </figure>
  );
}

/**
 * The charts a page draws: every one with `all`, else those of a location and channel that has
 * alert or action levels or an excursion in the period (the ones an auditor reads first), or the
 * first chart when none has either. The table of charts always lists every one.
 */
export function chartsShown(
  charts: ControlChart[],
  levels: LevelRecord[],
  excursions: { locationIds: string[]; channelsM: number[] }[],
  all: boolean,
): ControlChart[] {
  if (all) return charts;
  const wanted = charts.filter(
    (ch) =>
      levels.some(
        (l) =>
          l.locationId === ch.locationId &&
          sameSize(l.diameterM, ch.diameterM) &&
          (l.alertPerM3 !== null || l.actionPerM3 !== null),
      ) ||
      excursions.some(
        (e) => e.locationIds.includes(ch.locationId) && e.channelsM.some((d) => sameSize(d, ch.diameterM)),
      ),
  );
  return wanted.length ? wanted : charts.slice(0, 1);
}
