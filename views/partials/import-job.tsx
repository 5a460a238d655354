/**
 * One upload's import job. While it runs, a self-polling progress partial (htmx `load delay:500ms`
 * replaces it with the next state; without script a refresh every 2 s does); once finished, the
 * validation report of every file. The same partial serves the full page and the htmx swap.
 */
import { groupDigits } from './format.ts';
import { ImportReport, jobIssueLinks, type ReportView } from './import-report.tsx';

export interface JobFileView {
  name: string;
  kind: string;
  state: 'queued' | 'running' | 'done' | 'failed';
  bytesRead: number;
  bytesTotal: number;
  rows: number;
  report: ReportView | null;
  error: string | null;
  /** While the file waits for another process writing to the database: since when, ISO 8601 UTC. */
  waitingSince?: string | null;
}

export interface JobView {
  id: string;
  state: 'queued' | 'running' | 'done' | 'failed';
  files: JobFileView[];
  /** When it was started, ISO 8601 UTC. */
  startedAt: string;
}

/** Poll interval of the progress partial. */
export const POLL_DELAY = '500ms';

function bytes(v: number): string {
  if (v < 1024) return `${v} B`;
  if (v < 1024 ** 2) return `${(v / 1024).toFixed(1)} KiB`;
  if (v < 1024 ** 3) return `${(v / 1024 ** 2).toFixed(1)} MiB`;
  return `${(v / 1024 ** 3).toFixed(2)} GiB`;
}

const finished = (s: JobView['state']) => s === 'done' || s === 'failed';

export function ImportJob(props: { job: JobView; page?: { file: number; page: number } }) {
  const job = props.job;
  const url = `/imports/jobs/${encodeURIComponent(job.id)}`;
  if (!finished(job.state)) {
    const total = job.files.reduce((s, f) => s + f.bytesTotal, 0);
    const read = job.files.reduce(
      (s, f) => s + (f.state === 'done' || f.state === 'failed' ? f.bytesTotal : f.bytesRead),
      0,
    );
    return (
      <div
        class="vc-job vc-job-running"
        id={`job-${job.id}`}
        hx-get={url}
        hx-trigger={`load delay:${POLL_DELAY}`}
        hx-swap="outerHTML"
        aria-busy="true"
      >
        <noscript>
          <meta http-equiv="refresh" content="2" />
        </noscript>
        <h2>Importing</h2>
        <p>
          <progress
            class="vc-progress"
            max={Math.max(total, 1)}
            value={read}
            aria-label="Bytes imported of all files"
          />
        </p>
        <p class="vc-small" aria-live="polite">
          {bytes(read)} of {bytes(total)} read
          {job.state === 'queued' ? ' — waiting for an earlier import to finish' : ''}.
        </p>
        {job.files
          .filter((f) => f.state === 'running' && f.waitingSince)
          .map((f) => (
            <p class="vc-job-wait" role="status">
              Waiting for another writer: another process (a command-line import, another server) is writing
              to the database since {clock(f.waitingSince!)}. <span class="vc-filename">{f.name}</span> is
              imported as soon as it has finished; nothing is lost by waiting.
            </p>
          ))}
        <table class="vc-table vc-job-files">
          <thead>
            <tr>
              <th>File</th>
              <th>Kind</th>
              <th>State</th>
              <th class="num">Read</th>
              <th class="num">Rows</th>
            </tr>
          </thead>
          <tbody>
            {job.files.map((f) => (
              <tr>
                <td class="vc-filename">{f.name}</td>
                <td>{f.kind}</td>
                <td>
                  {f.state === 'running' && f.waitingSince
                    ? `waiting for another writer since ${clock(f.waitingSince)}`
                    : stateText(f.state)}
                </td>
                <td class="num">
                  <progress
                    max={Math.max(f.bytesTotal, 1)}
                    value={f.state === 'done' ? f.bytesTotal : f.bytesRead}
                  />{' '}
                  {bytes(f.state === 'done' ? f.bytesTotal : f.bytesRead)} / {bytes(f.bytesTotal)}
                </td>
                <td class="num">{groupDigits(f.rows)}</td>
              </tr>
            ))}
          </tbody>
        </table>
        <p class="vc-small">
          <a href={url}>Refresh</a> if this view does not update by itself.
        </p>
      </div>
    );
  }
  const reports = job.files.filter((f) => f.report !== null).map((f) => f.report!);
  return (
    <div class="vc-job vc-job-done" id={`job-${job.id}`}>
      <h2>Import report</h2>
      <Summary reports={reports} failed={job.files.filter((f) => f.state === 'failed')} />
      {job.files.map((f, i) =>
        f.report ? (
          <ImportReport
            report={f.report}
            index={i}
            links={jobIssueLinks(job.id, i)}
            page={props.page && props.page.file === i ? props.page.page : 1}
          />
        ) : (
          <article class="vc-report" id={`report-${i}`}>
            <header class="vc-report-head">
              <h3>
                <span class="vc-filename">{f.name}</span> <span class="vc-small">({f.kind})</span>
              </h3>
              <span class="vc-status vc-status-rejected">Failed</span>
            </header>
            <p class="vc-error" role="alert">
              {f.error ?? 'The import stopped with an internal error.'} Nothing of this file was stored.
            </p>
          </article>
        ),
      )}
    </div>
  );
}

/** A time, UTC, to the second: 2026-03-02T08:00:05.123Z → 2026-03-02 08:00:05 UTC. */
function clock(iso: string): string {
  return `${iso.slice(0, 10)} ${iso.slice(11, 19)} UTC`;
}

function stateText(s: JobFileView['state']): string {
  return s === 'queued' ? 'waiting' : s === 'running' ? 'reading' : s === 'done' ? 'finished' : 'failed';
}

function Summary(props: { reports: ReportView[]; failed: JobFileView[] }) {
  const by = (s: ReportView['status']) => props.reports.filter((r) => r.status === s).length;
  const parts = [
    [by('imported'), 'imported'],
    [by('partial'), 'partly imported'],
    [by('rejected'), 'rejected'],
    [by('unchanged'), 'unchanged'],
    [props.failed.length, 'failed'],
  ] as const;
  const text = parts
    .filter(([count]) => count > 0)
    .map(([count, word]) => `${count} ${word}`)
    .join(', ');
  const files = props.reports.length + props.failed.length;
  return (
    <p class="vc-job-summary" role="status">
      {files} {files === 1 ? 'file' : 'files'}: {text}.
    </p>
  );
}
