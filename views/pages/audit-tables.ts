/**
 * The tables of an area's audit (page, printed report and downloads), built from the audit's
 * results (src/engine/audit/types.ts). Words for the page, values for the files: concentrations in
 * particles per m³, volumes in litres, sizes in µm, times as ISO 8601 UTC — each column says its
 * unit. "no data" is a word of its own and never reads as a pass.
 */
import type {
  AreaAudit,
  AreaClassification,
  ControlChart,
  EventCost,
  Excursion,
  ExcursionEvent,
  LevelRecord,
  VerdictStatus,
} from '../../src/engine/audit/types.ts';
import { fmtConc, fmtNum, fmtUtc } from '../partials/format.ts';
import { type AuditCell, type AuditTable, cell } from './audit-table.tsx';

/** ISO 8601 UTC for a file ("2026-10-18T00:40:00Z"), null for none. */
export function isoUtc(ms: number | null | undefined): string | null {
  if (ms === null || ms === undefined || !Number.isFinite(ms)) return null;
  return new Date(ms).toISOString().replace('.000Z', 'Z');
}

/**
 * A time in a table whose column says UTC: "2026‑10‑18 01:00", its date joined by non-breaking
 * hyphens (U+2011) so that a narrow column breaks between date and time only; the file ISO 8601.
 */
const timeCell = (ms: number | null | undefined): AuditCell =>
  cell(fmtUtc(ms).replace(/ UTC$/, '').replaceAll('-', '\u2011'), { value: isoUtc(ms) });
const concCell = (v: number | null | undefined): AuditCell =>
  v === null || v === undefined || !Number.isFinite(v)
    ? cell('—', { value: null })
    : cell(fmtConc(v), { value: Number(v.toPrecision(6)) });
const numCell = (v: number | null | undefined, digits = 3): AuditCell =>
  v === null || v === undefined || !Number.isFinite(v)
    ? cell('—', { value: null })
    : cell(fmtNum(v, digits), { value: Number(v.toPrecision(6)) });
const wholeCell = (n: number): AuditCell => cell(String(n), { value: n });
const sizeUm = (dM: number) => Number((dM * 1e6).toPrecision(4));
const sizeWords = (dM: number) => `≥ ${sizeUm(dM)} µm`;
/** A size cell in a column headed "(≥ µm)": the µm figure. */
const sizeCell = (dM: number): AuditCell => cell(String(sizeUm(dM)));
const classWords = (n: number | null) => (n === null ? '—' : `ISO ${Number.isInteger(n) ? n : n.toFixed(1)}`);

/** A verdict as a word with its class: pass, fail, no data, not judged. */
export function verdictCell(s: VerdictStatus): AuditCell {
  const cls =
    s === 'pass' ? 'vc-pass' : s === 'fail' ? 'vc-fail' : s === 'no data' ? 'vc-nodata-word' : 'vc-partial';
  return cell(s, { cls });
}

const OCCUPANCY_WORDS: Record<string, string> = {
  'as-built': 'as-built',
  'at-rest': 'at-rest',
  operational: 'operational',
  any: 'any occupancy state',
};

export function occupancyWords(o: string): string {
  return OCCUPANCY_WORDS[o] ?? o;
}

/** The checks behind the area's verdict: location count, sample volumes, class achieved, overall. */
export function classificationSummaryTable(c: AreaClassification): AuditTable {
  const volumeFails = c.locations.filter((l) => l.volume.status === 'fail').length;
  const volumeNoData = c.locations.filter((l) => l.volume.status === 'no data').length;
  const rows: AuditCell[][] = [
    [
      cell('Sampling locations (Table A.1)'),
      verdictCell(c.locationCount.status),
      cell(
        `${c.locationCount.registered} registered, ${c.locationCount.withData} with data; minimum ${
          c.locationCount.required ?? '—'
        } for ${c.locationCount.floorAreaM2 === null ? 'an unregistered floor area' : `${fmtNum(c.locationCount.floorAreaM2)} m²`}. ${c.locationCount.words}`,
      ),
    ],
    [
      cell('Sample volumes (Annex A)'),
      verdictCell(
        c.locations.length === 0 || volumeNoData === c.locations.length
          ? 'no data'
          : volumeFails > 0
            ? 'fail'
            : 'pass',
      ),
      cell(
        c.locations.length === 0
          ? 'no location'
          : `${volumeFails} of ${c.locations.length} locations have samples below the minimum volume or 1 minute; ${volumeNoData} without samples`,
      ),
    ],
    [
      cell('Mean concentration per size'),
      verdictCell(
        c.sizes.length === 0
          ? 'no data'
          : c.sizes.some((s) => s.status === 'fail')
            ? 'fail'
            : c.sizes.every((s) => s.status === 'no data')
              ? 'no data'
              : 'pass',
      ),
      cell(
        c.sizes.length === 0
          ? 'no considered size: the counters report no Table 1 size for this class'
          : c.sizes.map((s) => `${sizeWords(s.diameterM)}: ${s.status}`).join('; '),
      ),
    ],
    [
      cell('Class achieved'),
      cell(classWords(c.classAchieved), { value: c.classAchieved, cls: 'vc-nowrap' }),
      cell(`tested against ${classWords(c.classN)}; ${c.edition} edition`),
    ],
    [cell('Area verdict'), verdictCell(c.status), cell(c.notes.join('; ') || '—')],
  ];
  return {
    id: 'classification-summary',
    title: 'Classification checks',
    columns: [
      { key: 'check', label: 'Check' },
      { key: 'result', label: 'Result' },
      { key: 'detail', label: 'Detail' },
    ],
    rows,
    empty: 'Nothing to classify.',
  };
}

/** Each location: samples, the mean and verdict per considered size, sample volume, verdict. */
export function classificationLocationsTable(
  c: AreaClassification,
  hrefOf?: (id: string) => string,
): AuditTable {
  const sizeCols = c.sizesM.flatMap((d) => [
    { key: `mean_${sizeUm(d)}um_per_m3`, label: `Mean ${sizeWords(d)} (/m³)`, numeric: true },
    { key: `verdict_${sizeUm(d)}um`, label: `${sizeWords(d)} verdict` },
  ]);
  return {
    id: 'classification-locations',
    title: 'Sampling locations',
    columns: [
      { key: 'location', label: 'Location' },
      { key: 'target_class', label: 'Target class' },
      { key: 'samples', label: 'Samples', numeric: true },
      { key: 'usable', label: 'Usable', numeric: true },
      { key: 'left_out', label: 'Left out (fault, sentinel)', numeric: true },
      ...sizeCols,
      { key: 'smallest_sample_l', label: 'Smallest sample (L)', numeric: true },
      { key: 'required_sample_l', label: 'Minimum sample (L)', numeric: true },
      { key: 'samples_below_minimum', label: 'Samples below minimum', numeric: true },
      { key: 'volume_verdict', label: 'Volume verdict' },
      { key: 'verdict', label: 'Verdict' },
    ],
    rows: c.locations.map((l) => [
      cell(l.locationId, { href: hrefOf?.(l.locationId) }),
      cell(classWords(l.targetClass), { value: l.targetClass }),
      wholeCell(l.samples),
      wholeCell(l.usableSamples),
      wholeCell(l.excludedSamples),
      ...c.sizesM.flatMap((_, i) => {
        const p = l.passBySize[i];
        return [
          l.meansPerM3[i] === null || l.meansPerM3[i] === undefined
            ? cell('no data', { value: null, cls: 'vc-nodata-word' })
            : concCell(l.meansPerM3[i]),
          verdictCell(p === null || p === undefined ? 'no data' : p ? 'pass' : 'fail'),
        ];
      }),
      numCell(l.volume.smallestM3 === null ? null : l.volume.smallestM3 * 1000),
      numCell(l.volume.requiredM3 * 1000),
      wholeCell(l.volume.samplesBelow),
      verdictCell(l.volume.status),
      verdictCell(l.status),
    ]),
    empty: 'No sampling location is registered in this area.',
  };
}

/** Each considered size: the class limit, the mean of location means, the 1999 UCL, verdict. */
export function classificationSizesTable(c: AreaClassification): AuditTable {
  return {
    id: 'classification-sizes',
    title: 'Considered sizes',
    columns: [
      { key: 'size_um', label: 'Size (≥ µm)', numeric: true },
      { key: 'limit_per_m3', label: 'Class limit (/m³)', numeric: true },
      { key: 'mean_of_means_per_m3', label: 'Mean of location means (/m³)', numeric: true },
      { key: 'ucl95_per_m3', label: '95 % UCL, 1999 edition (/m³)', numeric: true },
      { key: 'verdict', label: 'Verdict' },
    ],
    rows: c.sizes.map((s) => [
      sizeCell(s.diameterM),
      concCell(s.limitPerM3),
      s.meanOfMeansPerM3 === null
        ? cell('no data', { value: null, cls: 'vc-nodata-word' })
        : concCell(s.meanOfMeansPerM3),
      c.edition === 1999 ? concCell(s.ucl95PerM3) : cell('not used (2015)', { value: null }),
      verdictCell(s.status),
    ]),
    empty: 'No considered size: the counters report no size the class has a Table 1 value for.',
  };
}

const METHOD_WORDS: Record<string, string> = {
  typed: 'typed',
  percentile: 'percentiles of the baseline',
  'log-mean-k-sigma': 'mean + k·σ of log counts',
  'poisson-quantile': 'Poisson quantiles',
  'negbin-quantile': 'negative-binomial quantiles',
  'class-fraction': 'fraction of the class limit',
};

export function methodWords(m: string): string {
  return METHOD_WORDS[m] ?? m;
}

/** Alert and action levels in force, with how, from which window, by whom and when they were set. */
export function levelsTable(levels: LevelRecord[]): AuditTable {
  return {
    id: 'levels',
    title: 'Alert and action levels',
    columns: [
      { key: 'location', label: 'Location' },
      { key: 'size_um', label: 'Channel (≥ µm)', numeric: true },
      { key: 'alert_per_m3', label: 'Alert (/m³)', numeric: true },
      { key: 'action_per_m3', label: 'Action (/m³)', numeric: true },
      { key: 'method', label: 'Set by method' },
      { key: 'window_from', label: 'Baseline from (UTC)' },
      { key: 'window_to', label: 'Baseline to (UTC)' },
      { key: 'version', label: 'Version', numeric: true },
      { key: 'set_by', label: 'Set by' },
      { key: 'set_at', label: 'Set at (UTC)' },
      { key: 'basis', label: 'Basis' },
    ],
    rows: levels.map((l) => [
      cell(l.locationId),
      sizeCell(l.diameterM),
      concCell(l.alertPerM3),
      concCell(l.actionPerM3),
      cell(l.method === 'typed' ? 'typed' : `${methodWords(l.method)} (“${l.name}”)`, { value: l.method }),
      timeCell(l.window?.fromMs ?? null),
      timeCell(l.window?.toMs ?? null),
      wholeCell(l.version),
      cell(l.setBy),
      timeCell(l.setAtMs),
      cell(l.basis),
    ]),
    empty: 'No alert or action level is set for any location of this area.',
  };
}

const RULE_WORDS: Record<string, string> = {
  'action-point': 'one point above action',
  'alert-run': 'run above alert',
  'area-alert': 'several locations above alert',
  'ratio-shift': 'size-channel ratio shift',
  'data-quality': 'data-quality flags',
};

export function ruleWords(r: string): string {
  return RULE_WORDS[r] ?? r;
}

const NATURE_WORDS: Record<string, string> = {
  air: 'in the air',
  instrument: 'counter fault',
  unclear: 'unclear',
};

/** Short names of the excursions for the page ("E1", "E2" … in the order listed); files carry the full id. */
export function excursionLabels(exs: { id: string }[]): Map<string, string> {
  return new Map(exs.map((e, i) => [e.id, `E${i + 1}`]));
}

const excursionCell = (id: string, labels: Map<string, string>): AuditCell =>
  cell(labels.get(id) ?? id, { value: id, cls: 'vc-nowrap' });

/** Short labels of the events ("Event 1", …), in the audit's order. */
export function eventLabels(events: { id: string }[]): Map<string, string> {
  return new Map(events.map((e, i) => [e.id, `Event ${i + 1}`]));
}

const eventCell = (id: string, labels: Map<string, string>): AuditCell =>
  cell(labels.get(id) ?? id, { value: id, cls: 'vc-nowrap' });

/**
 * Excursions: rule, where, when, peak, channels, what it most likely is, data quality, and the event
 * it belongs to (its cost is the event's, in the events table: excursions of one event are costed
 * together, once).
 */
export function excursionsTable(exs: Excursion[], events: ExcursionEvent[]): AuditTable {
  const labels = excursionLabels(exs);
  const evLabels = eventLabels(events);
  const eventOf = new Map(events.flatMap((ev) => ev.excursionIds.map((id) => [id, ev.id])));
  return {
    id: 'excursions',
    title: 'Excursions',
    columns: [
      { key: 'id', label: 'Excursion' },
      { key: 'event', label: 'Event' },
      { key: 'rule', label: 'Rule' },
      { key: 'locations', label: 'Locations' },
      { key: 'start', label: 'Start (UTC)' },
      { key: 'end', label: 'End (UTC)' },
      { key: 'peak_at', label: 'Peak at (UTC)' },
      { key: 'peak_per_m3', label: 'Peak (/m³)', numeric: true },
      { key: 'level_per_m3', label: 'Level crossed (/m³)', numeric: true },
      { key: 'baseline_per_m3', label: 'Baseline (/m³)', numeric: true },
      { key: 'channels_um', label: 'Channels (≥ µm)' },
      { key: 'nature', label: 'Most likely' },
      { key: 'why', label: 'Why' },
      { key: 'data_quality', label: 'Data quality' },
      { key: 'acknowledged', label: 'Acknowledged' },
    ],
    rows: exs.map((e) => {
      const q = e.quality;
      const quality = [
        `${q.samples} samples`,
        q.fault ? `${q.fault} fault` : '',
        q.zeroRun ? `${q.zeroRun} in a zero run` : '',
        q.lowerBound ? `${q.lowerBound} lower bound` : '',
        q.sentinel ? `${q.sentinel} sentinel` : '',
        q.gapBefore ? `${q.gapBefore} gap before` : '',
      ]
        .filter(Boolean)
        .join(', ');
      const ev = eventOf.get(e.id);
      return [
        excursionCell(e.id, labels),
        ev ? eventCell(ev, evLabels) : cell('—', { value: null }),
        cell(ruleWords(e.rule), { value: e.rule }),
        cell(e.locationIds.join(', ')),
        timeCell(e.startMs),
        timeCell(e.endMs),
        timeCell(e.peakMs),
        concCell(e.peakPerM3),
        concCell(e.levelPerM3),
        concCell(e.baselinePerM3),
        cell(e.channelsM.map((d) => sizeUm(d)).join(', ')),
        cell(NATURE_WORDS[e.nature] ?? e.nature, { value: e.nature, cls: `vc-nature-${e.nature}` }),
        cell(e.natureWords, { cls: 'vc-wide' }),
        cell(quality),
        e.acknowledgement
          ? cell(
              `${e.acknowledgement.account}, ${fmtUtc(e.acknowledgement.atMs)}: ${e.acknowledgement.comment}`,
            )
          : cell('not yet', { value: '' }),
      ];
    }),
    empty: 'No excursion in this period under the rules chosen.',
  };
}

/**
 * Events: the excursions of one happening (overlapping windows at a shared location), the rules that
 * found it, the windows costed and what it added, once. `costs` null or without the event: not costed.
 */
export function eventsTable(
  events: ExcursionEvent[],
  costs: EventCost[] | null,
  exs: Excursion[],
): AuditTable {
  const labels = excursionLabels(exs);
  const evLabels = eventLabels(events);
  const costOf = new Map((costs ?? []).map((c) => [c.eventId, c]));
  return {
    id: 'events',
    title: 'Events and what each added',
    columns: [
      { key: 'id', label: 'Event' },
      { key: 'excursions', label: 'Excursions' },
      { key: 'rules', label: 'Found by' },
      { key: 'locations', label: 'Locations' },
      { key: 'start', label: 'Start (UTC)' },
      { key: 'end', label: 'End (UTC)' },
      { key: 'nature', label: 'Most likely' },
      { key: 'exposed_wafers', label: 'Exposed wafers', numeric: true },
      { key: 'added_voids', label: 'Added voids', numeric: true },
      { key: 'added_die_loss', label: 'Added die loss (dies)', numeric: true },
      { key: 'notes', label: 'Notes' },
    ],
    rows: events.map((ev) => {
      const c = costOf.get(ev.id);
      return [
        eventCell(ev.id, evLabels),
        cell(ev.excursionIds.map((id) => labels.get(id) ?? id).join(', '), {
          value: ev.excursionIds.join(' '),
        }),
        cell(ev.rules.map(ruleWords).join('; '), { value: ev.rules.join(' ') }),
        cell(ev.locationIds.join(', ')),
        timeCell(ev.startMs),
        timeCell(ev.endMs),
        cell(NATURE_WORDS[ev.nature] ?? ev.nature, { value: ev.nature, cls: `vc-nature-${ev.nature}` }),
        c ? wholeCell(new Set(c.wafers.map((w) => w.waferId)).size) : cell('not costed', { value: null }),
        c ? numCell(c.totalAddedVoids) : cell('not costed', { value: null }),
        c ? numCell(c.totalAddedDieLoss) : cell('not costed', { value: null }),
        cell(c ? c.notes.join('; ') : '', { cls: 'vc-wide' }),
      ];
    }),
    empty: 'No excursion in this period under the rules chosen.',
  };
}

/** Every wafer the ledger puts in an event's air, with what the event added to it. */
export function exposedWafersTable(costs: EventCost[], labels: Map<string, string>): AuditTable {
  return {
    id: 'exposed-wafers',
    title: 'Exposed wafers and what each event added',
    columns: [
      { key: 'event', label: 'Event' },
      { key: 'wafer', label: 'Wafer' },
      { key: 'lot', label: 'Lot' },
      { key: 'pair', label: 'Pair' },
      { key: 'step', label: 'Ledger step' },
      { key: 'carrier', label: 'Carrier' },
      { key: 'from', label: 'In the air from (UTC)' },
      { key: 'to', label: 'To (UTC)' },
      { key: 'added_particles', label: 'Added particles', numeric: true },
      { key: 'pair_added_voids', label: 'Added voids of its pair', numeric: true },
      { key: 'pair_added_die_loss', label: 'Added die loss of its pair (dies)', numeric: true },
    ],
    rows: costs.flatMap((c) =>
      c.wafers.map((w) => [
        eventCell(c.eventId, labels),
        cell(w.waferId, { cls: 'vc-nowrap' }),
        cell(w.lotId, { href: `/lots/${encodeURIComponent(w.lotId)}`, cls: 'vc-nowrap' }),
        w.pairId
          ? cell(w.pairId, { href: `/pairs/${encodeURIComponent(w.pairId)}`, cls: 'vc-nowrap' })
          : cell('not paired', { value: null }),
        cell(w.step),
        cell(w.carrier),
        timeCell(w.fromMs),
        timeCell(w.toMs),
        numCell(w.addedParticles),
        numCell(w.addedVoids),
        numCell(w.addedDieLoss),
      ]),
    ),
    empty: 'No wafer was in the air of an excursion in this period.',
  };
}

/** What each event added per lot. */
export function lotCostsTable(costs: EventCost[], labels: Map<string, string>): AuditTable {
  return {
    id: 'lot-costs',
    title: 'Added risk per lot',
    columns: [
      { key: 'event', label: 'Event' },
      { key: 'lot', label: 'Lot' },
      { key: 'wafers', label: 'Wafers exposed', numeric: true },
      { key: 'added_voids', label: 'Added voids', numeric: true },
      { key: 'added_die_loss', label: 'Added die loss (dies)', numeric: true },
    ],
    rows: costs.flatMap((c) =>
      c.lots.map((l) => [
        eventCell(c.eventId, labels),
        cell(l.lotId, { href: `/lots/${encodeURIComponent(l.lotId)}` }),
        wholeCell(l.wafers),
        numCell(l.addedVoids),
        numCell(l.addedDieLoss),
      ]),
    ),
    empty: 'No lot was exposed to an excursion in this period.',
  };
}

const KIND_WORDS: Record<string, string> = { c: 'c chart', u: 'u chart', 'laney-u': 'Laney u′ chart' };

/** Each control chart in a row: kind and why, centre, σ_z, points, flagged, left out. */
/** Where a chart's centre line and limits come from, in words ("the chosen baseline window, 2026‑10‑01 … (336 h)"). */
export function limitsWords(ch: ControlChart): string {
  const b = ch.baseline;
  return b.window
    ? `${b.words}, ${fmtUtc(b.window.fromMs)} to ${fmtUtc(b.window.toMs)} (${b.points} h)`
    : `${b.words} (${b.points} h)`;
}

export function chartsTable(charts: ControlChart[]): AuditTable {
  return {
    id: 'control-charts',
    title: 'Control charts',
    columns: [
      { key: 'location', label: 'Location' },
      { key: 'size_um', label: 'Channel (≥ µm)', numeric: true },
      { key: 'kind', label: 'Chart' },
      { key: 'centre', label: 'Centre (c̄ per hour, or ū per m³)', numeric: true },
      { key: 'sigma_z', label: 'σ_z', numeric: true },
      { key: 'points', label: 'Points', numeric: true },
      { key: 'flagged', label: 'Flagged', numeric: true },
      { key: 'left_out', label: 'Left out of the centre', numeric: true },
      { key: 'decided_by', label: 'Why this chart' },
      { key: 'limits_from', label: 'Limits from' },
    ],
    rows: charts.map((ch) => [
      cell(ch.locationId),
      sizeCell(ch.diameterM),
      cell(KIND_WORDS[ch.kind] ?? ch.kind, { value: ch.kind }),
      numCell(ch.centre),
      numCell(ch.sigmaZ),
      wholeCell(ch.points.length),
      wholeCell(ch.points.filter((p) => p.rules.length > 0).length),
      wholeCell(ch.excludedPoints),
      cell(ch.decidedBy),
      cell(limitsWords(ch), { value: ch.baseline.source }),
    ]),
    empty: 'No control chart: no location of this area has counter samples in this period.',
  };
}

export { classWords, sizeWords };

/** What the pages, the report and their tables read of an area's audit. */
export type AuditView = Pick<
  AreaAudit,
  | 'areaId'
  | 'period'
  | 'occupancy'
  | 'classification'
  | 'levels'
  | 'excursions'
  | 'events'
  | 'costs'
  | 'charts'
>;

/** Every table of an area's audit, in page order. */
export function areaAuditTables(a: AuditView, hrefOf?: (locationId: string) => string): AuditTable[] {
  const labels = eventLabels(a.events);
  return [
    classificationSummaryTable(a.classification),
    classificationSizesTable(a.classification),
    classificationLocationsTable(a.classification, hrefOf),
    levelsTable(a.levels),
    excursionsTable(a.excursions, a.events),
    eventsTable(a.events, a.costs, a.excursions),
    exposedWafersTable(a.costs, labels),
    lotCostsTable(a.costs, labels),
    chartsTable(a.charts),
  ];
}

/**
 * What keeps the audit from a full verdict, in plain words: no location, no data in the period,
 * locations without data, and the classification's own notes.
 */
export function auditProblems(a: AuditView): string[] {
  const c = a.classification;
  const out: string[] = [];
  if (c.locations.length === 0)
    out.push('No sampling location is registered in this area: there is nothing to classify.');
  else if (c.locations.every((l) => l.usableSamples === 0))
    out.push('No usable counter sample of this area’s locations falls in this period and occupancy state.');
  else {
    const none = c.locations.filter((l) => l.usableSamples === 0).map((l) => l.locationId);
    if (none.length) out.push(`No usable counter sample in this period at ${none.join(', ')}.`);
  }
  for (const n of c.notes) if (!out.some((o) => o.includes(n))) out.push(n);
  return out;
}
