/**
 * The upload form. Without script it is a plain multipart POST to /imports (answered with a
 * redirect to the job page). With htmx it posts in place into #import-job, shows the bytes sent,
 * and refuses, before sending, files larger than the upload limit.
 *
 * Responses the server marks as refused (400, 403, 413, 422) carry their explanation as HTML;
 * htmx 2 does not swap 4xx responses by default, so `#import-job` (the swap target, where
 * htmx:beforeSwap fires) names exactly those codes in `data-swap-error-codes` and the served script
 * (public/voidcast.js) turns swapping on for them, keeping every other error code unswapped.
 * The size check and the progress bar live in that script too (htmx events on #import-form).
 */
import type { Child } from 'hono/jsx';

export interface KindOption {
  name: string;
  summary: string;
  /** False when this build cannot import the kind yet (shown, not selectable). */
  available: boolean;
}

export interface ImportFormProps {
  kinds: KindOption[];
  values: { kind: string; acceptValidRows: boolean };
  /** The hidden CSRF field (first in the form). */
  csrf: Child;
  /** JSON for hx-headers carrying the CSRF token. */
  csrfHeaders: string;
  limitBytes: number;
  /** The limit for people, e.g. "512 MiB". */
  limitText: string;
}

/** Status codes whose bodies explain a refusal and are swapped into #import-job. */
export const SWAPPED_ERROR_CODES = [400, 403, 404, 413, 422] as const;

/**
 * Attributes of the swap target #import-job: the status codes whose explanatory bodies are swapped
 * (read by /assets/voidcast.js; no inline handler, so the Content-Security-Policy forbids them all).
 */
export const importTargetAttrs: Record<string, string> = {
  'data-swap-error-codes': SWAPPED_ERROR_CODES.join(' '),
};

export function ImportForm(props: ImportFormProps) {
  const htmx: Record<string, string> = {
    'hx-post': '/imports',
    'hx-encoding': 'multipart/form-data',
    'hx-target': '#import-job',
    'hx-swap': 'innerHTML',
    'hx-headers': props.csrfHeaders,
  };
  return (
    <form
      id="import-form"
      class="vc-form vc-import-form"
      method="post"
      action="/imports"
      enctype="multipart/form-data"
      data-limit-bytes={String(props.limitBytes)}
      {...htmx}
    >
      {props.csrf}
      <label for="import-kind">Kind of file</label>
      <select id="import-kind" name="kind" required>
        {props.kinds.map((k) => (
          <option value={k.name} selected={k.name === props.values.kind} disabled={!k.available}>
            {k.available
              ? k.summary
                ? `${k.name} — ${k.summary}`
                : k.name
              : `${k.name} (not available in this build)`}
          </option>
        ))}
      </select>
      <label for="import-files">Files</label>
      <input id="import-files" type="file" name="files" multiple required />
      <span />
      <label class="vc-check">
        <input type="checkbox" name="acceptValidRows" value="on" checked={props.values.acceptValidRows} />{' '}
        Import the valid rows, list the rest
      </label>
      <span />
      <div class="vc-form-actions">
        <button type="submit">Import</button>
        <span class="vc-small">Up to {props.limitText} per upload. A rejected file stores nothing.</span>
      </div>
      <p id="import-too-large" class="vc-error vc-form-wide" role="alert" hidden>
        The chosen files are larger than the upload limit of {props.limitText}. Nothing was sent. Split the
        files, or ask the operator to raise the limit.
      </p>
      <p id="import-send-error" class="vc-error vc-form-wide" role="alert" hidden>
        The upload could not be sent (the connection was closed). Check the file sizes against the limit of{' '}
        {props.limitText} and try again.
      </p>
      <p id="import-sending" class="vc-form-wide" hidden>
        Sending <progress class="vc-progress" max={1} value={0} aria-label="Bytes sent" />
      </p>
    </form>
  );
}

/** A refused submission: what was wrong, in words (swapped into #import-job, or inside the page). */
export function ImportErrors(props: { heading: string; errors: string[] }) {
  return (
    <div class="vc-error vc-import-errors" role="alert">
      <p>
        <strong>{props.heading}</strong>
      </p>
      <ul>
        {props.errors.map((e) => (
          <li>{e}</li>
        ))}
      </ul>
    </div>
  );
}
