/**
 * Areas: every monitored location grouped by area with its ISO 14644-1 status (target class,
 * the class its counter data achieve, pass or fail), the trend panel, and the excursion log
 * (samples above an action level, with the wafers exposed at that time).
 *
 * Status words say what is known: a location without usable samples has "no data" and is never
 * counted as passing; a location without samples of its own that holds other locations (an area,
 * the site) rolls them up, each against its own target class; a location whose samples rose above
 * its action level in the window is flagged with that excursion even when its mean passes.
 */
import { fmtConc, fmtDiameter, fmtDurationS, fmtUtc } from '../partials/format.ts';
import { TrendPanel, type TrendPanelProps } from '../partials/trend-panel.tsx';

/** What the classification found: the class word of a location's own data. */
export type LocationState = 'pass' | 'fail' | 'no target' | 'no data' | 'not classified';

export interface LocationStatus {
  locationId: string;
  parentId: string | null;
  /** Hierarchy level from the locations file (site, area, bay, tool …). */
  level: string;
  name: string;
  environment: string;
  targetClass: number | null;
  /** Cleanest class the location's mean concentrations meet (ISO 14644-1:2015), null: no data or above class 9. */
  achievedClass: number | null;
  /** achieved ≤ target; null when either is unknown. */
  pass: boolean | null;
  state: LocationState;
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

/** The excursions of one location in the window: how many, the latest, and the highest peak. */
export interface ActionSummary {
  count: number;
  latestStartMs: number;
  peak: ExcursionRow;
}

/** Excursions by location: count, latest start, and the excursion with the highest peak/action ratio. */
export function actionSummaries(excursions: ExcursionRow[]): Map<string, ActionSummary> {
  const out = new Map<string, ActionSummary>();
  for (const e of excursions) {
    const s = out.get(e.locationId);
    if (!s) out.set(e.locationId, { count: 1, latestStartMs: e.startMs, peak: e });
    else {
      s.count++;
      s.latestStartMs = Math.max(s.latestStartMs, e.startMs);
      if (e.valuePerM3 / e.actionPerM3 > s.peak.valuePerM3 / s.peak.actionPerM3) s.peak = e;
    }
  }
  return out;
}

/** What a location without data of its own holds: its measured locations' states, counted. */
export interface RollUp {
  /** Locations counted (those with data of their own, and empty ones without locations inside). */
  locations: number;
  pass: number;
  fail: number;
  noTarget: number;
  /** No data, or data that could not be classified. */
  noData: number;
  /** Counted locations with an excursion above their action level in the window. */
  aboveAction: number;
}

/**
 * Roll-ups for every location that has no data of its own but holds other locations: each
 * location inside it (at any depth) counts with its own state; one that has no data of its own
 * either counts through the locations inside it, or as "no data" when it holds none.
 */
export function rollUps(statuses: LocationStatus[], above: Set<string>): Map<string, RollUp> {
  const children = new Map<string, LocationStatus[]>();
  for (const l of statuses)
    if (l.parentId !== null) children.set(l.parentId, [...(children.get(l.parentId) ?? []), l]);
  const own = (l: LocationStatus) => l.state !== 'no data';
  const out = new Map<string, RollUp>();
  for (const l of statuses) {
    if (own(l) || !children.has(l.locationId)) continue;
    const r: RollUp = { locations: 0, pass: 0, fail: 0, noTarget: 0, noData: 0, aboveAction: 0 };
    const seen = new Set<string>([l.locationId]);
    const walk = (id: string) => {
      for (const c of children.get(id) ?? []) {
        if (seen.has(c.locationId)) continue;
        seen.add(c.locationId);
        if (!own(c) && children.has(c.locationId)) {
          walk(c.locationId);
          continue;
        }
        r.locations++;
        if (c.state === 'pass') r.pass++;
        else if (c.state === 'fail') r.fail++;
        else if (c.state === 'no target') r.noTarget++;
        else r.noData++;
        if (above.has(c.locationId)) r.aboveAction++;
        if (own(c)) walk(c.locationId);
      }
    };
    walk(l.locationId);
    out.set(l.locationId, r);
  }
  return out;
}

function plural(n: number, one: string, many = `${one}s`): string {
  return `${n} ${n === 1 ? one : many}`;
}

/** The lede's count of states, in words: "12 of 16 locations pass their target class; …". */
export function stateSentence(all: LocationStatus[], above: Set<string>): string {
  const n = (s: LocationState) => all.filter((l) => l.state === s).length;
  const hidden = all.filter((l) => l.state === 'pass' && above.has(l.locationId)).length;
  const has = (k: number) => (k === 1 ? 'has' : 'have');
  const parts = [
    `${n('pass')} of ${plural(all.length, 'location')} ${n('pass') === 1 ? 'passes its' : 'pass their'} target class`,
    `${n('fail')} ${n('fail') === 1 ? 'fails' : 'fail'}`,
    n('no target') ? `${n('no target')} ${has(n('no target'))} data but no target class` : null,
    n('not classified')
      ? `${n('not classified')} ${has(n('not classified'))} no channel the class can use`
      : null,
    `${n('no data')} ${has(n('no data'))} no usable counter data of ${n('no data') === 1 ? 'its' : 'their'} own`,
  ].filter((p) => p !== null);
  return (
    `${parts.join('; ')}.` +
    (hidden > 0
      ? ` ${plural(hidden, 'location')} that pass${hidden === 1 ? 'es' : ''} on the mean rose above ${hidden === 1 ? 'its' : 'their'} action level in the window (▲ below).`
      : '')
  );
}

export function AreasPage(props: {
  groups: AreaGroup[];
  classWindow: string;
  trend: TrendPanelProps;
  /** Every excursion in the window, newest first; the log shows the first `excursionsShown`. */
  excursions: ExcursionRow[];
  excursionsShown: number;
}) {
  const all = props.groups.flatMap((g) => g.locations);
  const actions = actionSummaries(props.excursions);
  const above = new Set(actions.keys());
  const rolled = rollUps(all, above);
  const shown = props.excursions.slice(0, props.excursionsShown);
  const omitted = Math.max(0, props.excursions.length - shown.length);
  return (
    <section class="vc-areas">
      <h1>Areas</h1>
      <p class="vc-lede">
        ISO 14644-1:2015 status of each monitored location from its counter data ({props.classWindow}): a
        location passes its target class when its mean concentration is at or below the class limit at every
        considered size. {all.length > 0 ? stateSentence(all, above) : ''}
      </p>
      {rolled.size > 0 ? (
        <p class="vc-small">
          A location without counter data of its own that holds other locations (an area, the site) rolls them
          up: each counts with its own status against its own target class. Its own target class is not
          measured directly, so it has no achieved class.
        </p>
      ) : null}
      {props.groups.length === 0 ? (
        <p class="vc-note">
          No locations yet. Import a locations file and counter samples on the <a href="/imports">Imports</a>{' '}
          page.
        </p>
      ) : (
        props.groups.map((g) => (
          <div class="vc-area" data-area={g.area}>
            <h2>
              {g.area}{' '}
              {g.locations.find((l) => l.level === 'area') ? (
                <a
                  class="vc-small"
                  href={`/areas/${encodeURIComponent(g.locations.find((l) => l.level === 'area')!.locationId)}/audit`}
                >
                  contamination audit
                </a>
              ) : null}
            </h2>
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
                  <tr
                    data-location={l.locationId}
                    data-state={rolled.has(l.locationId) ? 'roll-up' : l.state}
                  >
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
                    <td class="vc-status-cell">
                      {rolled.has(l.locationId) ? (
                        <RollUpWords r={rolled.get(l.locationId)!} />
                      ) : (
                        <StateWord l={l} />
                      )}
                      {actions.has(l.locationId) ? <ActionFlag s={actions.get(l.locationId)!} /> : null}
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
      {shown.length === 0 ? (
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
            {shown.map((e) => (
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
                  ▲ {fmtConc(e.valuePerM3)} / {fmtConc(e.actionPerM3)} at ≥ {fmtDiameter(e.diameterM)}
                </td>
                <td>
                  <ExposedWafers wafers={e.wafers} />
                </td>
              </tr>
            ))}
          </tbody>
        </table>
      )}
      {omitted > 0 ? <p class="vc-small">{omitted} older excursions not shown.</p> : null}
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

/** A location's own state, by glyph and word; why, when there is no class. */
function StateWord(props: { l: LocationStatus }) {
  const l = props.l;
  if (l.state === 'pass') return <span class="vc-pass">✓ pass</span>;
  if (l.state === 'fail') return <span class="vc-fail">✗ fail</span>;
  if (l.state === 'no data')
    return (
      <span class="vc-nodata-word" title={l.note ?? undefined}>
        ○ no data <span class="vc-small">({l.note ?? 'no counter samples'})</span>
      </span>
    );
  return <span class="vc-small">{l.note ?? l.state}</span>;
}

/** A roll-up's words: the worst state first, then the counts. */
function RollUpWords(props: { r: RollUp }) {
  const r = props.r;
  const counts = [
    r.fail ? `${r.fail} fail` : null,
    r.pass ? `${r.pass} pass` : null,
    r.noTarget ? `${r.noTarget} without target` : null,
    r.noData ? `${r.noData} no data` : null,
  ].filter((p) => p !== null);
  const head =
    r.fail > 0 ? (
      <span class="vc-fail">✗ {r.fail === 1 ? '1 location fails' : `${r.fail} locations fail`}</span>
    ) : r.noData > 0 || r.locations === 0 ? (
      <span class="vc-partial">◐ incomplete</span>
    ) : (
      <span class="vc-pass">✓ {r.pass === r.locations ? 'all pass' : 'pass'}</span>
    );
  return (
    <span class="vc-rollup">
      {head}
      <br />
      <span class="vc-small">
        rolls up {plural(r.locations, 'location')}: {counts.join(', ') || 'none measured'}
        {r.aboveAction > 0 ? `; ▲ ${r.aboveAction} above action in the window` : ''}
      </span>
    </span>
  );
}

/** The flag of a location whose samples rose above its action level in the window. */
function ActionFlag(props: { s: ActionSummary }) {
  const p = props.s.peak;
  return (
    <span class="vc-action-flag">
      <br />
      <span class="vc-action-word">▲ above action</span>{' '}
      <span class="vc-small">
        peak {fmtConc(p.valuePerM3)} per m³ ≥ {fmtDiameter(p.diameterM)} (action {fmtConc(p.actionPerM3)}) at{' '}
        {fmtUtc(p.startMs)}
        {props.s.count > 1 ? `; ${props.s.count} excursions, latest ${fmtUtc(props.s.latestStartMs)}` : ''}
      </span>
    </span>
  );
}

function fmtClass(n: number): string {
  return Number.isInteger(n) ? String(n) : n.toFixed(1);
}
