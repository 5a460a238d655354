/**
 * Calibration: what the bonded pairs' void inspections say of the void model — the matches on each
 * pair's void map (observed voids over the predicted discs of the scanned particles), the fitted
 * interface energy and rate of voids no scanned particle explains with their intervals and n, the
 * comparison with the undetected tail, the leave-one-lot-out backtest (plot and coverage), and the
 * form that proposes every fit of the line — these and the scans' adders and removal curves — as one
 * parameter set (adopted on the Parameters page).
 *
 * Type-only imports of the engine's result types: the page draws what the engine returned.
 */
import type {
  BacktestReport,
  CalibrationReport,
  Coverage,
  PairCalibration,
} from '../../src/engine/learn/calibration-types.ts';
import { lineLabel } from '../../src/engine/learn/propose.ts';
import { backtestPlot } from '../charts/backtest-plot.tsx';
import { fmtAreaM2, fmtDiameter, fmtNum, fmtPct, fmtUtc } from '../partials/format.ts';
import { ProposeLineForm } from '../partials/propose-line-form.tsx';
import { VoidOverlayPanel } from '../partials/void-overlay-panel.tsx';

export interface CalibrationPageProps {
  calibration: CalibrationReport;
  backtest: BacktestReport;
  /** The pair whose map is shown. */
  pair: PairCalibration | null;
  waferDiameterM: number;
  edgeExclusionM: number;
  csrfToken: string;
  /** The propose form's state after a refused post. */
  error?: string;
  name?: string;
  label?: string;
}

const n2 = (v: number | null | undefined) => (v === null || v === undefined ? '—' : fmtNum(v));

/** A count's interval end: whole numbers as they are. */
const cnt = (v: number) => (Number.isInteger(v) ? String(v) : fmtNum(v));

export function CalibrationPage(props: CalibrationPageProps) {
  const c = props.calibration;
  const b = props.backtest;
  return (
    <section class="vc-calibration">
      <h1>Calibration from void inspections</h1>
      <p class="vc-lede">
        {c.pairs.length === 0
          ? 'No bonded pair has a void inspection yet: import inspections (Imports) to calibrate.'
          : `${c.pairs.length} bonded pairs of lot${c.lots.length === 1 ? '' : 's'} ${c.lots.join(', ')}: each pair’s observed voids matched to the predicted voids of its scanned particles, the void model fitted to them, and judged on lots it was not fitted to. Fitted ${fmtUtc(c.fittedAtMs)}.`}
      </p>

      <h2>Fitted values</h2>
      {c.products.map((p) => {
        const v = p.voidSize;
        const u = p.unexplained;
        return (
          <div class="vc-panel vc-fit" data-product={p.productId}>
            <h3>Product {p.productId}</h3>
            <table class="vc-table vc-table-compact vc-fit-table">
              <thead>
                <tr>
                  <th>Quantity</th>
                  <th class="num">Fitted</th>
                  <th class="num">95 % interval</th>
                  <th class="num">Typed</th>
                  <th class="num">n</th>
                </tr>
              </thead>
              <tbody>
                <tr data-quantity="energy">
                  <td>Interface energy, J/m² (the product’s convention)</td>
                  <td class="num">{v.fitted ? fmtNum(v.fitted.energyJm2) : '—'}</td>
                  <td class="num">
                    {v.fitted ? `${fmtNum(v.fitted.energyLowJm2)}–${fmtNum(v.fitted.energyHighJm2)}` : '—'}
                  </td>
                  <td class="num">{fmtNum(v.typedEnergyJm2)}</td>
                  <td class="num">{v.n} explained voids</td>
                </tr>
                <tr data-quantity="multiplier">
                  <td>Void radius, × the typed prediction</td>
                  <td class="num">{v.fitted ? fmtNum(v.fitted.radiusMultiplier) : '—'}</td>
                  <td class="num">{v.fitted ? `${n2(v.multiplierLow)}–${n2(v.multiplierHigh)}` : '—'}</td>
                  <td class="num">1</td>
                  <td class="num">
                    {v.smallGap} small-gap, {v.thickPlate} thick-plate
                  </td>
                </tr>
                <tr data-quantity="unexplained">
                  <td>Voids no source explains, per pair (beyond the unscanned sources)</td>
                  <td class="num">{u.fitted ? fmtNum(u.fitted.ratePerPair) : '—'}</td>
                  <td class="num">
                    {u.fitted
                      ? `${fmtNum(u.fitted.rateLowPerPair)}–${fmtNum(u.fitted.rateHighPerPair)}`
                      : '—'}
                  </td>
                  <td class="num">none</td>
                  <td class="num">{u.pairs} pairs</td>
                </tr>
              </tbody>
            </table>
            {v.note ? <p class="vc-note">{v.note}</p> : null}
            {v.fitted ? (
              <p class="vc-small">
                Residual scatter of ln R {n2(v.residualSigma)}. {v.fitted.method}.
              </p>
            ) : null}
            <h4>Unexplained voids against the undetected tail</h4>
            <p class={u.tailDisagrees || u.unscannedDisagrees ? 'vc-note vc-comparison' : 'vc-comparison'}>
              {u.comparison}
            </p>
            {u.fitted ? (
              <p class="vc-small">
                Their mean size {fmtDiameter(u.fitted.meanDiameterM)} ({fmtAreaM2(u.fitted.meanAreaM2)} each).{' '}
                {u.fitted.method}.
              </p>
            ) : null}
            {u.note ? <p class="vc-note">{u.note}</p> : null}
          </div>
        );
      })}
      <ProposeForm {...props} />

      <h2>Backtest: leave one lot out</h2>
      <p>
        Each lot is predicted with the values fitted on the other lots only, and compared with what its
        inspections saw: reportable voids, their area and the dies they touch, before (typed values) and after
        calibration.
      </p>
      <BacktestSection backtest={b} />

      <h2>Matches on the void maps</h2>
      {props.pair ? (
        <div class="vc-grid2 vc-calibration-maps">
          <div id="calibration-map">
            <VoidOverlayPanel
              id="calibration-map-panel"
              pairId={props.pair.pairId}
              matching={props.pair.matching}
              otherInspections={props.pair.otherInspections}
              waferDiameterM={props.waferDiameterM}
              edgeExclusionM={props.edgeExclusionM}
            />
          </div>
          <PairTable pairs={c.pairs} shown={props.pair.pairId} />
        </div>
      ) : (
        <p class="vc-small">No inspected pair to show.</p>
      )}

      {c.notes.length ? (
        <>
          <h2>Notes</h2>
          <ul class="vc-notes">
            {c.notes.map((n) => (
              <li>{n}</li>
            ))}
          </ul>
        </>
      ) : null}
      <h2>How</h2>
      <ul class="vc-notes vc-method">
        {b.method.map((m) => (
          <li>{m}</li>
        ))}
      </ul>
    </section>
  );
}

function ProposeForm(props: CalibrationPageProps) {
  const v = props.calibration.values;
  const count = Object.keys(v.voidSize).length + Object.keys(v.unexplainedVoids).length;
  return (
    <ProposeLineForm
      action="/calibration/propose"
      idPrefix="propose"
      csrfToken={props.csrfToken}
      label={props.label ?? lineLabel(props.calibration.lots)}
      holds={`Stores, as one proposed set, the adders and removal curves learned from the line’s scans (Tools & cleans) and the calibration: ${count === 0 ? 'none of the values above (each rests on too little data)' : `the ${count === 1 ? 'value' : `${count} values`} above`}, fitted again with the learned adders and removal applied — so the unexplained rate is the excess over the sources as the set itself models them.`}
      {...(props.error ? { error: props.error } : {})}
      {...(props.name ? { name: props.name } : {})}
    />
  );
}

function coverageCell(c: { inside: number; n: number }): string {
  return c.n > 0 ? `${fmtPct(c.inside / c.n)} (${c.inside}/${c.n})` : '—';
}

function BacktestSection(props: { backtest: BacktestReport }) {
  const b = props.backtest;
  const pts = (
    f: (
      p: BacktestReport['pairs'][number],
      after: boolean,
    ) => { o: number; e: { value: number; low: number; high: number } | null },
  ) => ({
    before: b.pairs.flatMap((p) => {
      const x = f(p, false);
      return x.e
        ? [{ label: p.pairId, observed: x.o, predicted: x.e.value, low: x.e.low, high: x.e.high }]
        : [];
    }),
    after: b.pairs.flatMap((p) => {
      const x = f(p, true);
      return x.e
        ? [{ label: p.pairId, observed: x.o, predicted: x.e.value, low: x.e.low, high: x.e.high }]
        : [];
    }),
  });
  const mm2 = (e: { value: number; low: number; high: number } | null) =>
    e ? { value: e.value * 1e6, low: e.low * 1e6, high: e.high * 1e6 } : null;
  const voids = pts((p, a) => ({ o: p.observed.voids, e: a ? (p.after?.voids ?? null) : p.before.voids }));
  const area = pts((p, a) => ({
    o: p.observed.unbondedAreaM2 * 1e6,
    e: mm2(a ? (p.after?.unbondedAreaM2 ?? null) : p.before.unbondedAreaM2),
  }));
  const dies = pts((p, a) => ({
    o: p.observed.dieKills ?? Number.NaN,
    e: a ? (p.after?.dieKills ?? null) : p.before.dieKills,
  }));
  const cov = (label: string, c: Coverage) => (
    <tr>
      <td>{label}</td>
      <td class="num">{coverageCell(c.voids)}</td>
      <td class="num">{coverageCell(c.unbondedArea)}</td>
      <td class="num">{coverageCell(c.dieKills)}</td>
    </tr>
  );
  return (
    <div class="vc-backtest" id="backtest">
      <div class="vc-grid3 vc-backtest-plots">
        <figure class="vc-panel">
          {backtestPlot({
            id: 'backtest-voids',
            title: 'Reportable voids per pair',
            quantity: 'voids per pair',
            ...voids,
            format: cnt,
            dodge: 0.15,
          })}
        </figure>
        <figure class="vc-panel">
          {backtestPlot({
            id: 'backtest-area',
            title: 'Unbonded area per pair (voids the inspection sees)',
            quantity: 'area, mm²',
            ...area,
            scale: 'sqrt',
          })}
        </figure>
        <figure class="vc-panel">
          {backtestPlot({
            id: 'backtest-dies',
            title: 'Killed dies per pair (dies an observed void touches)',
            quantity: 'killed dies',
            before: dies.before.filter((p) => Number.isFinite(p.observed)),
            after: dies.after.filter((p) => Number.isFinite(p.observed)),
            format: cnt,
            dodge: 0.15,
          })}
        </figure>
      </div>
      <table class="vc-table vc-table-compact vc-coverage">
        <thead>
          <tr>
            <th>Coverage of the 95 % intervals</th>
            <th class="num">Reportable voids</th>
            <th class="num">Unbonded area</th>
            <th class="num">Killed dies</th>
          </tr>
        </thead>
        <tbody>
          {cov('before calibration', b.coverageBefore)}
          {cov('after (left out)', b.coverageAfter)}
        </tbody>
      </table>
      <table class="vc-table vc-table-compact vc-backtest-lots">
        <thead>
          <tr>
            <th>Lot left out</th>
            <th>Fitted on</th>
            <th class="num">Observed voids</th>
            <th class="num">Predicted before</th>
            <th class="num">Predicted after</th>
            <th>Values applied</th>
          </tr>
        </thead>
        <tbody>
          {b.lots.map((l) => {
            const vs = Object.values(l.values.voidSize)[0];
            const ux = Object.values(l.values.unexplainedVoids)[0];
            return (
              <tr data-lot={l.lotId}>
                <td>{l.lotId}</td>
                <td>{l.fittedOn.join(', ') || '—'}</td>
                <td class="num">{l.observedVoids}</td>
                <td class="num">{fmtNum(l.predictedVoidsBefore)}</td>
                <td class="num">{l.predictedVoidsAfter === null ? '—' : fmtNum(l.predictedVoidsAfter)}</td>
                <td class="vc-small">
                  {vs
                    ? `energy ${fmtNum(vs.energyJm2)} J/m² (${fmtNum(vs.energyLowJm2)}–${fmtNum(vs.energyHighJm2)}, n = ${vs.n})`
                    : 'energy: typed'}
                  {ux ? `; unexplained ${fmtNum(ux.ratePerPair)} per pair` : ''}
                </td>
              </tr>
            );
          })}
        </tbody>
      </table>
      {b.notes.length ? (
        <ul class="vc-notes">
          {b.notes.map((n) => (
            <li>{n}</li>
          ))}
        </ul>
      ) : null}
      <p class="vc-small">
        Area and killed dies count the voids the inspection can see (at least its smallest reportable size);
        the assessment’s own unbonded area and die loss also count smaller voids, which in hybrid bonding
        still kill a die they sit on.
      </p>
    </div>
  );
}

function PairTable(props: { pairs: PairCalibration[]; shown: string }) {
  return (
    <table class="vc-table vc-table-compact vc-match-table">
      <thead>
        <tr>
          <th>Pair</th>
          <th class="num">Explained</th>
          <th class="num">Unexplained</th>
          <th class="num">Edge excl.</th>
          <th class="num">Not seen (Σ survival)</th>
          <th class="num">Chance</th>
        </tr>
      </thead>
      <tbody>
        {props.pairs.map((p) => {
          const m = p.matching;
          const here = p.pairId === props.shown;
          return (
            <tr
              data-pair={p.pairId}
              class={here ? 'vc-selected' : undefined}
              aria-current={here ? 'true' : undefined}
            >
              <td>
                <a
                  href={`/calibration?pair=${encodeURIComponent(p.pairId)}#calibration-map`}
                  hx-get={`/calibration/map?pair=${encodeURIComponent(p.pairId)}`}
                  hx-target="#calibration-map"
                  hx-swap="innerHTML"
                  hx-push-url={`/calibration?pair=${encodeURIComponent(p.pairId)}`}
                >
                  {p.pairId}
                </a>
              </td>
              <td class="num">{m.explained}</td>
              <td class="num">{m.unexplained}</td>
              <td class="num">{m.inEdgeExclusion}</td>
              <td class="num">
                {m.notSeen} ({fmtNum(m.notSeenExpected)})
              </td>
              <td class="num">{fmtNum(m.chanceMatches)}</td>
            </tr>
          );
        })}
      </tbody>
    </table>
  );
}
