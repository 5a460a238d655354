/**
 * The validation report of one imported file: its status, the counts, the data-quality flags and
 * every rejected row (file, line, column, value, rule), a page at a time.
 *
 * Every text here may come from a file (names, values, the file name): it is rendered as text,
 * which hono/jsx escapes; nothing is inserted as raw HTML.
 */
import { groupDigits } from './format.ts';

/** The shape of an import report as this view needs it (the import contract's ImportReport). */
export interface ReportView {
  file: string;
  kind: string;
  sha256: string;
  status: 'imported' | 'partial' | 'rejected' | 'unchanged';
  rowsRead: number;
  rowsStored: number;
  rowsRejected: number;
  duplicates: number;
  issues: { file: string; line: number; column: string | null; value: string | null; rule: string }[];
  flags: { code: string; count: number; detail: string }[];
  notes?: string[];
  bytes?: number;
}

export const ISSUES_PER_PAGE = 100;

const STATUS_TEXT: Record<ReportView['status'], string> = {
  imported: 'Imported',
  partial: 'Partly imported',
  rejected: 'Rejected',
  unchanged: 'Unchanged',
};

const STATUS_EXPLAINED: Record<ReportView['status'], string> = {
  imported: 'Every row was valid and is stored.',
  partial: 'The valid rows are stored; the rows listed below were left out.',
  rejected: 'Nothing of this file was stored. Correct the rows listed below and import it again.',
  unchanged: 'This exact content (same SHA-256) was imported before; nothing changed.',
};

export function StatusBadge(props: { status: ReportView['status'] }) {
  return <span class={`vc-status vc-status-${props.status}`}>{STATUS_TEXT[props.status]}</span>;
}

const n = (v: number) => groupDigits(v);

/** Where page `p` of a report's rejected rows is: a full page (href) and the table alone (hx-get). */
export type IssuePageLink = (page: number) => { href: string; hxGet: string };

/** The page links of a job's file `index`. */
export function jobIssueLinks(jobId: string, index: number): IssuePageLink {
  const base = `/imports/jobs/${encodeURIComponent(jobId)}`;
  return (p) => ({
    href: `${base}?file=${index}&page=${p}#issues-${index}`,
    hxGet: `${base}/files/${index}/issues?page=${p}`,
  });
}

export function ImportReport(props: {
  report: ReportView;
  index: number;
  links: IssuePageLink;
  page?: number;
}) {
  const r = props.report;
  return (
    <article class="vc-report" id={`report-${props.index}`} aria-labelledby={`report-${props.index}-title`}>
      <header class="vc-report-head">
        <h3 id={`report-${props.index}-title`}>
          <span class="vc-filename">{r.file}</span> <span class="vc-small">({r.kind})</span>
        </h3>
        <StatusBadge status={r.status} />
      </header>
      <p class="vc-small">{STATUS_EXPLAINED[r.status]}</p>
      <dl class="vc-counts">
        <div>
          <dt>Rows read</dt>
          <dd class="num">{n(r.rowsRead)}</dd>
        </div>
        <div>
          <dt>Stored</dt>
          <dd class="num">{n(r.rowsStored)}</dd>
        </div>
        <div>
          <dt>Rejected</dt>
          <dd class="num">{n(r.rowsRejected)}</dd>
        </div>
        <div>
          <dt>Duplicates</dt>
          <dd class="num">{n(r.duplicates)}</dd>
        </div>
        <div>
          <dt>SHA-256</dt>
          <dd>
            <code title={r.sha256}>{r.sha256.slice(0, 12)}</code>
          </dd>
        </div>
      </dl>
      {r.notes && r.notes.length > 0 ? (
        <ul class="vc-notes">
          {r.notes.map((note) => (
            <li>{note}</li>
          ))}
        </ul>
      ) : null}
      {r.flags.length > 0 ? (
        <>
          <h4>Data-quality flags</h4>
          <table class="vc-table vc-flags">
            <thead>
              <tr>
                <th>Flag</th>
                <th class="num">Rows</th>
                <th>Detail</th>
              </tr>
            </thead>
            <tbody>
              {r.flags.map((f) => (
                <tr>
                  <td>
                    <code>{f.code}</code>
                  </td>
                  <td class="num">{n(f.count)}</td>
                  <td>{f.detail}</td>
                </tr>
              ))}
            </tbody>
          </table>
        </>
      ) : null}
      {r.issues.length > 0 ? (
        <ImportIssues issues={r.issues} index={props.index} links={props.links} page={props.page ?? 1} />
      ) : null}
    </article>
  );
}

/**
 * The rejected rows of one file, `ISSUES_PER_PAGE` at a time. The page links work without
 * script (a full page) and, with htmx, swap this table alone.
 */
export function ImportIssues(props: {
  issues: ReportView['issues'];
  index: number;
  links: IssuePageLink;
  page: number;
}) {
  const total = props.issues.length;
  const pages = Math.max(1, Math.ceil(total / ISSUES_PER_PAGE));
  const page = Math.min(Math.max(1, Math.trunc(props.page) || 1), pages);
  const from = (page - 1) * ISSUES_PER_PAGE;
  const shown = props.issues.slice(from, from + ISSUES_PER_PAGE);
  const id = `issues-${props.index}`;
  const link = (p: number, label: string) => {
    const to = props.links(p);
    return (
      <a
        href={to.href}
        hx-get={to.hxGet}
        hx-target={`#${id}`}
        hx-swap="outerHTML"
        rel={label === 'Next' ? 'next' : label === 'Previous' ? 'prev' : undefined}
      >
        {label}
      </a>
    );
  };
  return (
    <section class="vc-issues" id={id}>
      <h4>Rejected rows</h4>
      <p class="vc-small">
        {total > ISSUES_PER_PAGE
          ? `Showing ${n(from + 1)}–${n(from + shown.length)} of ${n(total)} listed problems.`
          : `${n(total)} listed ${total === 1 ? 'problem' : 'problems'}.`}
      </p>
      <table class="vc-table vc-issue-table">
        <thead>
          <tr>
            <th>File</th>
            <th class="num">Line</th>
            <th>Column</th>
            <th>Value</th>
            <th>Rule</th>
          </tr>
        </thead>
        <tbody>
          {shown.map((i) => (
            <tr>
              <td class="vc-filename">{i.file}</td>
              <td class="num">{i.line === 0 ? '—' : n(i.line)}</td>
              <td>{i.column === null ? '—' : <code>{i.column}</code>}</td>
              <td>{i.value === null ? '—' : <code class="vc-value">{i.value}</code>}</td>
              <td>{i.rule}</td>
            </tr>
          ))}
        </tbody>
      </table>
      {pages > 1 ? (
        <nav class="vc-pager" aria-label="Pages of rejected rows">
          {page > 1 ? link(page - 1, 'Previous') : <span>Previous</span>}
          <span>
            Page {page} of {pages}
          </span>
          {page < pages ? link(page + 1, 'Next') : <span>Next</span>}
        </nav>
      ) : null}
    </section>
  );
}
