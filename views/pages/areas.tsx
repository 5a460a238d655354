/**
 * Areas: every monitored location grouped by area with its ISO 14644-1 status (target class,
 * the class its counter data achieve, pass or fail), the trend panel, and the excursion log
 * (samples above an action level, with the wafers exposed at that time).
 */
import { fmtDiameter, fmtDurationS, fmtNum, fmtUtc } from '../partials/format.ts';
import { TrendPanel, type TrendPanelProps } from '../partials/trend-panel.tsx';

export interface LocationStatus {
  locationId: string;
  name: string;
  environment: string;
  targetClass: number | null;
  /** Cleanest class the location's mean concentrations meet (ISO 14644-1:2015), null: no data or above class 9. */
  achievedClass: number | null;
  /** achieved ≤ target; null when either is unknown. */
  pass: boolean | null;
  samples: number;
  /** Sizes considered in the classification, m. */
  sizesM: number[];
  lastSampleMs: number | null;
  note: string | null;
}

export interface AreaGroup {
  area: string;
  locations: LocationStatus[];
}

export interface ExcursionRow {
  locationId: string;
  locationName: string;
  /** First sample above the action level starts, last one ends, UTC ms; how many samples. */
  startMs: number;
  endMs: number;
  samples: number;
  diameterM: number;
  /** Peak concentration during the excursion. */
  valuePerM3: number;
  actionPerM3: number;
  wafers: { waferId: string; lotId: string; step: string }[];
}

export function AreasPage(props: {
  groups: AreaGroup[];
  classWindow: string;
  trend: TrendPanelProps;
  excursions: ExcursionRow[];
  excursionsOmitted: number;
}) {
  const all = props.groups.flatMap((g) => g.locations);
  const failing = all.filter((l) => l.pass === false).length;
  return (
    <section class="vc-areas">
      <h1>Areas</h1>
      <p class="vc-lede">
        ISO 14644-1:2015 status of each monitored location from its counter data ({props.classWindow}): a
        location passes its target class when its mean concentration is at or below the class limit at every
        considered size.{' '}
        {failing > 0
          ? `${failing} of ${all.length} locations fail their target class.`
          : `All ${all.length} classified locations pass or have no target.`}
      </p>
      {props.groups.length === 0 ? (
        <p class="vc-note">
          No locations yet. Import a locations file and counter samples on the <a href="/imports">Imports</a>{' '}
          page.
        </p>
      ) : (
        props.groups.map((g) => (
          <div class="vc-area" data-area={g.area}>
            <h2>{g.area}</h2>
            <table class="vc-table vc-table-compact vc-iso-table">
              <thead>
                <tr>
                  <th>Location</th>
                  <th>Environment</th>
                  <th class="num">Target class</th>
                  <th class="num">Achieved class</th>
                  <th>Status</th>
                  <th class="num">Samples</th>
                  <th>Sizes considered</th>
                  <th>Last sample</th>
                </tr>
              </thead>
              <tbody>
                {g.locations.map((l) => (
                  <tr data-location={l.locationId}>
                    <td>
                      <a
                        href={`/areas?location=${encodeURIComponent(l.locationId)}#trend-panel`}
                        hx-get={`/areas/trend?location=${encodeURIComponent(l.locationId)}`}
                        hx-target="#trend-panel"
                        hx-swap="outerHTML"
                      >
                        {l.name}
                      </a>
                      <span class="vc-small"> {l.locationId}</span>
                    </td>
                    <td>{l.environment}</td>
                    <td class="num">{l.targetClass === null ? '—' : `ISO ${fmtClass(l.targetClass)}`}</td>
                    <td class="num">{l.achievedClass === null ? '—' : `ISO ${fmtClass(l.achievedClass)}`}</td>
                    <td>
                      {l.pass === null ? (
                        <span class="vc-small">{l.note ?? 'not classified'}</span>
                      ) : l.pass ? (
                        <span class="vc-pass">✓ pass</span>
                      ) : (
                        <span class="vc-fail">✗ fail</span>
                      )}
                    </td>
                    <td class="num">{l.samples}</td>
                    <td>{l.sizesM.length ? l.sizesM.map((d) => `≥ ${fmtDiameter(d)}`).join(', ') : '—'}</td>
                    <td>{fmtUtc(l.lastSampleMs)}</td>
                  </tr>
                ))}
              </tbody>
            </table>
          </div>
        ))
      )}
      <h2 id="trend">Trends</h2>
      <TrendPanel {...props.trend} />
      <h2 id="excursions">Excursion log</h2>
      <p class="vc-small">
        Counter samples above their location's action level, newest first, with the wafers whose ledger puts
        them in that location's air at the time.
      </p>
      {props.excursions.length === 0 ? (
        <p class="vc-small">No sample above an action level.</p>
      ) : (
        <table class="vc-table vc-table-compact vc-excursions">
          <thead>
            <tr>
              <th>Excursion (UTC)</th>
              <th>Location</th>
              <th class="num">Peak / action (per m³)</th>
              <th>Wafers exposed</th>
            </tr>
          </thead>
          <tbody>
            {props.excursions.map((e) => (
              <tr>
                <td>
                  {fmtUtc(e.startMs)}
                  <br />
                  <span class="vc-small">
                    {fmtDurationS((e.endMs - e.startMs) / 1000)}, {e.samples} sample
                    {e.samples === 1 ? '' : 's'}
                  </span>
                </td>
                <td>
                  <a href={`/areas?location=${encodeURIComponent(e.locationId)}#trend-panel`}>
                    {e.locationName}
                  </a>
                </td>
                <td class="num">
                  ▲ {fmtNum(e.valuePerM3)} / {fmtNum(e.actionPerM3)} at ≥ {fmtDiameter(e.diameterM)}
                </td>
                <td>
                  <ExposedWafers wafers={e.wafers} />
                </td>
              </tr>
            ))}
          </tbody>
        </table>
      )}
      {props.excursionsOmitted > 0 ? (
        <p class="vc-small">{props.excursionsOmitted} older excursions not shown.</p>
      ) : null}
    </section>
  );
}

/** Exposed wafers grouped by lot: "TR2653: 24 wafers (parked on buffer cart)", the lot linked. */
function ExposedWafers(props: { wafers: ExcursionRow['wafers'] }) {
  if (props.wafers.length === 0) return <span>none recorded</span>;
  const byLot = new Map<string, { ids: string[]; steps: Set<string> }>();
  for (const w of props.wafers) {
    const g = byLot.get(w.lotId) ?? { ids: [], steps: new Set<string>() };
    g.ids.push(w.waferId);
    g.steps.add(w.step);
    byLot.set(w.lotId, g);
  }
  return (
    <ul class="vc-exposed">
      {[...byLot.entries()].map(([lot, g]) => (
        <li>
          <a href={`/lots/${encodeURIComponent(lot)}`}>{lot}</a>:{' '}
          {g.ids.length <= 3 ? g.ids.join(', ') : `${g.ids.length} wafers`} ({[...g.steps].join('; ')})
        </li>
      ))}
    </ul>
  );
}

function fmtClass(n: number): string {
  return Number.isInteger(n) ? String(n) : n.toFixed(1);
}
