/**
 * The tuning section of the pair and lot pages: the way to the what-if page and its solvers, and the
 * sensitivity of the call (loaded after the page by htmx; a link without script). The what-if
 * addresses carry the page's assessment time, so they start from the figures the page shows.
 */
import { SensitivitySlot } from './sensitivity-panel.tsx';

export function TuningSection(props: { kind: 'pair' | 'lot'; id: string; asOfMs: number }) {
  const base = `/whatif/${props.kind}/${encodeURIComponent(props.id)}`;
  const at = `?asOf=${encodeURIComponent(new Date(props.asOfMs).toISOString())}`;
  const what = `${props.kind} ${props.id}`;
  return (
    <>
      <section class="vc-tuning" id="tuning">
        <h2>What if…</h2>
        <p>
          <a href={`${base}${at}`}>Try a change on {what}</a> — a stronger clean, a shorter wait, cleaner air,
          fewer adders — and see the figures and the call beside these; or{' '}
          <a href={`${base}${at}#solvers`}>ask for a limit</a>: the longest wait, the removal a clean needs,
          the passes, the ISO class. Nothing stored changes.
        </p>
      </section>
      <SensitivitySlot href={`${base}/sensitivity${at}`} subject={what} />
    </>
  );
}
