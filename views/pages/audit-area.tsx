/**
 * An area's audit: the ISO 14644-1 classification over a chosen period and occupancy state, the
 * alert and action levels and how they were set (with a form to derive new ones), the excursions
 * with what they most likely are, the wafers in their air and what they added, and the control
 * charts per location and channel. Every table has its downloads beside it.
 *
 * What cannot be judged says so ("no data", "not judged", a problem in words); nothing reads as a
 * pass where there was nothing to judge.
 */
import type { LevelMethod, OccupancySelection } from '../../src/engine/audit/types.ts';
import { fmtUtc } from '../partials/format.ts';
import { ControlChartFigure, chartsShown } from './audit-charts.tsx';
import { type AuditTable, AuditTableView } from './audit-table.tsx';
import { type AuditView, methodWords, occupancyWords, ruleWords } from './audit-tables.ts';

export const OCCUPANCY_CHOICES: OccupancySelection[] = ['operational', 'at-rest', 'as-built', 'any'];
export const LEVEL_METHODS: Exclude<LevelMethod, 'typed'>[] = [
  'percentile',
  'log-mean-k-sigma',
  'poisson-quantile',
  'negbin-quantile',
  'class-fraction',
];

export interface AuditQuery {
  from: string;
  to: string;
  occupancy: OccupancySelection;
  edition: 2015 | 1999;
  /** The control charts' baseline window, when one was chosen. */
  limitsFrom?: string;
  limitsTo?: string;
}

/** The query string of an audit URL. */
export function auditQueryString(q: AuditQuery, extra: Record<string, string> = {}): string {
  const p = new URLSearchParams({
    from: q.from,
    to: q.to,
    occupancy: q.occupancy,
    edition: String(q.edition),
    ...(q.limitsFrom && q.limitsTo ? { limitsFrom: q.limitsFrom, limitsTo: q.limitsTo } : {}),
    ...extra,
  });
  return p.toString();
}

/** The period, occupancy and edition: a GET form that works without script. */
export function AuditPeriodForm(props: { action: string; query: AuditQuery; withEdition?: boolean }) {
  const q = props.query;
  return (
    <form class="vc-period-form" method="get" action={props.action}>
      <label>
        From (UTC)
        <input name="from" value={q.from} required placeholder="2026-10-01T00:00Z" />
      </label>
      <label>
        To (UTC)
        <input name="to" value={q.to} required placeholder="2026-10-19T00:00Z" />
      </label>
      <label>
        Occupancy state
        <select name="occupancy">
          {OCCUPANCY_CHOICES.map((o) => (
            <option value={o} selected={o === q.occupancy}>
              {occupancyWords(o)}
            </option>
          ))}
        </select>
      </label>
      {props.withEdition === false ? null : (
        <label>
          ISO 14644-1 edition
          <select name="edition">
            <option value="2015" selected={q.edition === 2015}>
              2015 (location means)
            </option>
            <option value="1999" selected={q.edition === 1999}>
              1999 (adds the 95 % UCL)
            </option>
          </select>
        </label>
      )}
      {props.withEdition === false ? null : (
        <>
          <label>
            Chart limits from (UTC)
            <input name="limitsFrom" value={q.limitsFrom ?? ''} placeholder="optional" />
          </label>
          <label>
            to (UTC)
            <input name="limitsTo" value={q.limitsTo ?? ''} placeholder="optional" />
          </label>
        </>
      )}
      <button type="submit">Show</button>
    </form>
  );
}

export interface AreaAuditProps {
  area: { id: string; name: string };
  query: AuditQuery;
  /** The audit, or null when it could not be made (the problems say why). */
  audit: AuditView | null;
  /** Problems in plain words (no data in the period, no locations, a baseline too short …). */
  problems: string[];
  tables: AuditTable[];
  /** Download URL of a table in a format. */
  downloadHref: (table: string, format: 'csv' | 'xls-csv' | 'json') => string;
  csrfToken: string;
  /** The outcome of a form just posted (levels derived, an acknowledgement stored, or why not). */
  flash?: { kind: 'success' | 'error'; text: string } | null;
  /** Locations of the area and the channels their counters report (for the levels form). */
  locations: { id: string; name: string }[];
  channelsUm: number[];
  /** Draw every control chart (else those with levels or excursions; the table lists all). */
  allCharts?: boolean;
}

export function AreaAuditPage(p: AreaAuditProps) {
  const base = `/areas/${encodeURIComponent(p.area.id)}/audit`;
  const t = (id: string) => p.tables.find((x) => x.id === id)!;
  const view = (id: string) => <AuditTableView table={t(id)} href={(f) => p.downloadHref(id, f)} />;
  const a = p.audit;
  return (
    <section class="vc-audit">
      <p class="vc-crumbs">
        <a href="/areas">Areas</a> › {p.area.name}
      </p>
      <h1>
        Contamination audit: {p.area.name} <span class="vc-small">{p.area.id}</span>
      </h1>
      <AuditPeriodForm action={base} query={p.query} />
      <p class="vc-small">
        <a href={`${base}/report?${auditQueryString(p.query)}`}>Printable audit report for this period</a>
      </p>
      {p.flash ? (
        <p
          class={p.flash.kind === 'success' ? 'vc-success' : 'vc-error'}
          role={p.flash.kind === 'success' ? 'status' : 'alert'}
        >
          {p.flash.text}
        </p>
      ) : null}
      {p.problems.length ? (
        <div class="vc-error" role="alert" data-problems="">
          <p>This audit cannot give a full verdict:</p>
          <ul>
            {p.problems.map((x) => (
              <li>{x}</li>
            ))}
          </ul>
        </div>
      ) : null}
      {a ? (
        <>
          <h2 id="classification">Classification (ISO 14644-1:{a.classification.edition})</h2>
          <p class="vc-verdict" data-verdict={a.classification.status}>
            Verdict: <strong>{a.classification.status}</strong> — {occupancyWords(a.occupancy)},{' '}
            {fmtUtc(a.period.fromMs)} to {fmtUtc(a.period.toMs)}.
          </p>
          {view('classification-summary')}
          <h3>Considered sizes</h3>
          {view('classification-sizes')}
          <h3>Sampling locations</h3>
          {view('classification-locations')}
        </>
      ) : null}
      <h2 id="levels">Alert and action levels</h2>
      <p class="vc-small">
        The levels in force, newest version per location and channel. Levels from the locations file say
        “typed”; derived levels name their method, baseline window, version, who set them and when.
      </p>
      {a ? view('levels') : null}
      <LevelsForm
        action={`${base}/levels`}
        query={p.query}
        csrf={p.csrfToken}
        locations={p.locations}
        channelsUm={p.channelsUm}
      />
      {a ? (
        <>
          <h2 id="excursions">Excursions</h2>
          <p class="vc-small">
            Rules:{' '}
            {['action-point', 'alert-run', 'area-alert', 'ratio-shift', 'data-quality']
              .map(ruleWords)
              .join('; ')}
            . “Most likely” tells a rise in the air from a counter fault by the samples’ data-quality flags
            and the signature across channels.
          </p>
          {view('excursions')}
          <AckForms
            base={base}
            query={p.query}
            csrf={p.csrfToken}
            choices={a.excursions
              .map((e, i) => ({
                id: e.id,
                words: `E${i + 1}: ${ruleWords(e.rule)} at ${e.locationIds.join(', ')} from ${fmtUtc(e.startMs)}`,
                open: !e.acknowledgement,
              }))
              .filter((e) => e.open)}
          />
          <h3>Events and what each added</h3>
          <p class="vc-small">
            Excursions whose hours overlap at a location are one event, found by each of their rules: an event
            is costed once, over the union of its excursions' hours — the expected voids and die loss from the
            excess over the location's baseline, for each wafer the ledger puts in that air — so the events'
            costs add up without counting an hour twice.
          </p>
          {view('events')}
          <h3>Exposed wafers</h3>
          {view('exposed-wafers')}
          <h3>Added risk per lot</h3>
          {view('lot-costs')}
          <h2 id="charts">Control charts</h2>
          <p class="vc-small">
            Each chart's centre line and limits come from a baseline: the window the location's derived levels
            were set from, else the window chosen above (“Chart limits from … to”), else the period itself —
            then an excursion in the period raises the centre and widens the limits, and the chart says so.
          </p>
          {view('control-charts')}
          {a.charts && a.charts.length > 0 ? (
            <ChartsBlock
              audit={a}
              all={p.allCharts === true}
              toggleHref={`${base}?${auditQueryString(p.query, p.allCharts ? {} : { charts: 'all' })}#charts`}
            />
          ) : null}
        </>
      ) : null}
    </section>
  );
}

/** The control charts drawn, and the link that shows every one or the chosen ones again. */
function ChartsBlock(props: { audit: AuditView; all: boolean; toggleHref: string }) {
  const a = props.audit;
  const charts = a.charts ?? [];
  const shown = chartsShown(charts, a.levels ?? [], a.excursions ?? [], props.all);
  return (
    <>
      <p class="vc-small">
        {shown.length === charts.length
          ? `All ${charts.length} charts.`
          : `${shown.length} of ${charts.length} charts: the locations and channels with alert or action levels or an excursion in the period.`}{' '}
        {shown.length < charts.length || props.all ? (
          <a href={props.toggleHref}>{props.all ? 'Show the chosen ones only' : 'Show every chart'}</a>
        ) : null}
      </p>
      <div class="vc-chart-grid">
        {shown.map((ch) => (
          <ControlChartFigure chart={ch} levels={a.levels ?? []} />
        ))}
      </div>
    </>
  );
}

const METHOD_PARAMETERS: Record<string, string> = {
  percentile: 'default 0.95 / 0.99',
  'log-mean-k-sigma': 'k, default 2 / 3',
  'poisson-quantile': 'default 0.95 / 0.99',
  'negbin-quantile': 'default 0.95 / 0.99',
  'class-fraction': 'default 0.5 / 1, no baseline',
};

/** Derive levels for one location and channel from a baseline window by a stated method (approvers). */
function LevelsForm(props: {
  action: string;
  query: AuditQuery;
  csrf: string;
  locations: { id: string; name: string }[];
  channelsUm: number[];
}) {
  return (
    <form class="vc-audit-form vc-form" method="post" action={props.action} data-form="levels">
      <h3 class="vc-form-wide">Derive levels from a baseline</h3>
      <input type="hidden" name="_csrf" value={props.csrf} />
      <input type="hidden" name="return" value={auditQueryString(props.query)} />
      <input type="hidden" name="occupancy" value={props.query.occupancy} />
      <label for="lv-location">Location</label>
      <select id="lv-location" name="location" required>
        {props.locations.map((l) => (
          <option value={l.id}>
            {l.id} {l.name === l.id ? '' : l.name}
          </option>
        ))}
      </select>
      <label for="lv-channel">Channel</label>
      <select id="lv-channel" name="channel" required>
        {props.channelsUm.map((c) => (
          <option value={String(c)} selected={c === 0.5}>
            ≥ {c} µm
          </option>
        ))}
      </select>
      <label for="lv-method">Method</label>
      <select id="lv-method" name="method">
        {LEVEL_METHODS.map((m) => (
          <option value={m}>
            {methodWords(m)} ({METHOD_PARAMETERS[m]})
          </option>
        ))}
      </select>
      <label for="lv-from">Baseline from (UTC)</label>
      <input id="lv-from" name="baselineFrom" value={props.query.from} />
      <label for="lv-to">Baseline to (UTC)</label>
      <input id="lv-to" name="baselineTo" value={props.query.to} />
      <label for="lv-alert">Alert parameter</label>
      <input id="lv-alert" name="alertParameter" inputmode="decimal" placeholder="the method's default" />
      <label for="lv-action">Action parameter</label>
      <input id="lv-action" name="actionParameter" inputmode="decimal" placeholder="the method's default" />
      <label for="lv-name">Name of this setting</label>
      <input id="lv-name" name="name" required maxlength={80} placeholder="October baseline" />
      <p class="vc-small vc-form-wide">
        Parameters: percentiles and quantiles as fractions (0.95), k as a number of σ, class fractions as
        fractions of the limit; empty fields take the method's defaults. Approvers only. The levels are stored
        as a new version with the method, window, parameters, your name and the time; earlier versions stay on
        record. A baseline shorter than the method needs is refused with the reason.
      </p>
      <button type="submit">Derive and store levels</button>
    </form>
  );
}

/** Acknowledge an excursion with a comment (engineers and up; recorded with who and when). */
function AckForms(props: {
  base: string;
  query: AuditQuery;
  csrf: string;
  choices: { id: string; words: string }[];
}) {
  if (props.choices.length === 0) return null;
  return (
    <form
      class="vc-audit-form vc-form"
      method="post"
      action={`${props.base}/acknowledge`}
      data-form="acknowledge"
    >
      <h3 class="vc-form-wide">Acknowledge an excursion</h3>
      <input type="hidden" name="_csrf" value={props.csrf} />
      <input type="hidden" name="return" value={auditQueryString(props.query)} />
      <label for="ack-id">Excursion</label>
      <select id="ack-id" name="excursion">
        {props.choices.map((x) => (
          <option value={x.id}>{x.words}</option>
        ))}
      </select>
      <label for="ack-comment">Comment</label>
      <textarea id="ack-comment" name="comment" required rows={2} maxlength={4000} />
      <p class="vc-small vc-form-wide">
        Engineers and up. Say what was found and done; the comment is stored with your name and the time.
      </p>
      <button type="submit">Acknowledge</button>
    </form>
  );
}
