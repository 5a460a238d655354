/**
 * A pair's conditions beside its figures: the Q-times, the excursions of the air it was exposed to,
 * and the data notes (tail fits, gaps, flags). Shown on the pair page under the Pareto.
 */
import type { PairAssessment } from '../../src/engine/types.ts';
import { fmtDiameter, fmtDurationS, fmtEstimate, fmtNum, fmtUtc } from './format.ts';

export function QTimes(props: { a: PairAssessment }) {
  const q = props.a.qTimes;
  return (
    <section>
      <h3>Q-times</h3>
      {q.length === 0 ? (
        <p class="vc-small">No Q-time limits in the spec.</p>
      ) : (
        <table class="vc-table vc-table-compact">
          <thead>
            <tr>
              <th>Limit</th>
              <th>Wafer</th>
              <th class="num">Elapsed</th>
              <th class="num">Limit</th>
              <th>Status</th>
            </tr>
          </thead>
          <tbody>
            {q.map((s) => (
              <tr>
                <td>{s.label}</td>
                <td>{s.waferId}</td>
                <td class="num">{fmtDurationS(s.elapsedS)}</td>
                <td class="num">{fmtDurationS(s.limitS)}</td>
                <td>
                  {s.exceeded ? (
                    <span class="vc-fail">✗ exceeded</span>
                  ) : (
                    <span class="vc-pass">✓ within</span>
                  )}
                </td>
              </tr>
            ))}
          </tbody>
        </table>
      )}
    </section>
  );
}

export function Excursions(props: { a: PairAssessment }) {
  const e = props.a.excursions;
  return (
    <section>
      <h3>Excursions while exposed</h3>
      {e.length === 0 ? (
        <p class="vc-small">No counter sample above an action level while these wafers were exposed.</p>
      ) : (
        <table class="vc-table vc-table-compact">
          <thead>
            <tr>
              <th>Wafer</th>
              <th>Location</th>
              <th>First above action</th>
              <th class="num">Peak / action (per m³)</th>
            </tr>
          </thead>
          <tbody>
            {e.map((x) => (
              <tr>
                <td>{x.waferId}</td>
                <td>
                  <a href={`/areas?location=${encodeURIComponent(x.locationId)}#trend-panel`}>
                    {x.locationId}
                  </a>
                </td>
                <td>{fmtUtc(x.firstMs)}</td>
                <td class="num">
                  {fmtNum(x.peakPerM3)} / {fmtNum(x.actionPerM3)}
                </td>
              </tr>
            ))}
          </tbody>
        </table>
      )}
    </section>
  );
}

export function Notes(props: { a: PairAssessment }) {
  const n = props.a.notes;
  const tails = props.a.tails;
  if (n.length === 0 && tails.length === 0) return null;
  return (
    <section>
      <h3>Data notes</h3>
      <ul class="vc-notes">
        {tails.map((t) => (
          <li>
            Scan {t.scanId} ({t.waferId}): {t.n} particles ≥ {fmtDiameter(t.thresholdM)}, tail slope α ={' '}
            {fmtEstimate(t.alpha)}; {fmtEstimate(t.tailParticles)} particles expected below the threshold down
            to the tail floor.
          </li>
        ))}
        {n.map((x) => (
          <li data-code={x.code}>{x.text}</li>
        ))}
      </ul>
    </section>
  );
}
