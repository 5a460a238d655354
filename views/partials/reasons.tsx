/** The reasons behind a call, blocking ones first and marked by word, and the re-clean caution. */
export interface ReasonLike {
  code: string;
  text: string;
  blocking: boolean;
}

export function ReasonList(props: { reasons: ReasonLike[] }) {
  if (props.reasons.length === 0) return <p class="vc-small">No reasons recorded.</p>;
  const sorted = [...props.reasons].sort((a, b) => Number(b.blocking) - Number(a.blocking));
  return (
    <ul class="vc-reasons">
      {sorted.map((r) => (
        <li class={r.blocking ? 'vc-reason vc-reason-blocking' : 'vc-reason'} data-code={r.code}>
          {r.blocking ? <strong class="vc-reason-tag">blocking: </strong> : null}
          {r.text}
        </li>
      ))}
    </ul>
  );
}

/**
 * The caution that goes beside every re-clean call. The words are the engine's (its
 * RECLEAN_CAUTION); the page adds that voidcast estimates risk only.
 */
export function RecleanCaution(props: { text: string }) {
  return (
    <aside class="vc-caution vc-reclean-caution" role="note" aria-label="Re-clean caution">
      <strong>Before any re-clean: </strong>
      {props.text}
    </aside>
  );
}
