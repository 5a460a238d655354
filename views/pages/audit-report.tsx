/**
 * The audit report of one area over a period, laid out to be printed (public/print.css): a cover
 * with the verdict in a few lines, then one section per page — the classification, the levels and
 * how they were set, the excursions with the wafers in their air and what they added, the control
 * charts, and the sign-offs (acknowledgements on record, and lines to sign on paper).
 */
import { fmtNum, fmtUtc } from '../partials/format.ts';
import { type AuditQuery, auditQueryString } from './audit-area.tsx';
import { ControlChartFigure, chartsShown } from './audit-charts.tsx';
import { type AuditTable, AuditTableView } from './audit-table.tsx';
import { type AuditView, classWords, eventLabels, excursionLabels, occupancyWords } from './audit-tables.ts';

/** The report's section headings, in order (the browser test finds them in the printed PDF). */
export const REPORT_HEADINGS = [
  'Contamination audit report',
  '1. Classification against ISO 14644-1',
  '2. Alert and action levels and how they were set',
  '3. Excursions and what they added',
  '4. Control charts',
  '5. Sign-offs',
] as const;

/** The most columns a table of the printed report has (A4 landscape at 8 pt); wider ones are cut into parts. */
export const REPORT_MAX_COLUMNS = 12;

export interface AuditReportProps {
  area: { id: string; name: string };
  query: AuditQuery;
  audit: AuditView | null;
  problems: string[];
  tables: AuditTable[];
  generatedAtMs: number;
  version: string;
}

export function AuditReportPage(p: AuditReportProps) {
  const a = p.audit;
  const t = (id: string) => p.tables.find((x) => x.id === id);
  const view = (id: string) => {
    const table = t(id);
    return table ? <AuditTableView table={table} href={null} maxColumns={REPORT_MAX_COLUMNS} /> : null;
  };
  const excursions = a?.excursions ?? [];
  const events = a?.events ?? [];
  // Each event is costed once (its excursions together), so the events' costs add up without double counting.
  const costs = a?.costs ?? [];
  const costed = costs.filter((c) => c.lots.length > 0);
  const addedVoids = costs.reduce((s, c) => s + c.totalAddedVoids, 0);
  const addedDieLoss = costs.reduce((s, c) => s + c.totalAddedDieLoss, 0);
  const labels = excursionLabels(excursions);
  const evLabels = eventLabels(events);
  const back = `/areas/${encodeURIComponent(p.area.id)}/audit?${auditQueryString(p.query)}`;
  return (
    <article class="vc-report-doc">
      <p class="vc-small vc-no-print">
        <a href={back}>Back to the audit page</a> · Print this page (Ctrl+P) for the paper copy; each section
        starts a new page.
      </p>
      <section class="vc-report-section vc-report-cover">
        <h1>{REPORT_HEADINGS[0]}</h1>
        <dl>
          <dt>Area</dt>
          <dd>
            {p.area.name} ({p.area.id})
          </dd>
          <dt>Period</dt>
          <dd>
            {a
              ? `${fmtUtc(a.period.fromMs)} to ${fmtUtc(a.period.toMs)}`
              : `${p.query.from} to ${p.query.to}`}
          </dd>
          <dt>Occupancy state</dt>
          <dd>{occupancyWords(p.query.occupancy)}</dd>
          <dt>Standard</dt>
          <dd>
            ISO 14644-1:{p.query.edition}
            {p.query.edition === 1999 ? ' (with the 95 % upper confidence limit of the mean)' : ''}
          </dd>
          <dt>Verdict</dt>
          <dd data-verdict={a?.classification.status ?? 'no data'}>
            {a
              ? `${a.classification.status}; class achieved ${classWords(a.classification.classAchieved)} against ${classWords(a.classification.classN)}`
              : 'no verdict'}
          </dd>
          <dt>Excursions</dt>
          <dd data-cover="excursions">
            {!a
              ? 'none judged'
              : `${excursions.length} in the period${
                  excursions.length
                    ? ` in ${events.length} event${events.length === 1 ? '' : 's'}: ${events.filter((e) => e.nature === 'air').length} in the air, ${events.filter((e) => e.nature === 'instrument').length} counter fault${events.filter((e) => e.nature === 'instrument').length === 1 ? '' : 's'}, ${events.filter((e) => e.nature === 'unclear').length} unclear`
                    : ''
                }`}
          </dd>
          {a && events.length > 0 ? (
            <>
              <dt>Added by the events</dt>
              <dd data-cover="added">
                {costs.length === 0
                  ? 'not costed in this report'
                  : `${fmtNum(addedVoids)} expected voids and ${fmtNum(addedDieLoss)} dies of loss in all, each event counted once (its excursions together)${
                      costed.length
                        ? `: ${costed
                            .map(
                              (c) =>
                                `${evLabels.get(c.eventId) ?? c.eventId} (${c.excursionIds.map((id) => labels.get(id) ?? id).join(', ')}) ${fmtNum(c.totalAddedVoids)} voids`,
                            )
                            .join('; ')}`
                        : ''
                    }`}
              </dd>
            </>
          ) : null}
          <dt>Drawn up</dt>
          <dd>
            {fmtUtc(p.generatedAtMs)} by voidcast {p.version}
          </dd>
        </dl>
        {p.problems.length ? (
          <div class="vc-error" data-problems="">
            <p>This audit cannot give a full verdict:</p>
            <ul>
              {p.problems.map((x) => (
                <li>{x}</li>
              ))}
            </ul>
          </div>
        ) : null}
        <p class="vc-caution">
          voidcast estimates particle and void risk from the counter data, the route ledger and the models it
          names; it does not replace the site's contamination-control procedures. Any re-clean goes through
          authorised recipes, re-clean count limits and qualified people, and defers to local codes, safety
          data sheets and licensed practice.
        </p>
      </section>
      <section class="vc-report-section">
        <h2>{REPORT_HEADINGS[1]}</h2>
        {view('classification-summary')}
        <h3>Considered sizes</h3>
        {view('classification-sizes')}
        <h3>Sampling locations</h3>
        {view('classification-locations')}
      </section>
      <section class="vc-report-section">
        <h2>{REPORT_HEADINGS[2]}</h2>
        {view('levels')}
      </section>
      <section class="vc-report-section">
        <h2>{REPORT_HEADINGS[3]}</h2>
        {view('excursions')}
        <h3>Events and what each added</h3>
        <p class="vc-small">
          Excursions whose hours overlap at a location are one event; each event is costed once, over the
          union of its excursions' hours.
        </p>
        {view('events')}
        <h3>Exposed wafers</h3>
        {view('exposed-wafers')}
        <h3>Added risk per lot</h3>
        {view('lot-costs')}
      </section>
      <section class="vc-report-section">
        <h2>{REPORT_HEADINGS[4]}</h2>
        {view('control-charts')}
        {a?.charts ? (
          <p class="vc-small">
            Drawn: the locations and channels with alert or action levels or an excursion in the period (the
            table lists every chart).
          </p>
        ) : null}
        {chartsShown(a?.charts ?? [], a?.levels ?? [], a?.excursions ?? [], false).map((ch) => (
          <ControlChartFigure chart={ch} levels={a?.levels ?? []} width={900} />
        ))}
      </section>
      <section class="vc-report-section vc-signoffs">
        <h2>{REPORT_HEADINGS[5]}</h2>
        <h3>Acknowledged excursions</h3>
        {excursions.some((e) => e.acknowledgement) ? (
          <table class="vc-table vc-table-compact" data-table="acknowledgements">
            <thead>
              <tr>
                <th>Excursion</th>
                <th>By</th>
                <th>At (UTC)</th>
                <th>Comment</th>
              </tr>
            </thead>
            <tbody>
              {excursions
                .filter((e) => e.acknowledgement)
                .map((e) => (
                  <tr>
                    <td>{labels.get(e.id)}</td>
                    <td>{e.acknowledgement!.account}</td>
                    <td>{fmtUtc(e.acknowledgement!.atMs)}</td>
                    <td>{e.acknowledgement!.comment}</td>
                  </tr>
                ))}
            </tbody>
          </table>
        ) : (
          <p>No excursion of this period has been acknowledged.</p>
        )}
        <h3>Reviewed and signed</h3>
        <table class="vc-table" data-table="signatures">
          <thead>
            <tr>
              <th>Role</th>
              <th>Name</th>
              <th>Signature</th>
              <th>Date</th>
            </tr>
          </thead>
          <tbody>
            {['Contamination-control engineer', 'Area owner', 'Quality'].map((role) => (
              <tr>
                <td>{role}</td>
                <td />
                <td />
                <td />
              </tr>
            ))}
          </tbody>
        </table>
      </section>
    </article>
  );
}
