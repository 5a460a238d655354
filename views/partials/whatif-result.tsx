/**
 * What a scenario does, beside the figures as they are: the call and its reasons, the headline
 * figures with their intervals, the spec lines, and the Pareto of the scenario — for a pair, a lot,
 * or every waiting lot. One element (#whatif-result) serves the full page and the htmx swap.
 *
 * Type-only imports of the engine's result types: the page draws what the engine returned.
 */
import type { LotWhatIf, PairWhatIf, WaitingWhatIf } from '../../src/engine/tuning/types.ts';
import type { Call, PairAssessment, PairFigures, ParetoEntry } from '../../src/engine/types.ts';
import { pareto } from '../charts/pareto.tsx';
import { CallBadge } from './call.tsx';
import {
  fmtAreaM2,
  fmtConfidence,
  fmtCountBound,
  fmtCountEstimate,
  fmtDies,
  fmtEstimate,
  fmtNum,
  fmtPct,
  fmtShare,
} from './format.ts';
import { ReasonList, RecleanCaution } from './reasons.tsx';

/** The words that go with any suggestion of a re-clean or an extra clean pass (RULES: safety). */
export const RECLEAN_SAFETY =
  'A re-clean or an extra clean pass is a process decision: it runs only through authorised recipes, within ' +
  'the re-clean count limits, by qualified people, and defers to local codes, safety data sheets and licensed ' +
  'practice. voidcast estimates risk; it does not replace site procedures.';

export const PARETO_GROUPINGS = [
  { by: 'tool', label: 'by tool', field: 'byTool' },
  { by: 'location', label: 'by wait location', field: 'byWaitLocation' },
  { by: 'clean', label: 'by clean', field: 'byClean' },
  { by: 'kind', label: 'by kind of source', field: 'byKind' },
] as const;
export type WhatIfParetoBy = (typeof PARETO_GROUPINGS)[number]['by'];

function signed(v: number, f: (x: number) => string): string {
  if (!Number.isFinite(v)) return '—';
  if (v === 0) return '0';
  return v > 0 ? `+${f(v)}` : `−${f(-v)}`;
}

function Applied(props: { applied: string[] }) {
  if (props.applied.length === 0)
    return (
      <p class="vc-small" data-applied="none">
        No lever changed: the scenario is the stored inputs, and its figures are the assessment's own.
      </p>
    );
  return (
    <ul class="vc-applied">
      {props.applied.map((a) => (
        <li>{a}</li>
      ))}
    </ul>
  );
}

/** The error in place of the figures: a lever the scenario cannot apply, in the user's terms. */
export function WhatIfError(props: { message: string }) {
  return (
    <div id="whatif-result" class="vc-whatif-result" data-swap-error-codes="400 404" aria-live="polite">
      <p class="vc-error" role="alert">
        This scenario cannot be computed: {props.message} Nothing was changed.
      </p>
    </div>
  );
}

/** True when the scenario runs a clean more often or changes one (the safety words go beside it). */
function touchesCleans(levers: { kind: string }[]): boolean {
  return levers.some((l) => l.kind === 'clean' || l.kind === 'removal-scale');
}

function CallPair(props: { asIs: Call; whatIf: Call }) {
  const changed = props.asIs !== props.whatIf;
  return (
    <p class="vc-whatif-calls" data-changed={changed ? 'yes' : 'no'}>
      As is <CallBadge call={props.asIs} /> → scenario <CallBadge call={props.whatIf} />{' '}
      <strong>{changed ? 'the call changes' : 'the call stays'}</strong>
    </p>
  );
}

function figureRows(a: PairFigures, b: PairFigures) {
  const dies = a.dieKillsNB !== null;
  return [
    {
      key: 'voids',
      label: 'expected reportable voids',
      asIs: fmtCountEstimate(a.voids),
      whatIf: fmtCountEstimate(b.voids),
      change: signed(b.voids.value - a.voids.value, (x) => fmtNum(x)),
    },
    {
      key: 'unbonded',
      label: 'unbonded area',
      asIs: `${fmtAreaM2(a.unbondedAreaM2.value)} · ${fmtEstimate(a.unbondedFraction, fmtPct)}`,
      whatIf: `${fmtAreaM2(b.unbondedAreaM2.value)} · ${fmtEstimate(b.unbondedFraction, fmtPct)}`,
      change: signed(b.unbondedFraction.value - a.unbondedFraction.value, fmtPct),
    },
    ...(dies
      ? [
          {
            key: 'dies-poisson',
            label: 'die loss, Poisson',
            asIs: fmtCountEstimate(a.dieKillsPoisson, fmtDies),
            whatIf: fmtCountEstimate(b.dieKillsPoisson, fmtDies),
            change: signed((b.dieKillsPoisson?.value ?? 0) - (a.dieKillsPoisson?.value ?? 0), fmtDies),
          },
          {
            key: 'dies-nb',
            label: 'die loss, negative binomial',
            asIs: fmtCountEstimate(a.dieKillsNB, fmtDies),
            whatIf: fmtCountEstimate(b.dieKillsNB, fmtDies),
            change: signed((b.dieKillsNB?.value ?? 0) - (a.dieKillsNB?.value ?? 0), fmtDies),
          },
          {
            key: 'yield',
            label: 'die yield',
            asIs: fmtEstimate(a.dieYield, fmtPct),
            whatIf: fmtEstimate(b.dieYield, fmtPct),
            change: signed((b.dieYield?.value ?? 0) - (a.dieYield?.value ?? 0), fmtPct),
          },
        ]
      : []),
    {
      key: 'particles',
      label: 'particles at the interface',
      asIs: fmtNum(a.particles),
      whatIf: fmtNum(b.particles),
      change: signed(b.particles - a.particles, (x) => fmtNum(x)),
    },
  ];
}

function FiguresTable(props: { asIs: PairAssessment; whatIf: PairAssessment }) {
  const rows = figureRows(props.asIs.figures, props.whatIf.figures);
  return (
    <table class="vc-table vc-table-compact vc-whatif-figures">
      <caption class="vc-small">
        Central values with their {fmtConfidence(props.asIs.figures.voids)} ({props.asIs.draws} Monte Carlo
        draws, seed {props.asIs.seed}, the same for both).
      </caption>
      <thead>
        <tr>
          <th>Figure</th>
          <th class="num">As is</th>
          <th class="num">Scenario</th>
          <th class="num">Change</th>
        </tr>
      </thead>
      <tbody>
        {rows.map((r) => (
          <tr data-figure={r.key}>
            <td>{r.label}</td>
            <td class="num" data-side="as-is">
              {r.asIs}
            </td>
            <td class="num" data-side="scenario">
              {r.whatIf}
            </td>
            <td class="num">{r.change}</td>
          </tr>
        ))}
      </tbody>
    </table>
  );
}

const SPEC_LABEL = {
  voids: 'reportable voids',
  unbondedFraction: 'unbonded area fraction',
  dieYield: 'die yield',
};

function SpecTable(props: { asIs: PairAssessment; whatIf: PairAssessment }) {
  if (props.asIs.specChecks.length === 0) return null;
  const fmt = (m: keyof typeof SPEC_LABEL, v: number) =>
    m === 'voids' ? fmtCountBound(v, 'high') : fmtPct(v);
  return (
    <table class="vc-table vc-table-compact vc-whatif-spec">
      <thead>
        <tr>
          <th>Spec line ({props.asIs.specVersion})</th>
          <th class="num">Limit</th>
          <th class="num">As is</th>
          <th class="num">Scenario</th>
        </tr>
      </thead>
      <tbody>
        {props.asIs.specChecks.map((s, i) => {
          const w = props.whatIf.specChecks[i];
          return (
            <tr>
              <td>{SPEC_LABEL[s.metric]}</td>
              <td class="num">{s.metric === 'voids' ? fmtNum(s.limit) : fmtPct(s.limit)}</td>
              <td class="num">
                {fmt(s.metric, s.bound)}{' '}
                <span class={s.pass ? 'vc-pass' : 'vc-fail'}>{s.pass ? '✓' : '✗'}</span>
              </td>
              <td class="num">
                {w ? (
                  <>
                    {fmt(w.metric, w.bound)}{' '}
                    <span class={w.pass ? 'vc-pass' : 'vc-fail'}>{w.pass ? '✓ pass' : '✗ fail'}</span>
                  </>
                ) : (
                  '—'
                )}
              </td>
            </tr>
          );
        })}
      </tbody>
    </table>
  );
}

function paretoItems(entries: ParetoEntry[], metric: 'expectedVoids' | 'dieKillEvents') {
  return entries.map((e) => ({
    label: e.label,
    value: metric === 'expectedVoids' ? e.expectedVoids : e.dieKillEvents,
  }));
}

/** The scenario's Pareto beside the as-is one, in the same grouping, and a table of the shares. */
function ParetoUpdate(props: {
  asIs: { pareto: PairAssessment['pareto'] };
  whatIf: { pareto: PairAssessment['pareto'] };
  by: WhatIfParetoBy;
  subject: string;
  switchHref: (by: WhatIfParetoBy) => string;
}) {
  const g = PARETO_GROUPINGS.find((x) => x.by === props.by)!;
  const metric = props.asIs.pareto.metric;
  const unit = metric === 'expectedVoids' ? 'expected voids' : 'expected die-kill events';
  const a = props.asIs.pareto[g.field] as ParetoEntry[];
  const b = props.whatIf.pareto[g.field] as ParetoEntry[];
  const keys = [...new Set([...b.map((e) => e.key), ...a.map((e) => e.key)])];
  const val = (list: ParetoEntry[], k: string) => {
    const e = list.find((x) => x.key === k);
    return e ? (metric === 'expectedVoids' ? e.expectedVoids : e.dieKillEvents) : 0;
  };
  const share = (list: ParetoEntry[], k: string) => list.find((x) => x.key === k)?.share ?? 0;
  const label = (k: string) => (b.find((x) => x.key === k) ?? a.find((x) => x.key === k))!.label;
  keys.sort((k1, k2) => val(b, k2) - val(b, k1));
  return (
    <section class="vc-whatif-pareto" aria-label="Pareto of the scenario">
      <h3>Where the risk comes from, {g.label}</h3>
      <nav class="vc-tabs" aria-label="Pareto grouping">
        {PARETO_GROUPINGS.map((x) => (
          <a
            href={props.switchHref(x.by)}
            class={x.by === props.by ? 'vc-tab active' : 'vc-tab'}
            aria-current={x.by === props.by ? 'true' : undefined}
          >
            {x.label}
          </a>
        ))}
      </nav>
      <div class="vc-grid2">
        <figure class="vc-panel">
          {pareto({
            id: 'whatif-pareto-asis',
            title: `${props.subject} as is: ${unit} ${g.label}`,
            items: paretoItems(a, metric),
            valueLabel: unit,
          })}
          <figcaption>As is.</figcaption>
        </figure>
        <figure class="vc-panel">
          {pareto({
            id: 'whatif-pareto-scenario',
            title: `${props.subject}, scenario: ${unit} ${g.label}`,
            items: paretoItems(b, metric),
            valueLabel: unit,
          })}
          <figcaption>The scenario.</figcaption>
        </figure>
      </div>
      <table class="vc-table vc-table-compact vc-whatif-pareto-table">
        <thead>
          <tr>
            <th>Source</th>
            <th class="num">As is</th>
            <th class="num">Share</th>
            <th class="num">Scenario</th>
            <th class="num">Share</th>
          </tr>
        </thead>
        <tbody>
          {keys.slice(0, 10).map((k) => (
            <tr data-key={k}>
              <td>{label(k)}</td>
              <td class="num">{fmtNum(val(a, k))}</td>
              <td class="num">{fmtShare(share(a, k))}</td>
              <td class="num">{fmtNum(val(b, k))}</td>
              <td class="num">{fmtShare(share(b, k))}</td>
            </tr>
          ))}
        </tbody>
      </table>
    </section>
  );
}

export interface ResultLinks {
  /** This scenario's own address (the page with its levers). */
  self: string;
  /** The JSON export of this scenario and its figures. */
  exportHref: string;
  /** A Pareto grouping's address (the same scenario). */
  paretoHref: (by: WhatIfParetoBy) => string;
}

function Links(props: { links: ResultLinks }) {
  return (
    <p class="vc-whatif-links vc-small">
      Link to this scenario: <a href={props.links.self}>{props.links.self}</a> ·{' '}
      <a href={props.links.exportHref} download>
        export as JSON
      </a>
    </p>
  );
}

export function PairWhatIfResult(props: { w: PairWhatIf; by: WhatIfParetoBy; links: ResultLinks }) {
  const { w } = props;
  const s = w.whatIf;
  return (
    <div id="whatif-result" class="vc-whatif-result" data-swap-error-codes="400 404" aria-live="polite">
      <h2>The scenario</h2>
      <Applied applied={w.applied} />
      <div class="vc-call-box" data-call={s.call}>
        <CallPair asIs={w.asIs.call} whatIf={s.call} />
        <ReasonList reasons={s.reasons} />
        {s.call === 're-clean' && s.caution ? <RecleanCaution text={s.caution} /> : null}
      </div>
      {touchesCleans(w.scenario.levers) && s.call !== 're-clean' ? (
        <RecleanCaution text={RECLEAN_SAFETY} />
      ) : null}
      <FiguresTable asIs={w.asIs} whatIf={s} />
      <SpecTable asIs={w.asIs} whatIf={s} />
      <ParetoUpdate
        asIs={w.asIs}
        whatIf={s}
        by={props.by}
        subject={`Pair ${w.pairId}`}
        switchHref={props.links.paretoHref}
      />
      <Links links={props.links} />
    </div>
  );
}

function LotPairsTable(props: { w: LotWhatIf }) {
  const dies = props.w.pairs.some((p) => p.delta.dieLoss !== null);
  const asIs = new Map(props.w.asIs.pairs.map((p) => [p.pairId, p]));
  const whatIf = new Map(props.w.whatIf.pairs.map((p) => [p.pairId, p]));
  return (
    <table class="vc-table vc-table-compact vc-whatif-pairs">
      <thead>
        <tr>
          <th>Pair</th>
          <th>As is</th>
          <th>Scenario</th>
          <th class="num">Voids as is</th>
          <th class="num">Voids, scenario</th>
          {dies ? <th class="num">Die loss change</th> : null}
        </tr>
      </thead>
      <tbody>
        {props.w.pairs.map((p) => (
          <tr data-pair={p.pairId} data-changed={p.asIsCall !== p.whatIfCall ? 'yes' : 'no'}>
            <td>
              <a href={`/pairs/${encodeURIComponent(p.pairId)}`}>{p.pairId}</a>
            </td>
            <td>
              <CallBadge call={p.asIsCall} />
            </td>
            <td>
              <CallBadge call={p.whatIfCall} />
            </td>
            <td class="num">
              {asIs.get(p.pairId) ? fmtCountEstimate(asIs.get(p.pairId)!.figures.voids) : '—'}
            </td>
            <td class="num">
              {whatIf.get(p.pairId) ? fmtCountEstimate(whatIf.get(p.pairId)!.figures.voids) : '—'}
            </td>
            {dies ? (
              <td class="num">{p.delta.dieLoss === null ? '—' : signed(p.delta.dieLoss, fmtDies)}</td>
            ) : null}
          </tr>
        ))}
      </tbody>
    </table>
  );
}

function lotCounts(pairs: { call: Call }[]) {
  const n = (c: Call) => pairs.filter((p) => p.call === c).length;
  return `${n('bond')} bond · ${n('re-clean')} re-clean · ${n('hold')} hold`;
}

export function LotWhatIfResult(props: { w: LotWhatIf; by: WhatIfParetoBy; links: ResultLinks }) {
  const { w } = props;
  const caution = w.whatIf.pairs.find((p) => p.call === 're-clean' && p.caution)?.caution ?? null;
  return (
    <div id="whatif-result" class="vc-whatif-result" data-swap-error-codes="400 404" aria-live="polite">
      <h2>The scenario</h2>
      <Applied applied={w.applied} />
      <div class="vc-call-box" data-call={w.whatIf.call}>
        <CallPair asIs={w.asIs.call} whatIf={w.whatIf.call} />
        <p class="vc-small">
          Pairs as is: {lotCounts(w.asIs.pairs)}; in the scenario: {lotCounts(w.whatIf.pairs)}. Expected voids
          over the lot {signed(w.delta.voids, (x) => fmtNum(x))}
          {w.delta.dieKillsNB !== null ? `; killed dies ${signed(w.delta.dieKillsNB, fmtDies)}` : ''}.
        </p>
        {caution ? (
          <RecleanCaution text={caution} />
        ) : touchesCleans(w.scenario.levers) ? (
          <RecleanCaution text={RECLEAN_SAFETY} />
        ) : null}
      </div>
      <LotPairsTable w={w} />
      <ParetoUpdate
        asIs={w.asIs}
        whatIf={w.whatIf}
        by={props.by}
        subject={`Lot ${w.lotId}`}
        switchHref={props.links.paretoHref}
      />
      <Links links={props.links} />
    </div>
  );
}

export function WaitingWhatIfResult(props: { w: WaitingWhatIf; links: ResultLinks }) {
  const { w } = props;
  const anyReclean = w.lots.some((l) => l.whatIf.call === 're-clean');
  return (
    <div id="whatif-result" class="vc-whatif-result" data-swap-error-codes="400 404" aria-live="polite">
      <h2>The scenario on every waiting lot</h2>
      <Applied applied={w.lots[0]?.applied ?? []} />
      {w.lots.length === 0 ? <p>No lot is waiting to bond at this time.</p> : null}
      <table class="vc-table vc-table-compact vc-whatif-lots">
        <thead>
          <tr>
            <th>Lot</th>
            <th>As is</th>
            <th>Scenario</th>
            <th>Pairs, scenario</th>
            <th class="num">Expected voids, change</th>
            <th class="num">Killed dies, change</th>
            <th>Scenario on the lot</th>
          </tr>
        </thead>
        <tbody>
          {w.lots.map((l) => (
            <tr data-lot={l.lotId} data-changed={l.callChanged ? 'yes' : 'no'}>
              <td>
                <a href={`/lots/${encodeURIComponent(l.lotId)}`}>{l.lotId}</a>
              </td>
              <td>
                <CallBadge call={l.asIs.call} />
              </td>
              <td>
                <CallBadge call={l.whatIf.call} />
              </td>
              <td>{lotCounts(l.whatIf.pairs)}</td>
              <td class="num">{signed(l.delta.voids, (x) => fmtNum(x))}</td>
              <td class="num">{l.delta.dieKillsNB === null ? '—' : signed(l.delta.dieKillsNB, fmtDies)}</td>
              <td>
                <a
                  href={`/whatif/lot/${encodeURIComponent(l.lotId)}${new URL(props.links.self, 'http://x').search}`}
                >
                  open
                </a>
              </td>
            </tr>
          ))}
        </tbody>
      </table>
      {w.skipped.length > 0 ? (
        <ul class="vc-notes">
          {w.skipped.map((s) => (
            <li>
              {s.lotId}: not computed — {s.reason}
            </li>
          ))}
        </ul>
      ) : null}
      {anyReclean || touchesCleans(w.scenario.levers) ? <RecleanCaution text={RECLEAN_SAFETY} /> : null}
      <Links links={props.links} />
    </div>
  );
}
