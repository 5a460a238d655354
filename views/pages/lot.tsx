/**
 * One lot: each pair's figures (expected voids with their interval, unbonded area, die loss in
 * the Poisson and negative-binomial forms), its call with the reasons, its dominant source;
 * then the lot-level Pareto.
 */
import { CallBadge, CallCounts, type CallName } from '../partials/call.tsx';
import {
  fmtAreaM2,
  fmtConfidence,
  fmtCountBound,
  fmtDies,
  fmtEstimate,
  fmtNum,
  fmtPct,
  fmtShare,
  fmtUtc,
  groupDigits,
} from '../partials/format.ts';
import { type ParameterSetRefLike, ParametersUsed } from '../partials/parameters-used.tsx';
import { type ParetoBy, type ParetoLike, ParetoPanel } from '../partials/pareto-panel.tsx';
import { type ReasonLike, ReasonList, RecleanCaution } from '../partials/reasons.tsx';
import { TuningSection } from '../partials/tuning-section.tsx';

interface EstimateLike {
  value: number;
  low: number;
  high: number;
  confidence: number;
}

/** The parts of a pair assessment the lot page shows (a PairAssessment satisfies it). */
export interface LotPairLike {
  pairId: string;
  topWaferId: string;
  bottomWaferId: string;
  call: CallName;
  reasons: ReasonLike[];
  figures: {
    voids: EstimateLike;
    unbondedAreaM2: EstimateLike;
    unbondedFraction: EstimateLike;
    dieKillsPoisson: EstimateLike | null;
    dieKillsNB: EstimateLike | null;
    dieCount: number;
  };
  dominant: { label: string; share: number } | null;
}

export interface LotLike {
  lotId: string;
  productId: string;
  asOfMs: number;
  call: CallName;
  reasons: ReasonLike[];
  caution: string | null;
  counts: { bond: number; reclean: number; hold: number };
  pairs: LotPairLike[];
  pareto: ParetoLike;
  dominant: { label: string; share: number } | null;
  totals: { voids: number; dieKillsNB: number | null; dies: number };
  /** The parameter set the assessment used. */
  parameters: ParameterSetRefLike;
}

export function LotPage(props: { lot: LotLike; paretoBy: ParetoBy }) {
  const lot = props.lot;
  const base = `/lots/${encodeURIComponent(lot.lotId)}`;
  const conf = lot.pairs[0] ? fmtConfidence(lot.pairs[0].figures.voids) : '';
  return (
    <section class="vc-lot">
      <p class="vc-crumbs">
        <a href="/lots">Lots</a> › {lot.lotId}
      </p>
      <h1>
        Lot {lot.lotId} <CallBadge call={lot.call} />
      </h1>
      <p class="vc-lede">
        Product {lot.productId} · {lot.pairs.length} pair{lot.pairs.length === 1 ? '' : 's'} ·{' '}
        <CallCounts counts={lot.counts} /> · assessed {fmtUtc(lot.asOfMs)} ·{' '}
        <ParametersUsed parameters={lot.parameters} />
      </p>
      {lot.caution ? <RecleanCaution text={lot.caution} /> : null}
      <div class="vc-tiles vc-tiles-figures">
        <Figure label="expected voids, lot" value={fmtNum(lot.totals.voids)} />
        <Figure
          label="die loss (NB), lot"
          value={
            lot.totals.dieKillsNB === null
              ? '—'
              : `${fmtDies(lot.totals.dieKillsNB)} / ${groupDigits(lot.totals.dies)}`
          }
        />
        <Figure
          label="dominant source"
          value={lot.dominant ? `${lot.dominant.label}` : '—'}
          sub={lot.dominant ? `${fmtShare(lot.dominant.share)} of the lot's risk` : undefined}
          text
        />
      </div>
      <h2>Pairs</h2>
      <table class="vc-table vc-pair-table">
        <thead>
          <tr>
            <th>Pair</th>
            <th>Top / bottom wafer</th>
            <th>Call</th>
            <th class="num">Expected voids</th>
            <th class="num">Unbonded area</th>
            <th class="num">Die loss Poisson</th>
            <th class="num">Die loss NB</th>
            <th>Dominant source</th>
            <th>Reasons</th>
          </tr>
        </thead>
        <tbody>
          {lot.pairs.map((p) => (
            <tr data-pair={p.pairId}>
              <td>
                <a href={`/pairs/${encodeURIComponent(p.pairId)}`}>{p.pairId}</a>
              </td>
              <td>
                {p.topWaferId} / {p.bottomWaferId}
              </td>
              <td>
                <CallBadge call={p.call} />
              </td>
              <EstimateCell e={p.figures.voids} f={(v) => fmtNum(v)} />
              <td class="num vc-estimate">
                {fmtAreaM2(p.figures.unbondedAreaM2.value)}
                <br />
                <span class="vc-small">{fmtEstimate(p.figures.unbondedFraction, fmtPct)}</span>
              </td>
              <EstimateCell e={p.figures.dieKillsPoisson} f={fmtDies} />
              <EstimateCell e={p.figures.dieKillsNB} f={fmtDies} />
              <td>{p.dominant ? `${p.dominant.label} (${fmtShare(p.dominant.share)})` : '—'}</td>
              <td>
                <ShortReasons reasons={p.reasons} href={`/pairs/${encodeURIComponent(p.pairId)}`} />
              </td>
            </tr>
          ))}
        </tbody>
      </table>
      <p class="vc-small">
        Intervals in brackets are {conf || 'the Monte Carlo intervals'}. Die loss in dies per pair: Poisson
        for random particles, negative binomial (Stapper) for clustered ones.
      </p>
      <h2>Lot Pareto</h2>
      <ParetoPanel
        pareto={lot.pareto}
        by={props.paretoBy}
        base={base}
        subject={`Lot ${lot.lotId}`}
        asOfMs={lot.asOfMs}
      />
      <TuningSection kind="lot" id={lot.lotId} asOfMs={lot.asOfMs} />
    </section>
  );
}

/**
 * An expected count over its interval, in one table cell: the expectation as a figure, the
 * interval's bounds as whole counts (the quantity — voids, killed dies — is a count).
 */
function EstimateCell(props: { e: EstimateLike | null; f: (v: number) => string }) {
  if (!props.e) return <td class="num">—</td>;
  return (
    <td class="num vc-estimate">
      {props.f(props.e.value)}
      <br />
      <span class="vc-small">
        {fmtCountBound(props.e.low, 'low')}–{fmtCountBound(props.e.high, 'high')}
      </span>
    </td>
  );
}

/** The first reason (blocking ones first) and how many more the pair page gives. */
function ShortReasons(props: { reasons: ReasonLike[]; href: string }) {
  const sorted = [...props.reasons].sort((a, b) => Number(b.blocking) - Number(a.blocking));
  const first = sorted[0];
  if (!first) return <span class="vc-small">—</span>;
  return (
    <div class="vc-short-reasons">
      <ReasonList reasons={[first]} />
      {sorted.length > 1 ? (
        <a class="vc-small" href={props.href}>
          {sorted.length - 1} more reason{sorted.length > 2 ? 's' : ''} on the pair page
        </a>
      ) : null}
    </div>
  );
}

export function Figure(props: { label: string; value: string; sub?: string | undefined; text?: boolean }) {
  return (
    <div class={props.text ? 'vc-tile vc-figure vc-figure-text' : 'vc-tile vc-figure'}>
      <span class="vc-tile-value">{props.value}</span>
      <span class="vc-tile-label">{props.label}</span>
      {props.sub ? <span class="vc-small">{props.sub}</span> : null}
    </div>
  );
}
