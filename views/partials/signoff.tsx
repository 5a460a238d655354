/**
 * The sign-off of a pair's call: a form (name, role, the call signed, a comment) that posts
 * without script and is swapped in place with htmx, and the record of earlier sign-offs.
 *
 * The form carries the hash of the inputs the page was drawn from; the server refuses the
 * sign-off when the inputs have changed since (new scans, ledger steps or counter data), so
 * nobody signs figures they have not seen. The assessment time is the server's: the form returns the
 * signed reference the server issued with the page, never a time of the client's choosing.
 */
import { CallBadge, type CallName } from './call.tsx';
import { fmtUtc } from './format.ts';

export interface SignoffRecordLike {
  id: number;
  call: CallName;
  proposedCall: CallName;
  signedBy: string;
  comment: string | null;
  signedAtMs: number;
  inputsHash: string;
  modelVersion: string;
  specVersion: string;
}

export interface SignoffValues {
  name: string;
  role: string;
  call: CallName;
  comment: string;
}

export interface SignoffProps {
  pairId: string;
  inputsHash: string;
  /** Assessment time of the figures shown, UTC ms: the sign-off re-assesses at this time. */
  asOfMs: number;
  proposedCall: CallName;
  csrfToken: string;
  /** The server's signed reference to the assessment shown (src/web/assessment-ref.ts). */
  assessmentRef: string;
  records: SignoffRecordLike[];
  /** Set when a sign-off was refused: what to fix, in plain words. */
  error?: string | null;
  /** Set after a sign-off was stored. */
  stored?: SignoffRecordLike | null;
  values?: Partial<SignoffValues>;
}

export const SIGNOFF_ROLES = [
  'bonding process engineer',
  'contamination-control engineer',
  'cleaning / module engineer',
  'line or yield owner',
] as const;

const CALLS: CallName[] = ['bond', 're-clean', 'hold'];

export function SignoffPanel(props: SignoffProps) {
  const action = `/pairs/${encodeURIComponent(props.pairId)}/signoff`;
  const v = props.values ?? {};
  const call = v.call ?? props.proposedCall;
  return (
    <section class="vc-signoff vc-panel" id="signoff">
      <h2>Sign-off</h2>
      {props.stored ? (
        <p class="vc-success" role="status">
          Signed: <CallBadge call={props.stored.call} /> by {props.stored.signedBy} at{' '}
          {fmtUtc(props.stored.signedAtMs)}.
        </p>
      ) : null}
      {props.error ? (
        <p class="vc-error" role="alert">
          {props.error}
        </p>
      ) : null}
      <form
        class="vc-form"
        method="post"
        action={action}
        hx-post={action}
        hx-target="#signoff"
        hx-swap="outerHTML"
      >
        <input type="hidden" name="_csrf" value={props.csrfToken} />
        <input type="hidden" name="inputsHash" value={props.inputsHash} />
        <input type="hidden" name="asOfMs" value={String(props.asOfMs)} />
        <input type="hidden" name="assessmentRef" value={props.assessmentRef} />
        <label for="signoff-name">Name</label>
        <input
          id="signoff-name"
          name="name"
          required
          maxlength={120}
          value={v.name ?? ''}
          autocomplete="name"
        />
        <label for="signoff-role">Role</label>
        <select id="signoff-role" name="role" required>
          {SIGNOFF_ROLES.map((r) => (
            <option value={r} selected={v.role === r}>
              {r}
            </option>
          ))}
        </select>
        <label for="signoff-call">Call signed</label>
        <select id="signoff-call" name="call">
          {CALLS.map((c) => (
            <option value={c} selected={c === call}>
              {c}
              {c === props.proposedCall ? ' (proposed)' : ''}
            </option>
          ))}
        </select>
        <label for="signoff-comment">Comment</label>
        <textarea id="signoff-comment" name="comment" rows={2} maxlength={2000}>
          {v.comment ?? ''}
        </textarea>
        <span></span>
        <span class="vc-small">A call other than the proposed one needs a comment saying why.</span>
        <span></span>
        <button type="submit">Sign off this call</button>
      </form>
      <p class="vc-small">
        Inputs <code>{props.inputsHash.slice(0, 12)}…</code> — the sign-off is refused if they change before
        you sign.
      </p>
      {props.records.length > 0 ? (
        <table class="vc-table vc-table-compact vc-signoff-records">
          <thead>
            <tr>
              <th>Signed</th>
              <th>Call</th>
              <th>Proposed</th>
              <th>By</th>
              <th>Comment</th>
              <th>Inputs</th>
            </tr>
          </thead>
          <tbody>
            {[...props.records].reverse().map((r) => (
              <tr>
                <td>{fmtUtc(r.signedAtMs)}</td>
                <td>
                  <CallBadge call={r.call} />
                </td>
                <td>{r.proposedCall}</td>
                <td>{r.signedBy}</td>
                <td>{r.comment ?? ''}</td>
                <td>
                  <code>{r.inputsHash.slice(0, 12)}</code>
                  {r.inputsHash === props.inputsHash ? '' : ' (older inputs)'}
                </td>
              </tr>
            ))}
          </tbody>
        </table>
      ) : (
        <p class="vc-small">Not signed off yet.</p>
      )}
    </section>
  );
}
