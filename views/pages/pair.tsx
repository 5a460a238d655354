/**
 * One bonded (or to-be-bonded) pair: the call with its reasons, the headline figures, both
 * wafers' detected particles (the top wafer mirrored, as seen from the interface), the predicted
 * void map, the size spectrum stacked by source, the Pareto, the modelled re-clean, the Q-times,
 * excursions and data notes, and the sign-off.
 *
 * Type-only imports of the engine's result types: the page draws what the engine returned and
 * computes nothing of the model itself.
 */
import type { PairMatching } from '../../src/engine/learn/calibration-types.ts';
import type { DieGrid, PairAssessment, PairFigures } from '../../src/engine/types.ts';
import { type SpectrumSeries, stackedSpectrum } from '../charts/stacked-spectrum.tsx';
import { voidMap } from '../charts/void-map.tsx';
import type { DieRect } from '../charts/wafer-frame.tsx';
import { waferMap } from '../charts/wafer-map.tsx';
import { CallBadge } from '../partials/call.tsx';
import {
  fmtAreaM2,
  fmtConfidence,
  fmtCountBound,
  fmtCountEstimate,
  fmtDiameter,
  fmtDies,
  fmtEstimate,
  fmtNum,
  fmtPct,
  fmtShare,
  fmtUtc,
} from '../partials/format.ts';
import { Excursions, Notes, QTimes } from '../partials/pair-conditions.tsx';
import { ParametersUsed } from '../partials/parameters-used.tsx';
import { type ParetoBy, ParetoPanel } from '../partials/pareto-panel.tsx';
import { ReasonList, RecleanCaution } from '../partials/reasons.tsx';
import { SignoffPanel, type SignoffProps } from '../partials/signoff.tsx';
import { TuningSection } from '../partials/tuning-section.tsx';
import { PairInspectionSection } from '../partials/void-overlay-panel.tsx';

export interface WaferScanView {
  waferId: string;
  scan: {
    scanId: string;
    timeMs: number;
    thresholdM: number;
    toolId: string | null;
    /** Detected particles in the wafer's own frame, m. */
    xM: ArrayLike<number>;
    yM: ArrayLike<number>;
    diameterM: ArrayLike<number>;
  } | null;
}

export interface PairPageProps {
  a: PairAssessment;
  top: WaferScanView;
  bottom: WaferScanView;
  flipAxis: 'x' | 'y';
  waferDiameterM: number;
  edgeExclusionM: number;
  paretoBy: ParetoBy;
  spectrumMode: 'per-bin' | 'cumulative';
  signoff: Omit<SignoffProps, 'pairId' | 'inputsHash' | 'proposedCall' | 'asOfMs'>;
  /** A bonded pair's void inspection matched to the predicted discs (null: none inspected). */
  inspection?: { matching: PairMatching; otherInspections: string[] } | null;
}

const MAX_SPECTRUM_SERIES = 7;

export function PairPage(props: PairPageProps) {
  const a = props.a;
  const base = `/pairs/${encodeURIComponent(a.pairId)}`;
  const f = a.figures;
  return (
    <section class="vc-pair">
      <p class="vc-crumbs">
        <a href="/lots">Lots</a> › <a href={`/lots/${encodeURIComponent(a.lotId)}`}>{a.lotId}</a> › {a.pairId}
      </p>
      <h1>
        Pair {a.pairId} <CallBadge call={a.call} proposed />
      </h1>
      <p class="vc-lede">
        Top wafer {a.topWaferId} on bottom wafer {a.bottomWaferId} · product {a.productId} · assessed{' '}
        {fmtUtc(a.asOfMs)} · <ParametersUsed parameters={a.parameters} />
      </p>
      <div class="vc-call-box" data-call={a.call}>
        <h2>
          Call: <CallBadge call={a.call} />
        </h2>
        <ReasonList reasons={a.reasons} />
        {a.call === 're-clean' && a.caution ? <RecleanCaution text={a.caution} /> : null}
      </div>

      <h2>Figures</h2>
      <FiguresTiles f={f} />
      {a.specChecks.length > 0 ? (
        <table class="vc-table vc-table-compact vc-spec-checks">
          <thead>
            <tr>
              <th>Spec line ({a.specVersion})</th>
              <th class="num">Bound at spec confidence</th>
              <th class="num">Limit</th>
              <th>Result</th>
            </tr>
          </thead>
          <tbody>
            {a.specChecks.map((s) => (
              <tr>
                <td>{SPEC_LABEL[s.metric]}</td>
                <td class="num">
                  {s.metric === 'voids' ? fmtCountBound(s.bound, 'high') : fmtSpecValue(s.metric, s.bound)}
                </td>
                <td class="num">{fmtSpecValue(s.metric, s.limit)}</td>
                <td>
                  <span class={s.pass ? 'vc-pass' : 'vc-fail'}>{s.pass ? '✓ pass' : '✗ fail'}</span>
                </td>
              </tr>
            ))}
          </tbody>
        </table>
      ) : null}

      <h2>Wafer maps</h2>
      <div class="vc-grid2 vc-maps">
        <figure class="vc-panel">
          {waferMap({
            id: 'map-bottom',
            title: `Bottom wafer ${props.bottom.waferId}: detected particles`,
            ...waferGeometry(props),
            particles: scanParticles(props.bottom),
            thresholdM: props.bottom.scan?.thresholdM,
            dies: diesMm(a.voidMap?.dieGrid ?? null, 'none'),
          })}
          <figcaption>{scanCaption('Bottom', props.bottom, 'own frame = bond frame')}</figcaption>
        </figure>
        <figure class="vc-panel">
          {waferMap({
            id: 'map-top',
            title: `Top wafer ${props.top.waferId}: detected particles, seen from the interface`,
            ...waferGeometry(props),
            particles: scanParticles(props.top),
            thresholdM: props.top.scan?.thresholdM,
            mirror: props.flipAxis,
            dies: diesMm(a.voidMap?.dieGrid ?? null, props.flipAxis),
          })}
          <figcaption>
            {scanCaption(
              'Top',
              props.top,
              `mirrored about its ${props.flipAxis} axis, as it faces the bottom wafer`,
            )}
          </figcaption>
        </figure>
        <figure class="vc-panel">
          {a.voidMap ? (
            <VoidMapChart a={a} {...waferGeometry(props)} />
          ) : (
            <p class="vc-small">No void map in this assessment.</p>
          )}
          <figcaption>
            Each die is coloured by its chance of being killed from all sources: the detected particles at
            their positions and the particles not seen there (the tail below the scan threshold, tool adders,
            deposition while waiting), spread over the wafer; added over the dies these chances give the
            die-loss figure. Discs to scale from the detected particles; opacity is each particle's chance of
            surviving the cleans still ahead.
            {a.voidMap && a.voidMap.discsOmitted > 0
              ? ` ${a.voidMap.discsOmitted} smaller discs not drawn.`
              : ''}
          </figcaption>
        </figure>
        <figure class="vc-panel" id="spectrum-panel">
          <SpectrumPanel a={a} mode={props.spectrumMode} />
        </figure>
      </div>

      {props.inspection ? (
        <PairInspectionSection
          pairId={a.pairId}
          {...props.inspection}
          waferDiameterM={props.waferDiameterM}
          edgeExclusionM={props.edgeExclusionM}
        />
      ) : null}

      <h2>Where the risk comes from</h2>
      {a.dominant ? (
        <p>
          Dominant source: <strong>{a.dominant.label}</strong> ({fmtShare(a.dominant.share)} of the{' '}
          {a.dominant.metric === 'expectedVoids' ? 'expected voids' : 'expected die-kill events'}).
        </p>
      ) : null}
      <ParetoPanel
        pareto={a.pareto}
        by={props.paretoBy}
        base={base}
        subject={`Pair ${a.pairId}`}
        asOfMs={a.asOfMs}
      />

      {a.reclean && a.call === 're-clean' ? <RecleanSection a={a} /> : null}
      <TuningSection kind="pair" id={a.pairId} asOfMs={a.asOfMs} />

      <div class="vc-grid2">
        <QTimes a={a} />
        <Excursions a={a} />
      </div>
      <Notes a={a} />

      <SignoffPanel
        {...props.signoff}
        pairId={a.pairId}
        inputsHash={a.inputsHash}
        asOfMs={a.asOfMs}
        proposedCall={a.call}
      />

      <p class="vc-small vc-provenance">
        Model {a.modelVersion} · spec {a.specVersion} · {a.draws} Monte Carlo draws, seed {a.seed} ·
        reportable voids from {fmtDiameter(a.smallestReportableVoidM)} (particles ≥{' '}
        {fmtDiameter(a.reportableParticleM)}) · tail floor {fmtDiameter(a.tailFloorM)} · inputs{' '}
        <code>{a.inputsHash}</code>
      </p>
    </section>
  );
}

const SPEC_LABEL = {
  voids: 'reportable voids',
  unbondedFraction: 'unbonded area fraction',
  dieYield: 'die yield',
};

function fmtSpecValue(metric: 'voids' | 'unbondedFraction' | 'dieYield', v: number): string {
  return metric === 'voids' ? fmtNum(v) : fmtPct(v);
}

export function FiguresTiles(props: { f: PairFigures }) {
  const f = props.f;
  return (
    <div class="vc-tiles vc-tiles-figures">
      <Tile
        label="expected reportable voids"
        value={fmtNum(f.voids.value)}
        sub={`${fmtCountEstimate(f.voids)} ${fmtConfidence(f.voids)}`}
      />
      <Tile
        label="unbonded area"
        value={fmtAreaM2(f.unbondedAreaM2.value)}
        sub={`${fmtEstimate(f.unbondedFraction, fmtPct)} of bonded area`}
      />
      <Tile
        label="die loss, Poisson"
        value={f.dieKillsPoisson ? `${fmtDies(f.dieKillsPoisson.value)} / ${f.dieCount}` : '—'}
        sub={f.dieKillsPoisson ? fmtCountEstimate(f.dieKillsPoisson, fmtDies) : 'no die layout'}
      />
      <Tile
        label="die loss, negative binomial"
        value={f.dieKillsNB ? `${fmtDies(f.dieKillsNB.value)} / ${f.dieCount}` : '—'}
        sub={f.dieKillsNB ? fmtCountEstimate(f.dieKillsNB, fmtDies) : 'no die layout'}
      />
      <Tile
        label="die yield"
        value={f.dieYield ? fmtPct(f.dieYield.value) : '—'}
        sub={f.dieYield ? fmtEstimate(f.dieYield, fmtPct) : undefined}
      />
      <Tile label="particles at the interface" value={fmtNum(f.particles)} sub="all sizes, both wafers" />
    </div>
  );
}

function Tile(props: { label: string; value: string; sub?: string | undefined }) {
  return (
    <div class="vc-tile vc-figure">
      <span class="vc-tile-value">{props.value}</span>
      <span class="vc-tile-label">{props.label}</span>
      {props.sub ? <span class="vc-small">{props.sub}</span> : null}
    </div>
  );
}

function waferGeometry(props: PairPageProps) {
  return {
    diameterMm: props.waferDiameterM * 1e3,
    edgeExclusionMm: Math.round(props.edgeExclusionM * 1e4) / 10,
    notchAngleDeg: 270,
  };
}

function scanParticles(w: WaferScanView) {
  const s = w.scan;
  if (!s) return [];
  const out: { xMm: number; yMm: number; diameterM: number }[] = [];
  for (let i = 0; i < s.xM.length; i++)
    out.push({ xMm: s.xM[i]! * 1e3, yMm: s.yM[i]! * 1e3, diameterM: s.diameterM[i]! });
  return out;
}

function scanCaption(which: string, w: WaferScanView, frame: string): string {
  if (!w.scan) return `${which} wafer ${w.waferId}: no surface scan before bonding.`;
  return (
    `${which} wafer ${w.waferId}: scan ${w.scan.scanId} at ${fmtUtc(w.scan.timeMs)}` +
    `${w.scan.toolId ? ` on ${w.scan.toolId}` : ''}, threshold ${fmtDiameter(w.scan.thresholdM)} LSE; ${frame}.`
  );
}

/**
 * The die grid (bond frame, m) as die rectangles in mm for a wafer map. For the top wafer the
 * grid is taken back into the top wafer's own frame (the flip is its own inverse), so that the
 * map, mirroring everything, shows it where it lies at the interface.
 */
export function diesMm(grid: DieGrid | null, flip: 'none' | 'x' | 'y'): DieRect[] {
  if (!grid) return [];
  const w = grid.widthM * 1e3;
  const h = grid.heightM * 1e3;
  return grid.dies.map((d) => {
    const x = d.xM * 1e3;
    const y = d.yM * 1e3;
    return {
      xMm: flip === 'y' ? -(x + w) : x,
      yMm: flip === 'x' ? -(y + h) : y,
      wMm: w,
      hMm: h,
    };
  });
}

/** The void map of the assessment: discs of the detected particles, dies by kill probability. */
function VoidMapChart(props: {
  a: PairAssessment;
  diameterMm: number;
  edgeExclusionMm: number;
  notchAngleDeg: number;
}) {
  const { a } = props;
  const vm = a.voidMap!;
  const g = vm.dieGrid;
  const poisson = g?.yieldModel === 'poisson';
  const loss = poisson ? a.figures.dieKillsPoisson : a.figures.dieKillsNB;
  return voidMap({
    id: 'void-map',
    title: `Pair ${a.pairId}: kill probability per die and predicted voids`,
    diameterMm: props.diameterMm,
    edgeExclusionMm: props.edgeExclusionMm,
    notchAngleDeg: props.notchAngleDeg,
    frameNote: 'bond frame (bottom wafer, top mirrored onto it)',
    voids: vm.discs.map((d) => ({
      xMm: d.xM * 1e3,
      yMm: d.yM * 1e3,
      radiusMm: d.rM * 1e3,
      survival: d.survival,
      label: `${d.wafer} wafer, ${fmtDiameter(d.diameterM)} particle`,
    })),
    dies: (g?.dies ?? []).map((d) => ({
      xMm: d.xM * 1e3,
      yMm: d.yM * 1e3,
      wMm: g!.widthM * 1e3,
      hMm: g!.heightM * 1e3,
      killed: d.killed,
      pKill: poisson ? d.killProbabilityPoisson : d.killProbabilityNB,
      pDetected: d.killProbabilityDetected,
      randomEvents: d.randomKillMean,
    })),
    pad: g?.pad
      ? { xMm: g.pad.xM * 1e3, yMm: g.pad.yM * 1e3, wMm: g.pad.widthM * 1e3, hMm: g.pad.heightM * 1e3 }
      : undefined,
    killThreshold: g?.killedThreshold,
    dieLoss: loss ? { value: loss.value, form: poisson ? 'Poisson' : 'negative binomial' } : undefined,
  });
}

/**
 * The spectrum at the interface stacked by source; the largest sources alone, the rest pooled.
 * Sources with no particles at the interface are left out (no layer, no legend entry, not counted
 * among the pooled ones).
 */
export function SpectrumPanel(props: { a: PairAssessment; mode: 'per-bin' | 'cumulative' }) {
  const a = props.a;
  const base = `/pairs/${encodeURIComponent(a.pairId)}`;
  const sp = a.spectrum;
  if (!sp) return <p class="vc-small">No spectrum in this assessment.</p>;
  const totals = sp.series
    .map((s) => ({ s, t: s.counts.reduce((x, y) => x + y, 0) }))
    .filter((x) => x.t > 0)
    .sort((x, y) => y.t - x.t);
  // Each source's wafer (top or bottom) goes to the chart, which says it by outline and at the
  // front of the legend entry; the label's own "(top wafer …)" ending is then left off.
  const waferOf = new Map(a.contributions.map((c) => [c.key, { wafer: c.wafer, waferId: c.waferId }]));
  const entry = (s: (typeof sp.series)[number]): SpectrumSeries => {
    const w = waferOf.get(s.sourceKey);
    // A source of the pair as a whole (voids no scanned particle explains) has no wafer side.
    return w && w.wafer !== 'pair'
      ? {
          source: s.label.replace(/\s*\((top|bottom) wafer [^()]*\)$/, ''),
          counts: s.counts,
          wafer: w.wafer,
          waferId: w.waferId,
        }
      : { source: s.label, counts: s.counts };
  };
  const head = totals.slice(0, MAX_SPECTRUM_SERIES - 1).map((x) => entry(x.s));
  const tail = totals.slice(MAX_SPECTRUM_SERIES - 1);
  if (tail.length === 1) head.push(entry(tail[0]!.s));
  else if (tail.length > 1) {
    const pooled = new Array<number>(sp.centresM.length).fill(0);
    for (const x of tail)
      x.s.counts.forEach((v, i) => {
        pooled[i]! += v;
      });
    head.push({ source: `${tail.length} other sources`, counts: pooled });
  }
  const other = props.mode === 'per-bin' ? 'cumulative' : 'per-bin';
  return (
    <div class="vc-spectrum" id="spectrum" data-mode={props.mode}>
      {stackedSpectrum({
        id: 'spectrum-chart',
        title: `Pair ${a.pairId}: particles at the interface by size and source`,
        series: head,
        edgesM: sp.edgesM,
        mode: props.mode,
        basis: 'particles per pair',
        markers: [{ atM: a.reportableParticleM, label: 'reportable void' }],
      })}
      <p class="vc-small">
        {props.mode === 'per-bin' ? 'Count per size bin.' : 'Cumulative count N(≥ d).'}{' '}
        <a
          href={`${base}?spectrum=${other}&asOf=${a.asOfMs}#spectrum-panel`}
          hx-get={`${base}/spectrum?mode=${other}&asOf=${a.asOfMs}`}
          hx-target="#spectrum"
          hx-swap="outerHTML"
        >
          Show {other === 'cumulative' ? 'cumulative N(≥ d)' : 'count per bin'}
        </a>
      </p>
    </div>
  );
}

function RecleanSection(props: { a: PairAssessment }) {
  const r = props.a.reclean!;
  const before = props.a.figures;
  const after = r.after;
  const row = (label: string, b: string, x: string) => (
    <tr>
      <td>{label}</td>
      <td class="num">{b}</td>
      <td class="num">{x}</td>
    </tr>
  );
  return (
    <section class="vc-reclean">
      <h2>Modelled re-clean: {r.cleanLabel}</h2>
      <p>
        One more run of {r.cleanLabel} on both wafers (with its tool's adders):{' '}
        {r.meetsSpec ? (
          <strong class="vc-pass">✓ would meet the spec</strong>
        ) : (
          <strong class="vc-fail">✗ would not meet the spec</strong>
        )}
        {r.allowed ? '' : '; not allowed: a wafer has reached the re-clean count limit'}.
      </p>
      <table class="vc-table vc-table-compact vc-before-after">
        <thead>
          <tr>
            <th>Figure</th>
            <th class="num">As is</th>
            <th class="num">After the re-clean</th>
          </tr>
        </thead>
        <tbody>
          {row('expected reportable voids', fmtCountEstimate(before.voids), fmtCountEstimate(after.voids))}
          {row(
            'unbonded area fraction',
            fmtEstimate(before.unbondedFraction, fmtPct),
            fmtEstimate(after.unbondedFraction, fmtPct),
          )}
          {row(
            'die loss, Poisson',
            fmtCountEstimate(before.dieKillsPoisson, fmtDies),
            fmtCountEstimate(after.dieKillsPoisson, fmtDies),
          )}
          {row(
            'die loss, negative binomial',
            fmtCountEstimate(before.dieKillsNB, fmtDies),
            fmtCountEstimate(after.dieKillsNB, fmtDies),
          )}
          {row('particles at the interface', fmtNum(before.particles), fmtNum(after.particles))}
        </tbody>
      </table>
      <RecleanCaution
        text={
          props.a.caution ??
          'A re-clean is a process decision: it runs only through authorised recipes, within the re-clean count limits, by qualified people. voidcast estimates risk; it does not replace site procedures, local codes, safety data sheets or licensed practice.'
        }
      />
    </section>
  );
}
