/**
 * The Pareto panel of a pair or lot: one chart per grouping (tool, wait location, clean, size
 * band, source kind), picked by links that work without script and swap the panel with htmx.
 * The same partial is the full page's section and the fragment the swap returns.
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
  { by: 'tool', field: 'byTool', label: 'by tool' },
  { by: 'wait', field: 'byWaitLocation', label: 'by wait location' },
  { by: 'clean', field: 'byClean', label: 'by clean' },
  { by: 'size', field: 'bySizeBand', label: 'by size band' },
  { by: 'kind', field: 'byKind', label: 'by source kind' },
] as const;

export type ParetoBy = (typeof PARETO_GROUPS)[number]['by'];

export function parseParetoBy(v: string | undefined): ParetoBy {
  return PARETO_GROUPS.find((g) => g.by === v)?.by ?? 'tool';
}

const METRIC_LABEL = { expectedVoids: 'expected voids', dieKillEvents: 'expected die kills' } as const;

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
  const value = (e: ParetoEntryLike) => (metric === 'expectedVoids' ? e.expectedVoids : e.dieKillEvents);
  const sorted = [...entries].sort((a, b) => value(b) - value(a));
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
        {pareto({
          id,
          title: `${props.subject}: ${METRIC_LABEL[metric]} ${group.label}`,
          valueLabel: METRIC_LABEL[metric],
          items: sorted.map((e) => ({ label: e.label, value: value(e) })),
          width: 560,
          height: 300,
        })}
        <table class="vc-table vc-table-compact">
          <thead>
            <tr>
              <th>{group.label.replace('by ', '')}</th>
              <th class="num">voids</th>
              <th class="num">unbonded area</th>
              <th class="num">die kills</th>
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
                <tr>
                  <td>{e.label}</td>
                  <td class="num">{fmtNum(e.expectedVoids)}</td>
                  <td class="num">{fmtAreaM2(e.unbondedAreaM2)}</td>
                  <td class="num">{fmtDies(e.dieKillEvents)}</td>
                  <td class="num">{fmtShare(e.share)}</td>
                </tr>
              ))
            )}
          </tbody>
        </table>
      </div>
    </section>
  );
}
