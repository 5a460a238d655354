/**
 * The Imports page: the upload form, the current job (progress, then the validation report) and
 * the history of imports. /imports and /imports/jobs/:id render this same page; htmx swaps the
 * parts (#import-job, #import-history) with the same partials.
 */
import type { Child } from 'hono/jsx';
import {
  ImportErrors,
  ImportForm,
  type ImportFormProps,
  importTargetAttrs,
} from '../partials/import-form.tsx';
import { type HistoryPaging, type HistoryRowView, ImportHistory } from '../partials/import-history.tsx';
import { ImportJob, type JobView } from '../partials/import-job.tsx';

export interface ImportsPageProps {
  form: ImportFormProps;
  /** What #import-job holds: a job, refusal messages, or nothing yet. */
  job?: JobView | null;
  page?: { file: number; page: number };
  errors?: { heading: string; errors: string[] } | null;
  notice?: Child;
  history: HistoryRowView[];
  historyTotal: number;
  historyPaging?: HistoryPaging;
  /** Why the history page asked for cannot be shown (the page then answers 400). */
  historyError?: string | null;
}

export function ImportsPage(props: ImportsPageProps) {
  return (
    <section class="vc-imports">
      <h1>Imports</h1>
      <p class="vc-lede">
        Load particle-counter logs, surface scans, the exposure ledger, locations, tools, products, pairs and
        post-bond void inspections. Every file is checked row by row; each rejected row is listed with its
        line, column and the rule it breaks. A rejected file stores nothing, and the same content imported
        twice changes nothing.
      </p>
      <ImportForm {...props.form} />
      <section id="import-job" class="vc-import-job" aria-live="polite" {...importTargetAttrs}>
        {props.errors ? <ImportErrors {...props.errors} /> : null}
        {props.notice ?? null}
        {props.job ? <ImportJob job={props.job} page={props.page} /> : null}
      </section>
      <ImportHistory
        rows={props.history}
        total={props.historyTotal}
        paging={props.historyPaging}
        error={props.historyError ?? null}
      />
    </section>
  );
}
