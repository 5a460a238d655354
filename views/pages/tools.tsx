/**
 * Tools & cleans: adders per wafer pass per tool and chamber, and each clean's removal
 * efficiency against particle size with the measured size bands where there are any.
 */
import { removalCurve } from '../charts/removal-curve.tsx';
import { fmtDiameter, fmtNum, fmtPct } from '../partials/format.ts';
import { LearnedSection, type LearnedView } from '../partials/learned-tools.tsx';

export interface ToolRow {
  toolId: string;
  chamber: string | null;
  name: string;
  kind: string;
  /** Adders per wafer pass ≥ the reference size, with the power-law slope; null: none stated. */
  adders: { countAbove: number; atDiameterM: number; slope: number | null; model: string } | null;
  uncertaintyFactor: number;
  /** Steps in the ledger that ran on this tool (and chamber). */
  passes: number;
}

export interface CleanView {
  cleanId: string;
  name: string;
  toolId: string | null;
  recipe: string | null;
  curveKind: string;
  /** Parameters of the logistic curve drawn (stated in the file, or fitted to its bands). */
  params: { maxEfficiency: number; halfSizeM: number; widthDecades: number } | null;
  /** True when the curve was fitted to measured bands. */
  fitted: boolean;
  curve: { diameterM: number; efficiency: number }[];
  measured: { fromM: number; toM: number; efficiency: number; lo?: number; hi?: number; n?: number }[];
  /** Efficiency at reference sizes (45 nm, 100 nm, 300 nm), for the table. */
  at: { diameterM: number; efficiency: number }[];
}

export function ToolsPage(props: { tools: ToolRow[]; cleans: CleanView[]; learned?: LearnedView | null }) {
  return (
    <section class="vc-tools">
      <h1>Tools &amp; cleans</h1>
      <p class="vc-lede">
        What each tool adds to a wafer per pass, and what each clean removes, by particle size. Adders are
        stated per wafer at or above a reference LSE size; removal efficiency PRE(d) = 1 − after/before.
      </p>
      <h2>Adders per wafer pass</h2>
      {props.tools.length === 0 ? (
        <p class="vc-note">
          No tools yet. Import a tools file on the <a href="/imports">Imports</a> page.
        </p>
      ) : (
        <table class="vc-table vc-table-compact vc-adders">
          <thead>
            <tr>
              <th>Tool</th>
              <th>Chamber</th>
              <th>Kind</th>
              <th class="num">Adders per pass</th>
              <th class="num">Power-law slope</th>
              <th class="num">Uncertainty (95 %)</th>
              <th class="num">Passes in ledger</th>
            </tr>
          </thead>
          <tbody>
            {[...props.tools]
              .sort((a, b) => (b.adders?.countAbove ?? -1) - (a.adders?.countAbove ?? -1))
              .map((t) => (
                <tr data-tool={t.toolId}>
                  <td>
                    {t.name} <span class="vc-small">{t.toolId}</span>
                  </td>
                  <td>{t.chamber ?? '—'}</td>
                  <td>{t.kind}</td>
                  <td class="num">
                    {t.adders
                      ? `${fmtNum(t.adders.countAbove)} ≥ ${fmtDiameter(t.adders.atDiameterM)}`
                      : 'none stated'}
                  </td>
                  <td class="num">{t.adders?.slope != null ? fmtNum(t.adders.slope) : '—'}</td>
                  <td class="num">{t.adders ? `×/÷ ${fmtNum(t.uncertaintyFactor)}` : '—'}</td>
                  <td class="num">{t.passes}</td>
                </tr>
              ))}
          </tbody>
        </table>
      )}
      <h2>Cleans</h2>
      {props.cleans.length === 0 ? (
        <p class="vc-small">No cleans defined.</p>
      ) : (
        <div class="vc-grid2">
          {props.cleans.map((c) => (
            <figure class="vc-panel vc-clean" data-clean={c.cleanId}>
              {removalCurve({
                id: `clean-${c.cleanId}`,
                title: `${c.name}: removal efficiency by size`,
                curve: c.curve,
                measured: c.measured,
              })}
              <figcaption>
                <strong>{c.name}</strong> <span class="vc-small">{c.cleanId}</span>
                {c.toolId ? ` on ${c.toolId}` : ''}
                {c.recipe ? `, recipe ${c.recipe}` : ''}.{' '}
                {c.params
                  ? `${c.fitted ? 'Logistic fitted to the measured bands' : 'Logistic in log d'}: maximum ${fmtPct(c.params.maxEfficiency)}, half of it at ${fmtDiameter(c.params.halfSizeM)}, width ${fmtNum(c.params.widthDecades)} decades.`
                  : 'Measured size bands only (too few to fit a curve).'}{' '}
                {c.at.map((p) => `${fmtDiameter(p.diameterM)}: ${fmtPct(p.efficiency)}`).join(' · ')}
              </figcaption>
            </figure>
          ))}
        </div>
      )}
      <LearnedSection learned={props.learned ?? null} />
      <aside class="vc-caution" role="note">
        Pre-bond cleans use hazardous chemicals (HF and buffered oxide etch, SC-1/SC-2 and peroxide mixtures).
        Any change of a clean goes through the site's authorised recipes, its chemical hygiene plan and the
        safety data sheets; voidcast only estimates what a clean removes.
      </aside>
    </section>
  );
}
