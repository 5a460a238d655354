/**
 * Saved scenarios: the list (each opens on its what-if page, exports as JSON, and can be ticked to
 * compare) and the comparison side by side — the figures and the call as is and under each scenario.
 */
import type { Call } from '../../src/engine/types.ts';
import { CallBadge } from '../partials/call.tsx';
import { fmtDies, fmtNum, fmtPct } from '../partials/format.ts';
import { SavedList, type SavedScenarioView } from './whatif.tsx';

export function ScenariosPage(props: { saved: SavedScenarioView[] }) {
  return (
    <section class="vc-whatif-scenarios">
      <p class="vc-crumbs">
        <a href="/lots">Lots</a> › saved scenarios
      </p>
      <h1>Saved scenarios</h1>
      <p class="vc-lede">
        Scenarios saved from the what-if pages. A saved scenario keeps its levers, not its figures: opened or
        compared, it is computed again on the data as they are, and it never changes stored data, calls or
        sign-offs.
      </p>
      <SavedList saved={props.saved} />
    </section>
  );
}

/** One column of the comparison: as is, or one scenario, on the same subject. */
export interface CompareColumn {
  heading: string;
  href: string | null;
  applied: string[];
  call: Call | null;
  voids: number | null;
  unbondedFraction: number | null;
  dieLoss: number | null;
  /** Why this scenario has no figures here (another subject, a lever the data refuse). */
  problem: string | null;
}

export interface CompareGroup {
  subject: string;
  subjectHref: string;
  columns: CompareColumn[];
}

export function ComparePage(props: { groups: CompareGroup[]; unknown: number[] }) {
  const cell = (c: CompareColumn, f: (col: CompareColumn) => string) => (
    <td class="num">{c.problem ? '—' : f(c)}</td>
  );
  return (
    <section class="vc-whatif-compare">
      <p class="vc-crumbs">
        <a href="/lots">Lots</a> › <a href="/whatif/scenarios">saved scenarios</a> › compare
      </p>
      <h1>Scenarios side by side</h1>
      <p class="vc-lede">
        Each scenario computed again on its pair or lot, beside the figures as they are. Nothing stored
        changes.
      </p>
      {props.unknown.length > 0 ? (
        <p class="vc-error" role="alert">
          No saved scenario {props.unknown.join(', ')}.
        </p>
      ) : null}
      {props.groups.length === 0 ? (
        <p>Tick two or more saved scenarios in the list to compare them.</p>
      ) : null}
      {props.groups.map((g) => (
        <section class="vc-compare-group">
          <h2>
            <a href={g.subjectHref}>{g.subject}</a>
          </h2>
          <table class="vc-table vc-table-compact vc-compare">
            <thead>
              <tr>
                <th>Figure</th>
                {g.columns.map((c) => (
                  <th class="num">{c.href ? <a href={c.href}>{c.heading}</a> : c.heading}</th>
                ))}
              </tr>
            </thead>
            <tbody>
              <tr data-figure="levers">
                <td>levers</td>
                {g.columns.map((c) => (
                  <td class="vc-small">
                    {c.problem ?? (c.applied.length ? c.applied.join('; ') : 'none (as is)')}
                  </td>
                ))}
              </tr>
              <tr data-figure="call">
                <td>call</td>
                {g.columns.map((c) => (
                  <td class="num">{c.call ? <CallBadge call={c.call} /> : '—'}</td>
                ))}
              </tr>
              <tr data-figure="voids">
                <td>expected reportable voids</td>
                {g.columns.map((c) => cell(c, (x) => (x.voids === null ? '—' : fmtNum(x.voids))))}
              </tr>
              <tr data-figure="unbonded">
                <td>unbonded area fraction</td>
                {g.columns.map((c) =>
                  cell(c, (x) => (x.unbondedFraction === null ? '—' : fmtPct(x.unbondedFraction))),
                )}
              </tr>
              <tr data-figure="dies">
                <td>killed dies</td>
                {g.columns.map((c) => cell(c, (x) => (x.dieLoss === null ? '—' : fmtDies(x.dieLoss))))}
              </tr>
            </tbody>
          </table>
        </section>
      ))}
    </section>
  );
}
