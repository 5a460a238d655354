/**
 * The line view over a period: where the expected voids of every assessed lot come from (a Pareto
 * by tool, wait location, clean and size band), and each tool chamber's history (adders per pass
 * over time with the lots it touched). Every table has its downloads beside it.
 */
import type { ChamberHistory, LineParetoEntry, ParetoCategory } from '../../src/engine/audit/types.ts';
import { adderHistory } from '../charts/adder-history.tsx';
import { pareto } from '../charts/pareto.tsx';
import { fmtNum, fmtPct, fmtUtc } from '../partials/format.ts';
import { type AuditTable, AuditTableView, cell } from './audit-table.tsx';
import { isoUtc } from './audit-tables.ts';

export const PARETO_CATEGORIES: { category: ParetoCategory; id: string; title: string }[] = [
  { category: 'tool', id: 'pareto-tool', title: 'By tool' },
  { category: 'wait location', id: 'pareto-wait-location', title: 'By wait location' },
  { category: 'clean', id: 'pareto-clean', title: 'By clean' },
  { category: 'size band', id: 'pareto-size-band', title: 'By size band' },
];

const um = (m: number | null | undefined) =>
  m === null || m === undefined ? null : Number((m * 1e6).toPrecision(6));

/**
 * One Pareto table per category. The size-band table gives each band's particle diameters in µm
 * (the lower edge inclusive, the upper exclusive; an empty upper edge: no upper edge).
 */
export function paretoTable(entries: LineParetoEntry[], category: ParetoCategory): AuditTable {
  const def = PARETO_CATEGORIES.find((c) => c.category === category)!;
  const rows = entries.filter((e) => e.category === category);
  const bands = category === 'size band';
  return {
    id: def.id,
    title: `Expected voids ${def.title.toLowerCase()}`,
    columns: [
      {
        key: 'key',
        label: bands ? 'Size band' : category[0]!.toUpperCase() + category.slice(1),
      },
      ...(bands
        ? [
            { key: 'from_um', label: 'From (µm)', numeric: true },
            { key: 'to_um', label: 'Below (µm)', numeric: true },
          ]
        : []),
      { key: 'expected_voids', label: 'Expected voids', numeric: true },
      { key: 'share', label: 'Share', numeric: true },
      { key: 'cumulative_share', label: 'Cumulative share', numeric: true },
      { key: 'lots', label: 'Lots', numeric: true },
    ],
    rows: rows.map((e) => [
      cell(e.label === e.key ? e.key : `${e.label} (${e.key})`, { value: e.key }),
      ...(bands
        ? [
            cell(String(um(e.fromM) ?? ''), { value: um(e.fromM) }),
            cell(um(e.toM) === null ? '—' : String(um(e.toM)), { value: um(e.toM) }),
          ]
        : []),
      cell(fmtNum(e.expectedVoids), { value: Number(e.expectedVoids.toPrecision(6)) }),
      cell(fmtPct(e.share), { value: Number(e.share.toPrecision(6)), cls: 'vc-nowrap' }),
      cell(fmtPct(e.cumulativeShare), { value: Number(e.cumulativeShare.toPrecision(6)), cls: 'vc-nowrap' }),
      cell(String(e.lots), { value: e.lots }),
    ]),
    empty: 'No assessed lot in this period.',
  };
}

const chamberName = (h: ChamberHistory) => (h.chamber ? `${h.toolId}/${h.chamber}` : h.toolId);

/** Every pass of every chamber in the period. */
export function chamberPassesTable(histories: ChamberHistory[]): AuditTable {
  return {
    id: 'chamber-passes',
    title: 'Tool chamber passes',
    columns: [
      { key: 'chamber', label: 'Tool / chamber' },
      { key: 'at', label: 'Pass at (UTC)' },
      { key: 'lot', label: 'Lot' },
      { key: 'wafer', label: 'Wafer' },
      { key: 'adders_per_pass', label: 'Adders per pass', numeric: true },
      { key: 'lower', label: '95 % low', numeric: true },
      { key: 'upper', label: '95 % high', numeric: true },
    ],
    rows: histories.flatMap((h) =>
      h.points.map((p) => [
        cell(chamberName(h)),
        cell(fmtUtc(p.atMs), { value: isoUtc(p.atMs) }),
        cell(p.lotId, { href: `/lots/${encodeURIComponent(p.lotId)}` }),
        cell(p.waferId),
        cell(fmtNum(p.addersPerPass), { value: Number(p.addersPerPass.toPrecision(6)) }),
        cell(fmtNum(p.lower), { value: Number(p.lower.toPrecision(6)) }),
        cell(fmtNum(p.upper), { value: Number(p.upper.toPrecision(6)) }),
      ]),
    ),
    empty: 'No tool chamber pass in this period.',
  };
}

export function lineTables(pareto: LineParetoEntry[], histories: ChamberHistory[]): AuditTable[] {
  return [...PARETO_CATEGORIES.map((c) => paretoTable(pareto, c.category)), chamberPassesTable(histories)];
}

export interface LinePageProps {
  query: { from: string; to: string };
  period: { fromMs: number; toMs: number };
  pareto: LineParetoEntry[];
  /** Expected voids of the particle sources (the size bands' sum) and of no particle, over the lots. */
  particleVoids: number;
  unexplainedVoids: number;
  histories: ChamberHistory[];
  tables: AuditTable[];
  problems: string[];
  downloadHref: (table: string, format: 'csv' | 'xls-csv' | 'json') => string;
}

export function LinePage(p: LinePageProps) {
  const t = (id: string) => p.tables.find((x) => x.id === id)!;
  return (
    <section class="vc-line">
      <h1>Line view</h1>
      <p class="vc-lede">
        Where the expected voids of every lot assessed in the period come from, and what each tool chamber
        added pass by pass. {fmtUtc(p.period.fromMs)} to {fmtUtc(p.period.toMs)}.
      </p>
      <form class="vc-period-form" method="get" action="/line">
        <label>
          From (UTC)
          <input name="from" value={p.query.from} required />
        </label>
        <label>
          To (UTC)
          <input name="to" value={p.query.to} required />
        </label>
        <button type="submit">Show</button>
      </form>
      {p.problems.length ? (
        <div class="vc-error" role="alert" data-problems="">
          <ul>
            {p.problems.map((x) => (
              <li>{x}</li>
            ))}
          </ul>
        </div>
      ) : null}
      <h2 id="pareto">Sources of expected voids across lots</h2>
      <div class="vc-grid2">
        {PARETO_CATEGORIES.map((c) => {
          const items = p.pareto
            .filter((e) => e.category === c.category)
            .map((e) => ({ label: e.key, value: e.expectedVoids }));
          return (
            <div class="vc-chart-block" data-pareto={c.category}>
              <h3>{c.title}</h3>
              {items.length
                ? pareto({
                    title: `Expected voids ${c.title.toLowerCase()}`,
                    items,
                    valueLabel: 'expected voids',
                    id: `line-${c.id}`,
                    width: 560,
                  })
                : null}
              {c.category === 'size band' ? (
                <p class="vc-note" data-particle-voids={String(p.particleVoids)}>
                  The particle's diameter at the bond interface, lower edge included. The bands hold the
                  expected voids of every particle source ({fmtNum(p.particleVoids)} in all)
                  {p.unexplainedVoids > 0 ? (
                    <>
                      ; the {fmtNum(p.unexplainedVoids)} expected voids no scanned particle explains have no
                      particle size and are in no band
                    </>
                  ) : null}
                  .
                </p>
              ) : null}
              <AuditTableView table={t(c.id)} href={(f) => p.downloadHref(c.id, f)} />
            </div>
          );
        })}
      </div>
      <h2 id="chambers">Tool chamber histories</h2>
      {p.histories.length === 0 ? <p class="vc-note">No tool chamber pass in this period.</p> : null}
      <div class="vc-chart-grid">
        {p.histories.map((h) => (
          <figure class="vc-chart-block" data-chamber={chamberName(h)}>
            {adderHistory({
              title: `${chamberName(h)}: adders per pass`,
              id: `ch-${chamberName(h)}`,
              width: 560,
              passes: h.points.map((x) => ({ timeMs: x.atMs, adders: x.addersPerPass, waferId: x.waferId })),
            })}
            <figcaption>
              {chamberName(h)}: {h.points.length} pass{h.points.length === 1 ? '' : 'es'} in the period; lots
              it touched:{' '}
              {h.lots.map((l, k) => (
                <>
                  {k ? ', ' : ''}
                  <a href={`/lots/${encodeURIComponent(l)}`}>{l}</a>
                </>
              ))}
            </figcaption>
          </figure>
        ))}
      </div>
      <AuditTableView table={t('chamber-passes')} href={(f) => p.downloadHref('chamber-passes', f)} />
    </section>
  );
}
