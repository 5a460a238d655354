/**
 * The history of imports, newest first: when, file name, kind, content hash (short), rows,
 * data-quality flags, status. `oob` marks it for an htmx out-of-band swap (a finished job
 * refreshes the history without reloading the page).
 */
import { StatusBadge } from './import-report.tsx';

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

export function ImportHistory(props: { rows: HistoryRowView[]; total: number; oob?: boolean }) {
  const n = (v: number | null) => (v === null ? '—' : v.toLocaleString('en-US'));
  return (
    <section id="import-history" class="vc-history" hx-swap-oob={props.oob ? 'true' : undefined}>
      <h2>History</h2>
      {props.rows.length === 0 ? (
        <p class="vc-small">No files have been imported into this database yet.</p>
      ) : (
        <>
          <p class="vc-small">
            {props.total > props.rows.length
              ? `The latest ${props.rows.length} of ${props.total.toLocaleString('en-US')} imports.`
              : `${props.total} ${props.total === 1 ? 'import' : 'imports'}.`}
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
                            <code>{f.code}</code> ×{f.count.toLocaleString('en-US')}
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
        </>
      )}
    </section>
  );
}
