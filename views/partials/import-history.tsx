/**
 * The history of imports, newest first: when, file name, kind, content hash (short), rows,
 * data-quality flags, status — one page at a time, optionally of one kind, so that every import
 * can be reached. The pager and the kind filter are plain links and a GET form on /imports
 * (`?history=N&historyKind=K`); htmx swaps the section in place from /imports/history. `oob`
 * marks it for an htmx out-of-band swap (a finished job refreshes the history without reloading
 * the page).
 */
import { groupDigits } from './format.ts';
import { StatusBadge } from './import-report.tsx';

/** Which page of the history, of which kind. */
export interface HistoryPaging {
  /** 1-based page shown. */
  page: number;
  /** Imports per page. */
  perPage: number;
  /** The kind the history is filtered to, or null for every kind. */
  kind: string | null;
  /** The kinds offered by the filter. */
  kinds: readonly string[];
}

/** The query of a history page, for /imports (no script) and /imports/history (htmx). */
export function historyQuery(page: number, kind: string | null): string {
  const q = new URLSearchParams();
  if (page > 1) q.set('history', String(page));
  if (kind) q.set('historyKind', kind);
  const s = q.toString();
  return s ? `?${s}` : '';
}

/**
 * htmx on the section: a refusal (400: a page or kind that does not exist) is swapped in with its
 * reason — by the served script's data-swap-error-codes rule (public/voidcast.js), as the CSP allows
 * no inline handler.
 */
const SWAP_REFUSALS = { 'data-swap-error-codes': '400' };

export interface HistoryRowView {
  id: number;
  /** ISO 8601 UTC. */
  importedAt: string;
  file: string;
  kind: string;
  sha256: string;
  status: 'imported' | 'partial' | 'rejected' | 'unchanged';
  rowsRead: number | null;
  rowsStored: number;
  rowsRejected: number | null;
  duplicates: number | null;
  flags: { code: string; count: number }[];
}

/** "2025-03-04 13:05 UTC" from an ISO timestamp; the text itself when it is not one. */
export function shortUtc(iso: string): string {
  const d = new Date(iso);
  if (Number.isNaN(d.getTime())) return iso;
  return `${d.toISOString().slice(0, 16).replace('T', ' ')} UTC`;
}

export function ImportHistory(props: {
  rows: HistoryRowView[];
  total: number;
  paging?: HistoryPaging;
  /** Why the page asked for cannot be shown (a 400 answer), in words. */
  error?: string | null;
  oob?: boolean;
}) {
  const n = (v: number | null) => (v === null ? '—' : groupDigits(v));
  const paging: HistoryPaging = props.paging ?? {
    page: 1,
    perPage: props.rows.length || 1,
    kind: null,
    kinds: [],
  };
  const pages = Math.max(1, Math.ceil(props.total / paging.perPage));
  const first = (paging.page - 1) * paging.perPage + 1;
  const ofKind = paging.kind ? ` of kind ${paging.kind}` : '';
  return (
    <section
      id="import-history"
      class="vc-history"
      hx-swap-oob={props.oob ? 'true' : undefined}
      {...SWAP_REFUSALS}
    >
      <h2>History</h2>
      {paging.kinds.length > 0 ? <HistoryFilter paging={paging} /> : null}
      {props.error ? (
        <p class="vc-error" role="alert">
          {props.error}
        </p>
      ) : null}
      {props.rows.length === 0 ? (
        <p class="vc-small">
          {paging.kind
            ? `No ${paging.kind} files have been imported into this database.`
            : 'No files have been imported into this database yet.'}
        </p>
      ) : (
        <>
          <p class="vc-small" data-history-page={paging.page} data-history-pages={pages}>
            {props.total > props.rows.length
              ? `Imports ${first}–${first + props.rows.length - 1} of ${groupDigits(props.total)}${ofKind}, newest first (page ${paging.page} of ${pages}).`
              : `${props.total} ${props.total === 1 ? 'import' : 'imports'}${ofKind}.`}
          </p>
          <table class="vc-table vc-history-table">
            <thead>
              <tr>
                <th>When</th>
                <th>File</th>
                <th>Kind</th>
                <th>SHA-256</th>
                <th class="num">Rows read</th>
                <th class="num">Stored</th>
                <th class="num">Rejected</th>
                <th>Flags</th>
                <th>Status</th>
              </tr>
            </thead>
            <tbody>
              {props.rows.map((r) => (
                <tr>
                  <td>
                    <time datetime={r.importedAt}>{shortUtc(r.importedAt)}</time>
                  </td>
                  <td class="vc-filename">
                    <a href={`/imports/history/${r.id}`}>{r.file}</a>
                  </td>
                  <td>{r.kind}</td>
                  <td>
                    <code title={r.sha256}>{r.sha256.slice(0, 12)}</code>
                  </td>
                  <td class="num">{n(r.rowsRead)}</td>
                  <td class="num">{n(r.rowsStored)}</td>
                  <td class="num">{n(r.rowsRejected)}</td>
                  <td>
                    {r.flags.length === 0
                      ? '—'
                      : r.flags.map((f, i) => (
                          <>
                            {i > 0 ? ', ' : ''}
                            <code>{f.code}</code> ×{groupDigits(f.count)}
                          </>
                        ))}
                  </td>
                  <td>
                    <StatusBadge status={r.status} />
                  </td>
                </tr>
              ))}
            </tbody>
          </table>
          {pages > 1 ? <HistoryPager paging={paging} pages={pages} /> : null}
        </>
      )}
    </section>
  );
}

/** The kind filter: a GET form to /imports (no script), swapped in place by htmx. */
function HistoryFilter(props: { paging: HistoryPaging }) {
  return (
    <form
      class="vc-inline-form vc-history-filter"
      method="get"
      action="/imports#import-history"
      hx-get="/imports/history"
      hx-target="#import-history"
      hx-swap="outerHTML"
      hx-trigger="change, submit"
    >
      <label>
        Kind{' '}
        <select name="historyKind">
          <option value="" selected={props.paging.kind === null}>
            every kind
          </option>
          {props.paging.kinds.map((k) => (
            <option value={k} selected={props.paging.kind === k}>
              {k}
            </option>
          ))}
        </select>
      </label>
      <button type="submit">Show</button>
    </form>
  );
}

/** First, previous, next and last page: links that work without script, swapped by htmx. */
function HistoryPager(props: { paging: HistoryPaging; pages: number }) {
  const { page, kind } = props.paging;
  const link = (to: number, label: string, rel?: string) =>
    to < 1 || to > props.pages || to === page ? (
      <span>{label}</span>
    ) : (
      <a
        href={`/imports${historyQuery(to, kind)}#import-history`}
        hx-get={`/imports/history${historyQuery(to, kind)}`}
        hx-target="#import-history"
        hx-swap="outerHTML"
        rel={rel}
      >
        {label}
      </a>
    );
  return (
    <nav class="vc-pager" aria-label="History pages">
      {link(1, '« newest')}
      {link(page - 1, '‹ newer', 'prev')}
      <span>
        page {page} of {props.pages}
      </span>
      {link(page + 1, 'older ›', 'next')}
      {link(props.pages, 'oldest »')}
    </nav>
  );
}
