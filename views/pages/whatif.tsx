/**
 * The what-if page of a pair, a lot, or every waiting lot: the levers on the left, the scenario
 * beside the figures as they are on the right (swapped live by htmx as a lever changes), then the
 * solvers, the sensitivity of the call, and saving, comparing and exporting scenarios.
 *
 * Scenarios change nothing stored: the page says so, and the figures are recomputed from the stored
 * inputs with the levers applied.
 */
import type { Child } from 'hono/jsx';
import { fmtUtc } from '../partials/format.ts';
import { LeverForm, type LeverOptions, type LeverValues } from '../partials/whatif-levers.tsx';

export interface WhatIfSubject {
  kind: 'pair' | 'lot' | 'waiting';
  /** Pair or lot id (null: every waiting lot). */
  id: string | null;
  /** The lot of a pair (crumbs). */
  lotId?: string;
}

export interface SavedScenarioView {
  id: number;
  name: string;
  target: string;
  createdBy: string;
  createdAtMs: number;
  /** Its what-if page. */
  href: string;
}

export function subjectWords(s: WhatIfSubject): string {
  return s.kind === 'waiting' ? 'every waiting lot' : `${s.kind} ${s.id}`;
}

export function whatIfBase(s: WhatIfSubject): string {
  return s.kind === 'waiting' ? '/whatif/waiting' : `/whatif/${s.kind}/${encodeURIComponent(s.id ?? '')}`;
}

function Crumbs(props: { s: WhatIfSubject }) {
  const s = props.s;
  return (
    <p class="vc-crumbs">
      <a href="/lots">Lots</a> ›{' '}
      {s.kind === 'pair' ? (
        <>
          <a href={`/lots/${encodeURIComponent(s.lotId ?? '')}`}>{s.lotId}</a> ›{' '}
          <a href={`/pairs/${encodeURIComponent(s.id ?? '')}`}>{s.id}</a> ›{' '}
        </>
      ) : s.kind === 'lot' ? (
        <>
          <a href={`/lots/${encodeURIComponent(s.id ?? '')}`}>{s.id}</a> ›{' '}
        </>
      ) : null}
      what if
    </p>
  );
}

/** Saving the scenario on show under a name (engineers; the form posts the levers it carries). */
export function SaveScenarioForm(props: {
  subject: WhatIfSubject;
  query: string;
  csrfToken: string;
  canSave: boolean;
  error?: string | null;
  name?: string;
}) {
  return (
    <form class="vc-form vc-save-scenario" method="post" action="/whatif/scenarios" id="save-scenario">
      <input type="hidden" name="_csrf" value={props.csrfToken} />
      <input
        type="hidden"
        name="target"
        value={props.subject.kind === 'waiting' ? '' : `${props.subject.kind}:${props.subject.id}`}
      />
      <input type="hidden" name="query" value={props.query} />
      <label for="scenario-name">Save this scenario as</label>
      <input type="text" id="scenario-name" name="name" maxlength={120} required value={props.name ?? ''} />
      <p class="vc-form-wide vc-form-actions">
        <button type="submit" disabled={!props.canSave}>
          Save scenario
        </button>
        <span class="vc-small">
          {props.canSave
            ? 'Saved scenarios keep the levers, not the figures: opened later they are computed again.'
            : 'Saving a scenario needs the engineer role.'}
        </span>
      </p>
      {props.error ? (
        <p class="vc-form-wide vc-error" role="alert">
          {props.error}
        </p>
      ) : null}
    </form>
  );
}

export function SavedList(props: { saved: SavedScenarioView[] }) {
  if (props.saved.length === 0) return <p class="vc-small">No scenario saved yet for this subject.</p>;
  return (
    <form method="get" action="/whatif/scenarios/compare" class="vc-saved-scenarios">
      <table class="vc-table vc-table-compact">
        <thead>
          <tr>
            <th>Compare</th>
            <th>Name</th>
            <th>For</th>
            <th>Saved by</th>
            <th>Saved</th>
            <th>Export</th>
          </tr>
        </thead>
        <tbody>
          {props.saved.map((s) => (
            <tr data-scenario={s.id}>
              <td>
                <input type="checkbox" name="id" value={String(s.id)} aria-label={`compare ${s.name}`} />
              </td>
              <td>
                <a href={s.href}>{s.name}</a>
              </td>
              <td>{s.target}</td>
              <td>{s.createdBy}</td>
              <td>{fmtUtc(s.createdAtMs)}</td>
              <td>
                <a href={`/whatif/scenarios/${s.id}/export`} download>
                  JSON
                </a>
              </td>
            </tr>
          ))}
        </tbody>
      </table>
      <p class="vc-form-actions">
        <button type="submit">Compare the ticked scenarios side by side</button>
      </p>
    </form>
  );
}

export function WhatIfPage(props: {
  subject: WhatIfSubject;
  asOfMs: number;
  values: LeverValues;
  options: LeverOptions;
  hidden: Record<string, string>;
  /** The scenario's result (or its error), #whatif-result. */
  result: Child;
  /** Solver forms and answer (pair and lot). */
  solvers?: Child;
  /** The sensitivity section (pair and lot). */
  sensitivity?: Child;
  save: Child;
  saved: SavedScenarioView[];
}) {
  const s = props.subject;
  const base = whatIfBase(s);
  return (
    <section class="vc-whatif" data-subject={s.kind}>
      <Crumbs s={s} />
      <h1>What if… {subjectWords(s)}</h1>
      <p class="vc-lede">
        Change a clean, a wait, an area's air, a tool's adders, the interface energy, the scan threshold or
        the parameter set, and see the figures and the call beside those assessed at {fmtUtc(props.asOfMs)}. A
        scenario changes nothing stored: no data, no call, no sign-off.
        {s.kind !== 'waiting' ? (
          <>
            {' '}
            The same levers on <a href="/whatif/waiting">every waiting lot</a>.
          </>
        ) : null}
      </p>
      <div class="vc-whatif-grid">
        <LeverForm action={base} values={props.values} options={props.options} hidden={props.hidden} />
        {props.result}
      </div>
      {props.solvers ?? null}
      {props.sensitivity ?? null}
      <section class="vc-whatif-saved" id="saved-scenarios">
        <h2>Saved scenarios</h2>
        {props.save}
        <SavedList saved={props.saved} />
      </section>
    </section>
  );
}
