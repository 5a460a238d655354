/**
 * The call of a pair or lot: told by word and glyph as well as colour (see voidcast.css
 * .vc-call-*), so it survives greyscale print.
 */
export type CallName = 'bond' | 're-clean' | 'hold';

const CLASS: Record<CallName, string> = {
  bond: 'vc-call-bond',
  're-clean': 'vc-call-reclean',
  hold: 'vc-call-hold',
};
const WORD: Record<CallName, string> = { bond: 'bond', 're-clean': 're-clean', hold: 'hold' };

export function CallBadge(props: { call: CallName; proposed?: boolean }) {
  return (
    <span class={`vc-call ${CLASS[props.call]}`} data-call={props.call}>
      {WORD[props.call]}
      {props.proposed ? <span class="vc-call-note"> (proposed)</span> : null}
    </span>
  );
}

/** "2 bond · 1 re-clean · 0 hold" with each count by its badge glyph. */
export function CallCounts(props: { counts: { bond: number; reclean: number; hold: number } }) {
  const c = props.counts;
  return (
    <span class="vc-call-counts">
      <span class="vc-count vc-count-bond">● {c.bond} bond</span>{' '}
      <span class="vc-count vc-count-reclean">◐ {c.reclean} re-clean</span>{' '}
      <span class="vc-count vc-count-hold">■ {c.hold} hold</span>
    </span>
  );
}
