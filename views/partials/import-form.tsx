/**
 * The upload form. Without script it is a plain multipart POST to /imports (answered with a
 * redirect to the job page). With htmx it posts in place into #import-job, shows the bytes sent,
 * and refuses, before sending, files larger than the upload limit.
 *
 * Responses the server marks as refused (400, 403, 413, 422) carry their explanation as HTML;
 * htmx 2 does not swap 4xx responses by default, so `#import-job` (the swap target, where
 * htmx:beforeSwap fires) turns swapping on for exactly those codes and keeps every other error
 * code unswapped. `importTargetAttrs` holds that rule for the page to spread on the target.
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

/** htmx attributes of the swap target #import-job: swap the explanatory 4xx responses. */
export const importTargetAttrs: Record<string, string> = {
  'hx-on::before-swap': `var s=event.detail.xhr.status;if(${SWAPPED_ERROR_CODES.map((c) => `s===${c}`).join('||')}){event.detail.shouldSwap=true;event.detail.isError=false;}`,
};

// Runs before htmx sends the form: refuse oversize files at once, else show the upload progress.
const BEFORE_REQUEST = [
  'if(event.detail.elt!==this)return;',
  "var big=document.getElementById('import-too-large'),send=document.getElementById('import-sending');",
  'var t=0,fs=this.elements.files.files;for(var i=0;i<fs.length;i++)t+=fs[i].size;',
  'if(t>Number(this.dataset.limitBytes)){event.preventDefault();big.hidden=false;send.hidden=true;return;}',
  "big.hidden=true;send.hidden=false;send.querySelector('progress').value=0;",
].join('');
const XHR_PROGRESS =
  "if(event.detail.lengthComputable){var p=document.querySelector('#import-sending progress');p.max=event.detail.total;p.value=event.detail.loaded;}";
const AFTER_REQUEST = [
  "document.getElementById('import-sending').hidden=true;",
  "if(event.detail.xhr&&event.detail.xhr.status===200)this.elements.files.value='';",
].join('');
const SEND_ERROR =
  "document.getElementById('import-sending').hidden=true;document.getElementById('import-send-error').hidden=false;";

export function ImportForm(props: ImportFormProps) {
  const htmx: Record<string, string> = {
    'hx-post': '/imports',
    'hx-encoding': 'multipart/form-data',
    'hx-target': '#import-job',
    'hx-swap': 'innerHTML',
    'hx-headers': props.csrfHeaders,
    'hx-on::before-request': BEFORE_REQUEST,
    'hx-on::xhr:progress': XHR_PROGRESS,
    'hx-on::after-request': AFTER_REQUEST,
    'hx-on::send-error': SEND_ERROR,
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
