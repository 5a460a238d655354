/**
 * The Pareto panel of a pair or lot: one chart per grouping (tool, wait location, clean, size
 * band, source kind), picked by links that work without script and swap the panel with htmx.
 * The same partial is the full page's section and the fragment the swap returns.
 *
 * Chart and table show the same shares, of the whole risk (every source, summed from the
 * by-kind grouping, which holds each source once): where a grouping covers only part of it (the
 * tools, the wait locations) the rest is a last row of the table and a last, hatched bar of the
 * chart, and the caption says which kinds of source it is.
 */
import { pareto } from '../charts/pareto.tsx';
import { fmtAreaM2, fmtDies, fmtNum, fmtShare } from './format.ts';

export interface ParetoEntryLike {
  key: string;
  label: string;
  expectedVoids: number;
  unbondedAreaM2: number;
  dieKillEvents: number;
  share: number;
}

export interface ParetoLike {
  metric: 'expectedVoids' | 'dieKillEvents';
  byTool: ParetoEntryLike[];
  byWaitLocation: ParetoEntryLike[];
  byClean: ParetoEntryLike[];
  bySizeBand: ParetoEntryLike[];
  byKind: ParetoEntryLike[];
}

export const PARETO_GROUPS = [
  { by: 'tool', field: 'byTool', label: 'by tool', kind: 'tool', items: 'tools' },
  { by: 'wait', field: 'byWaitLocation', label: 'by wait location', kind: 'wait', items: 'wait locations' },
  { by: 'clean', field: 'byClean', label: 'by clean', kind: null, items: 'cleans' },
  { by: 'size', field: 'bySizeBand', label: 'by size band', kind: null, items: 'size bands' },
  { by: 'kind', field: 'byKind', label: 'by source kind', kind: null, items: 'source kinds' },
] as const;

/** Below this share of the whole, what a grouping leaves out is rounding, not a row. */
const REST_MIN_SHARE = 1e-9;

export type ParetoBy = (typeof PARETO_GROUPS)[number]['by'];

export function parseParetoBy(v: string | undefined): ParetoBy {
  return PARETO_GROUPS.find((g) => g.by === v)?.by ?? 'tool';
}

/**
 * The die metric is kill *events*: Σ λ·A_c over the random particles and Σ s over the dies each
 * detected void reaches. A die reached twice counts twice, so it is at least the expected number of
 * killed dies (the die-loss figures); it is the one that adds up over sources, which shares need.
 */
const METRIC_LABEL = { expectedVoids: 'expected voids', dieKillEvents: 'expected die-kill events' } as const;

/** A number and its unit kept on one line (a narrow share column would break "1.7 %"). */
const nowrap = (s: string) => s.replace(' ', '\u00a0');

/** What the bars of a grouping leave out of the whole, as the chart and the table call it. */
const REST_LABEL = 'other sources';

/**
 * @param base the subject's URL ("/pairs/P1" or "/lots/L1"); tabs link to `${base}?pareto=…`
 *   for the full page and `${base}/pareto?by=…` for the swap.
 */
export function ParetoPanel(props: {
  pareto: ParetoLike;
  by: ParetoBy;
  base: string;
  subject: string;
  /** Assessment time the panel's swaps re-use, so they show the same figures as the page. */
  asOfMs?: number;
}) {
  const group = PARETO_GROUPS.find((g) => g.by === props.by)!;
  const entries = props.pareto[group.field];
  const metric = props.pareto.metric;
  const value = (e: { expectedVoids: number; dieKillEvents: number }) =>
    metric === 'expectedVoids' ? e.expectedVoids : e.dieKillEvents;
  const sorted = [...entries].sort((a, b) => value(b) - value(a));
  // The whole: every source once (the by-kind grouping); what this grouping leaves of it.
  const sum = (l: readonly ParetoEntryLike[], f: (e: ParetoEntryLike) => number) =>
    l.reduce((a, e) => a + f(e), 0);
  const kinds = props.pareto.byKind;
  const whole = {
    expectedVoids: sum(kinds, (e) => e.expectedVoids),
    unbondedAreaM2: sum(kinds, (e) => e.unbondedAreaM2),
    dieKillEvents: sum(kinds, (e) => e.dieKillEvents),
  };
  const total = value(whole);
  const restValue = total - sum(sorted, value);
  const rest =
    sorted.length > 0 && restValue > REST_MIN_SHARE * total
      ? {
          expectedVoids: Math.max(0, whole.expectedVoids - sum(sorted, (e) => e.expectedVoids)),
          unbondedAreaM2: Math.max(0, whole.unbondedAreaM2 - sum(sorted, (e) => e.unbondedAreaM2)),
          dieKillEvents: Math.max(0, whole.dieKillEvents - sum(sorted, (e) => e.dieKillEvents)),
          share: restValue / total,
          // the kinds of source outside this grouping, largest first
          kinds: group.kind ? kinds.filter((k) => k.key !== group.kind && value(k) > 0) : [],
        }
      : null;
  const id = `pareto-${props.by}`;
  const at = props.asOfMs !== undefined ? `&asOf=${props.asOfMs}` : '';
  return (
    <section class="vc-pareto-panel" id="pareto-panel" data-by={props.by}>
      <nav class="vc-tabs" aria-label="Pareto grouping">
        {PARETO_GROUPS.map((g) => (
          <a
            href={`${props.base}?pareto=${g.by}${at}#pareto-panel`}
            hx-get={`${props.base}/pareto?by=${g.by}${at}`}
            hx-target="#pareto-panel"
            hx-swap="outerHTML"
            hx-push-url="false"
            class={g.by === props.by ? 'vc-tab active' : 'vc-tab'}
            aria-current={g.by === props.by ? 'true' : undefined}
          >
            {g.label}
          </a>
        ))}
      </nav>
      <div class="vc-pareto-body">
        <div class="vc-pareto-chart">
          {pareto({
            id,
            title: `${props.subject}: ${METRIC_LABEL[metric]} ${group.label}`,
            valueLabel: METRIC_LABEL[metric],
            items: sorted.map((e) => ({ label: e.label, value: value(e) })),
            total,
            restLabel: REST_LABEL,
            format: metric === 'expectedVoids' ? (v) => fmtNum(v) : fmtDies,
            width: 560,
            height: 340,
          })}
          <p class="vc-small vc-pareto-caption">
            Bars, line and the share column are shares of all {METRIC_LABEL[metric]} of the{' '}
            {props.subject.toLowerCase().startsWith('lot') ? 'lot' : 'pair'} ({fmtNum(total)})
            {metric === 'dieKillEvents'
              ? '; a die reached twice counts twice, so the events exceed the expected number of killed dies'
              : ''}
            .
            {rest
              ? ` The ${group.items} hold ${fmtShare(1 - rest.share)}; ${REST_LABEL}${
                  rest.kinds.length
                    ? ` (${rest.kinds.map((k) => `${k.label.toLowerCase()} ${fmtShare(k.share)}`).join(', ')})`
                    : ''
                } ${fmtShare(rest.share)}.`
              : ''}
          </p>
        </div>
        <table class="vc-table vc-table-compact vc-pareto-table">
          <thead>
            <tr>
              <th>{group.label.replace('by ', '')}</th>
              <th class="num">voids</th>
              <th class="num">unbonded area</th>
              <th class="num">die-kill events</th>
              <th class="num">share</th>
            </tr>
          </thead>
          <tbody>
            {sorted.length === 0 ? (
              <tr>
                <td colspan={5}>Nothing attributed to this grouping.</td>
              </tr>
            ) : (
              sorted.map((e) => (
                <tr data-label={e.label}>
                  <td>{e.label}</td>
                  <td class="num">{fmtNum(e.expectedVoids)}</td>
                  <td class="num">{fmtAreaM2(e.unbondedAreaM2)}</td>
                  <td class="num">{fmtDies(e.dieKillEvents)}</td>
                  <td class="num">{nowrap(fmtShare(e.share))}</td>
                </tr>
              ))
            )}
            {rest ? (
              <tr class="vc-pareto-rest" data-label={REST_LABEL}>
                <td>
                  <em>{REST_LABEL}</em>
                </td>
                <td class="num">{fmtNum(rest.expectedVoids)}</td>
                <td class="num">{fmtAreaM2(rest.unbondedAreaM2)}</td>
                <td class="num">{fmtDies(rest.dieKillEvents)}</td>
                <td class="num">{nowrap(fmtShare(rest.share))}</td>
              </tr>
            ) : null}
          </tbody>
        </table>
      </div>
    </section>
  );
}
