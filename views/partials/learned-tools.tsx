/**
 * The "learned from the line's scans" section of the Tools & cleans page: adders per pass of each
 * tool and chamber and the removal curve of each clean as fitted from matched scans, with their
 * intervals, the data they rest on, the typed values beside and the too-little-data reasons. Until
 * asked, it shows a form that asks for the fit (GET, no state changes; htmx swaps the section); once
 * fitted, the form that proposes every fit of the line as one parameter set (propose-line-form.tsx).
 */
import type {
  AdderLearning,
  AddersReport,
  RemovalLearning,
  RemovalReport,
} from '../../src/engine/learn/types.ts';
import { adderHistory } from '../charts/adder-history.tsx';
import { type RemovalCurvePoint, removalCurve } from '../charts/removal-curve.tsx';
import { fmtDiameter, fmtNum, fmtPct } from './format.ts';
import { ProposeLineForm } from './propose-line-form.tsx';

export interface LearnedCleanView {
  learning: RemovalLearning;
  /** The typed curve PRE(d) (tools file) on the same sizes, or empty. */
  typedCurve: RemovalCurvePoint[];
}

export interface LearnedView {
  adders: AddersReport;
  removal: RemovalReport;
  cleans: LearnedCleanView[];
  /** The CSRF token of the propose form. */
  csrfToken: string;
  /** The label the propose form offers. */
  proposeLabel: string;
  /** The propose form's state after a refused post. */
  proposeError?: string;
  proposeName?: string;
}

function fmtUm(m: number): string {
  return `${fmtNum(m * 1e6)} µm`;
}

function AdderRow(props: { a: AdderLearning }) {
  const { a } = props;
  const f = a.fit;
  return (
    <tr data-learned-tool={a.toolKey}>
      <td>
        {a.toolKey}
        {a.name ? <span class="vc-small"> {a.name}</span> : null}
      </td>
      <td class="num">{a.passes.length}</td>
      <td class="num">{f && a.referenceM !== null ? `${f.total} ≥ ${fmtDiameter(a.referenceM)}` : '—'}</td>
      <td class="num">
        {f ? `${fmtNum(f.meanPerPass)} [${fmtNum(f.lowerPerPass)}–${fmtNum(f.upperPerPass)}]` : '—'}
      </td>
      <td class="num">{a.typed ? fmtNum(a.typed.countAtReference) : '—'}</td>
      <td class="num">
        {f?.slope != null
          ? `${fmtNum(f.slope)} ± ${fmtNum(f.slopeSe!)} [${fmtNum(f.slopeLow!)}–${fmtNum(f.slopeHigh!)}]`
          : '—'}
      </td>
      <td class="num">{a.typed ? fmtNum(a.typed.slope) : '—'}</td>
      <td class="num">{f?.dispersion?.index != null ? fmtNum(f.dispersion.index) : '—'}</td>
      <td>{a.proposal ? 'proposed' : a.tooLittle}</td>
    </tr>
  );
}

function AdderDetails(props: { a: AdderLearning }) {
  const { a } = props;
  if (a.passes.length === 0 && a.notes.length === 0) return null;
  return (
    <details class="vc-learned-tool" data-learned-tool={a.toolKey}>
      <summary>
        {a.toolKey}: {a.passes.length} passes{a.notes.length ? `, ${a.notes.length} notes` : ''}
      </summary>
      {a.passes.length > 0
        ? adderHistory({
            id: `adders-${a.toolKey}`,
            title: `${a.toolKey}: adders per pass${a.referenceM !== null ? ` ≥ ${fmtDiameter(a.referenceM)}` : ''} over time`,
            passes: a.passes.map((p) => ({ timeMs: p.timeMs, adders: p.adders, waferId: p.waferId })),
            mean: a.fit
              ? { value: a.fit.meanPerPass, low: a.fit.lowerPerPass, high: a.fit.upperPerPass }
              : null,
            typed: a.typed?.countAtReference ?? null,
          })
        : null}
      <ul class="vc-small">
        {a.notes.map((n) => (
          <li>{n}</li>
        ))}
      </ul>
    </details>
  );
}

function CleanFigure(props: { c: LearnedCleanView }) {
  const { learning: l, typedCurve } = props.c;
  const f = l.fit;
  const t = l.typed;
  return (
    <figure class="vc-panel vc-learned-clean" data-learned-clean={l.cleanId}>
      {removalCurve({
        id: `learned-${l.cleanId}`,
        title: `${l.name ?? l.cleanId}: removal learned from matched scans`,
        curve: l.curve.map((p) => ({ diameterM: p.diameterM, efficiency: p.efficiency })),
        curveLabel: 'fitted PRE(d)',
        band: l.curve.map((p) => ({ diameterM: p.diameterM, lower: p.lower, upper: p.upper })),
        typed: typedCurve,
        typedLabel: 'typed PRE(d)',
        measured: l.bands.map((b) => ({
          fromM: b.lowerM,
          toM: b.upperM,
          efficiency: 1 - b.survival,
          lo: 1 - b.wilsonHigh,
          hi: 1 - b.wilsonLow,
          n: b.n,
        })),
      })}
      <figcaption>
        <strong>{l.name ?? l.cleanId}</strong> <span class="vc-small">{l.cleanId}</span>: {l.passes.length}{' '}
        passes, {l.particles} particles followed, {l.removed} removed.{' '}
        {f ? (
          <>
            Fitted: maximum{' '}
            {f.maxEfficiencyFitted
              ? `${fmtPct(f.maxEfficiency)} [${fmtPct(f.maxEfficiencyLow!)}–${fmtPct(f.maxEfficiencyHigh!)}]`
              : `${fmtPct(f.maxEfficiency)} (fixed)`}
            , half of it at {fmtDiameter(f.d50M)} [{fmtDiameter(f.d50LowM)}–{fmtDiameter(f.d50HighM)}], width{' '}
            {fmtNum(f.widthDecades)} [{fmtNum(f.widthLowDecades)}–{fmtNum(f.widthHighDecades)}] decades.{' '}
          </>
        ) : null}
        {t
          ? `Typed: ${fmtPct(t.maxEfficiency)}, ${fmtDiameter(t.halfSizeM)}, ${fmtNum(t.widthDecades)} decades. `
          : 'No typed curve. '}
        {l.proposal ? 'Proposed for a parameter set.' : l.tooLittle}
        {l.ownAdders
          ? ` The clean's own adders, kept apart: ${fmtNum(l.ownAdders.meanPerPass)} per pass [${fmtNum(l.ownAdders.lowerPerPass)}–${fmtNum(l.ownAdders.upperPerPass)}].`
          : ''}
        {l.notes.length ? (
          <ul class="vc-small">
            {l.notes.map((n) => (
              <li>{n}</li>
            ))}
          </ul>
        ) : null}
      </figcaption>
    </figure>
  );
}

function proposeHolds(l: LearnedView): string {
  const a = l.adders.results.filter((r) => r.proposal).length;
  const r = l.removal.results.filter((x) => x.proposal).length;
  return `Stores, as one proposed set, the ${a} adder fit${a === 1 ? '' : 's'} and ${r} removal curve${r === 1 ? '' : 's'} proposed above, and the calibration from the void inspections (Calibration page) fitted with them applied.`;
}

export function LearnedSection(props: { learned: LearnedView | null }) {
  const l = props.learned;
  if (!l)
    return (
      <section id="vc-learned" class="vc-learned">
        <h2>Learned from the line’s scans</h2>
        <form
          method="get"
          action="/tools#vc-learned"
          hx-get="/tools/learned"
          hx-target="#vc-learned"
          hx-swap="outerHTML"
        >
          <input type="hidden" name="learn" value="1" />
          <p class="vc-small">
            Fits adders per pass and removal curves from wafers scanned before and after a tool or clean
            (matched defect by defect). Nothing changes until a person adopts a parameter set.
          </p>
          <button type="submit">Fit from the scans</button>
        </form>
      </section>
    );
  const p = l.adders.position;
  return (
    <section id="vc-learned" class="vc-learned">
      <h2>Learned from the line’s scans</h2>
      <p class="vc-small">
        95 % intervals. Positioning error between two scans σ = {fmtUm(p.sigmaM)} per axis (
        {p.source === 'estimated'
          ? `estimated from ${p.n} confident matches`
          : 'default: too few matches to estimate it'}
        ), match radius {fmtUm(p.radiusM)}. Nothing changes until a person adopts a parameter set.
      </p>
      <h3>Adders per wafer pass</h3>
      {l.adders.results.length === 0 ? (
        <p class="vc-note">No pass through a tool lies between two scans of a wafer.</p>
      ) : (
        <table class="vc-table vc-table-compact vc-learned-adders">
          <thead>
            <tr>
              <th>Tool</th>
              <th class="num">Passes</th>
              <th class="num">Adders</th>
              <th class="num">Fitted per pass</th>
              <th class="num">Typed per pass</th>
              <th class="num">Fitted slope</th>
              <th class="num">Typed slope</th>
              <th class="num">Variance/mean</th>
              <th>Status</th>
            </tr>
          </thead>
          <tbody>
            {l.adders.results.map((a) => (
              <AdderRow a={a} />
            ))}
          </tbody>
        </table>
      )}
      {l.adders.results.map((a) => (
        <AdderDetails a={a} />
      ))}
      <h3>Removal by clean</h3>
      {l.cleans.length === 0 ? (
        <p class="vc-note">No pass through a clean lies between two scans of a wafer.</p>
      ) : (
        <div class="vc-grid2">
          {l.cleans.map((c) => (
            <CleanFigure c={c} />
          ))}
        </div>
      )}
      <ProposeLineForm
        action="/tools/propose"
        idPrefix="propose"
        csrfToken={l.csrfToken}
        label={l.proposeLabel}
        holds={proposeHolds(l)}
        {...(l.proposeError ? { error: l.proposeError } : {})}
        {...(l.proposeName ? { name: l.proposeName } : {})}
      />
      {[...l.adders.issues, ...l.removal.issues].length ? (
        <ul class="vc-small vc-learned-issues">
          {[...new Set([...l.adders.issues, ...l.removal.issues].map((i) => i.message))].map((m) => (
            <li>{m}</li>
          ))}
        </ul>
      ) : null}
    </section>
  );
}
