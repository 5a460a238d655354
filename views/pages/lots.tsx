/**
 * Lots: the queue of lots waiting to bond with their calls, the lots already bonded, and the lots
 * with no bond pairs (monitor wafers, or pairs not imported yet), which are not in the queue.
 * One row per lot; the worst pair's call is the lot's call.
 */
import { CallBadge, CallCounts, type CallName } from '../partials/call.tsx';
import { fmtDies, fmtNum, fmtShare, fmtUtc, groupDigits } from '../partials/format.ts';

export interface LotRow {
  lotId: string;
  productId: string;
  pairs: number;
  /** Wafers of the lot known from its scans and ledger. */
  wafers: number;
  /** null when the lot could not be assessed (see `problem`). */
  call: CallName | null;
  counts: { bond: number; reclean: number; hold: number } | null;
  /** Σ expected reportable voids over the pairs. */
  expectedVoids: number | null;
  /** Σ killed dies (negative binomial) and the dies on the lot's wafers. */
  dieKillsNB: number | null;
  dies: number;
  dominant: { label: string; share: number } | null;
  bondedAtMs: number | null;
  /** Pairs whose latest sign-off is for the current inputs. */
  signedPairs: number;
  /** Why the lot has no figures (missing data), in plain words. */
  problem: string | null;
}

export function LotsPage(props: { waiting: LotRow[]; bonded: LotRow[]; unpaired: LotRow[]; asOfMs: number }) {
  return (
    <section class="vc-lots">
      <h1>Lots</h1>
      <p class="vc-lede">
        Each lot's call is the worst of its pairs' calls: <CallBadge call="bond" />{' '}
        <CallBadge call="re-clean" /> <CallBadge call="hold" />. Figures are expected values over the lot's
        pairs at {fmtUtc(props.asOfMs)}.
      </p>
      <h2 id="waiting">Waiting to bond ({props.waiting.length})</h2>
      <LotTable rows={props.waiting} bonded={false} />
      <h2 id="bonded">Already bonded ({props.bonded.length})</h2>
      <LotTable rows={props.bonded} bonded={true} />
      {props.unpaired.length > 0 ? (
        <>
          <h2 id="unpaired">Lots without bond pairs ({props.unpaired.length})</h2>
          <p class="vc-small">
            No pairs file names these lots, so they are not waiting to bond: monitor or test wafers, or lots
            whose pairs are not imported yet. Their scans and ledger still count where they apply.
          </p>
          <table class="vc-table vc-table-compact" data-table="unpaired">
            <thead>
              <tr>
                <th>Lot</th>
                <th class="num">Wafers</th>
                <th>Product</th>
              </tr>
            </thead>
            <tbody>
              {props.unpaired.map((r) => (
                <tr data-lot={r.lotId}>
                  <td>
                    <a href={`/lots/${encodeURIComponent(r.lotId)}`}>{r.lotId}</a>
                  </td>
                  <td class="num">{r.wafers}</td>
                  <td>{r.productId}</td>
                </tr>
              ))}
            </tbody>
          </table>
        </>
      ) : null}
    </section>
  );
}

function LotTable(props: { rows: LotRow[]; bonded: boolean }) {
  if (props.rows.length === 0)
    return <p class="vc-small">{props.bonded ? 'No bonded lots yet.' : 'No lot is waiting to bond.'}</p>;
  return (
    <table class="vc-table vc-lot-table" data-table={props.bonded ? 'bonded' : 'waiting'}>
      <thead>
        <tr>
          <th>Lot</th>
          <th>Product</th>
          <th class="num">Pairs</th>
          <th>Call</th>
          <th>Pair calls</th>
          <th class="num">Expected voids</th>
          <th class="num">Die loss (NB)</th>
          <th>Dominant source</th>
          <th>{props.bonded ? 'Bonded' : 'Signed off'}</th>
        </tr>
      </thead>
      <tbody>
        {props.rows.map((r) => (
          <tr data-lot={r.lotId}>
            <td>
              <a href={`/lots/${encodeURIComponent(r.lotId)}`}>{r.lotId}</a>
            </td>
            <td>{r.productId}</td>
            <td class="num">{r.pairs}</td>
            <td>{r.call ? <CallBadge call={r.call} /> : <span class="vc-small">not assessed</span>}</td>
            <td>
              {r.counts ? <CallCounts counts={r.counts} /> : <span class="vc-small">{r.problem ?? '—'}</span>}
            </td>
            <td class="num">{r.expectedVoids === null ? '—' : fmtNum(r.expectedVoids)}</td>
            <td class="num">
              {r.dieKillsNB === null
                ? '—'
                : `${fmtDies(r.dieKillsNB)} of ${groupDigits(r.dies)}${r.dies > 0 ? ` (${fmtShare(r.dieKillsNB / r.dies)})` : ''}`}
            </td>
            <td>{r.dominant ? `${r.dominant.label} (${fmtShare(r.dominant.share)})` : '—'}</td>
            <td>
              {props.bonded ? (
                fmtUtc(r.bondedAtMs)
              ) : r.signedPairs > 0 ? (
                <span>
                  {r.signedPairs} of {r.pairs} pairs
                </span>
              ) : (
                <span class="vc-small">not signed</span>
              )}
            </td>
          </tr>
        ))}
      </tbody>
    </table>
  );
}
