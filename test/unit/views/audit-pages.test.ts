/**
 * The audit pages' tables and pages from a hand-built audit (every figure below is made up for the
 * test and checked by hand): "no data" is never a pass, each table's CSV (RFC 4180, read back with
 * papaparse) and JSON hold the rows the HTML shows, and the report has its sections in order.
 */
import Papa from 'papaparse';
import { describe, expect, it } from 'vitest';
import type { AreaAudit } from '../../../src/engine/audit/types.ts';
import { toCsv, UTF8_BOM } from '../../../src/engine/export/csv.ts';
import { AreaAuditPage } from '../../../views/pages/audit-area.tsx';
import { AuditReportPage, REPORT_HEADINGS } from '../../../views/pages/audit-report.tsx';
import {
  AuditTableView,
  splitColumns,
  tableForCsv,
  tableForJson,
} from '../../../views/pages/audit-table.tsx';
import { areaAuditTables, auditProblems } from '../../../views/pages/audit-tables.ts';
import { htmlTables } from '../../helpers/html-tables.ts';

const H = 3_600_000;
const T0 = Date.UTC(2026, 9, 1);
const period = { fromMs: T0, toMs: T0 + 18 * 24 * H };

/** Two locations at ISO 5 (limit 3520 /m³ at ≥ 0.5 µm, ISO 14644-1:2015 Table 1): one measured, one without data. */
function handAudit(): AreaAudit {
  const volume = (samples: number) => ({
    requiredM3: 0.00568,
    requiredDurationMs: 60_000,
    samples,
    samplesBelow: 0,
    smallestM3: samples ? 0.0283 : null,
    shortestMs: samples ? 60_000 : null,
    status: samples ? ('pass' as const) : ('no data' as const),
  });
  return {
    areaId: 'BOR',
    period,
    occupancy: 'operational',
    elapsedMs: 3,
    classification: {
      areaId: 'BOR',
      areaName: 'Boreas bay',
      period,
      occupancy: 'operational',
      edition: 2015,
      classN: 5,
      sizesM: [0.5e-6],
      locationCount: {
        floorAreaM2: 4,
        required: 2,
        registered: 2,
        withData: 1,
        status: 'pass',
        words: 'enough locations for 4 m²',
      },
      sizes: [
        { diameterM: 0.5e-6, limitPerM3: 3520, meanOfMeansPerM3: 412.5, ucl95PerM3: null, status: 'no data' },
      ],
      locations: [
        {
          locationId: 'BOR-B1',
          name: 'Bay 1',
          targetClass: 5,
          samples: 100,
          usableSamples: 98,
          excludedSamples: 2,
          meansPerM3: [412.5],
          passBySize: [true],
          status: 'pass',
          volume: volume(98),
        },
        {
          locationId: 'BOR-B2',
          name: 'Bay 2',
          targetClass: 5,
          samples: 0,
          usableSamples: 0,
          excludedSamples: 0,
          meansPerM3: [null],
          passBySize: [null],
          status: 'no data',
          volume: volume(0),
        },
      ],
      status: 'no data',
      classAchieved: null,
      notes: ['BOR-B2 has no data'],
    },
    levels: [
      {
        locationId: 'BOR-B1',
        diameterM: 0.5e-6,
        alertPerM3: 1000,
        actionPerM3: 3517,
        method: 'typed',
        name: 'typed',
        window: null,
        parameters: {},
        version: 0,
        setBy: 'locations import',
        setAtMs: null,
        basis: 'typed in the locations file',
      },
    ],
    excursions: [
      {
        id: 'action-point:BOR-B1:1760748000000',
        rule: 'action-point',
        areaId: 'BOR',
        locationId: 'BOR-B1',
        locationIds: ['BOR-B1'],
        startMs: T0 + 5 * H,
        endMs: T0 + 9 * H,
        peakMs: T0 + 6 * H,
        peakPerM3: 8600,
        channelsM: [0.5e-6, 1e-6],
        levelPerM3: 3517,
        baselinePerM3: 390,
        nature: 'air',
        natureWords: 'every channel rose; no fault flag',
        quality: { samples: 240, fault: 0, lowerBound: 0, sentinel: 0, zeroRun: 0, gapBefore: 0 },
        words: 'one hour above action',
        acknowledgement: null,
      },
      {
        id: 'alert-run:BOR-B1:1760500000000',
        rule: 'alert-run',
        areaId: 'BOR',
        locationId: 'BOR-B1',
        locationIds: ['BOR-B1'],
        startMs: T0 + 2 * H,
        endMs: T0 + 3 * H,
        peakMs: T0 + 2 * H,
        peakPerM3: 0,
        channelsM: [0.5e-6],
        levelPerM3: 1000,
        baselinePerM3: 390,
        nature: 'instrument',
        natureWords: '60 of 60 samples in an all-zero run',
        quality: { samples: 60, fault: 0, lowerBound: 0, sentinel: 0, zeroRun: 60, gapBefore: 0 },
        words: 'zeros',
        acknowledgement: {
          excursionId: 'alert-run:BOR-B1:1760500000000',
          comment: 'inlet, "blocked"',
          account: 'ana',
          atMs: T0 + 4 * H,
        },
      },
    ],
    // The two excursions do not overlap: two events, the earlier (the counter fault) first.
    events: [
      {
        id: `event:BOR-B1:${T0 + 2 * H}`,
        areaId: 'BOR',
        excursionIds: ['alert-run:BOR-B1:1760500000000'],
        rules: ['alert-run'],
        locationIds: ['BOR-B1'],
        startMs: T0 + 2 * H,
        endMs: T0 + 3 * H,
        windows: [],
        nature: 'instrument',
      },
      {
        id: `event:BOR-B1:${T0 + 5 * H}`,
        areaId: 'BOR',
        excursionIds: ['action-point:BOR-B1:1760748000000'],
        rules: ['action-point'],
        locationIds: ['BOR-B1'],
        startMs: T0 + 5 * H,
        endMs: T0 + 9 * H,
        windows: [{ locationId: 'BOR-B1', fromMs: T0 + 5 * H, toMs: T0 + 9 * H }],
        nature: 'air',
      },
    ],
    costs: [
      {
        eventId: `event:BOR-B1:${T0 + 2 * H}`,
        excursionIds: ['alert-run:BOR-B1:1760500000000'],
        locationIds: ['BOR-B1'],
        period: { fromMs: T0 + 2 * H, toMs: T0 + 3 * H },
        windows: [],
        wafers: [],
        lots: [],
        totalAddedVoids: 0,
        totalAddedDieLoss: 0,
        method: 'difference of two assessments',
        notes: ['an instrument finding'],
      },
      {
        eventId: `event:BOR-B1:${T0 + 5 * H}`,
        excursionIds: ['action-point:BOR-B1:1760748000000'],
        locationIds: ['BOR-B1'],
        period: { fromMs: T0 + 5 * H, toMs: T0 + 9 * H },
        windows: [{ locationId: 'BOR-B1', fromMs: T0 + 5 * H, toMs: T0 + 9 * H }],
        wafers: [
          {
            waferId: 'W01',
            lotId: 'TR2653',
            step: 'wait',
            carrier: 'closed',
            fromMs: T0 + 5 * H,
            toMs: T0 + 9 * H,
            addedParticles: 12.5,
            addedVoids: 0.31,
            addedDieLoss: 4.4,
            pairId: 'P01',
          },
        ],
        lots: [{ lotId: 'TR2653', wafers: 1, addedVoids: 0.31, addedDieLoss: 4.4 }],
        totalAddedVoids: 0.31,
        totalAddedDieLoss: 4.4,
        method: 'difference of two assessments',
        notes: [],
      },
    ],
    charts: [
      {
        locationId: 'BOR-B1',
        diameterM: 0.5e-6,
        kind: 'laney-u',
        centre: 400,
        sigmaZ: 2.1,
        dispersion: 4.4,
        decidedBy: 'overdispersed (p < 0.01)',
        excludedPoints: 0,
        baseline: {
          source: 'chosen',
          window: { fromMs: T0 - 7 * 24 * H, toMs: T0 },
          points: 168,
          words: 'the chosen baseline window',
        },
        notes: [],
        points: [0, 1, 2, 3].map((i) => ({
          startMs: T0 + i * H,
          count: [11, 12, 10, 250][i]!,
          volumeM3: 0.0283,
          value: [11, 12, 10, 250][i]! / 0.0283,
          lcl: 0,
          ucl: 900,
          rules: i === 3 ? ['beyond-limit' as const] : [],
          excluded: false,
        })),
      },
    ],
  };
}

const csvRows = (text: string) => {
  const parsed = Papa.parse<string[]>(text.startsWith(UTF8_BOM) ? text.slice(1) : text, {
    skipEmptyLines: true,
  });
  expect(parsed.errors).toEqual([]);
  return parsed.data;
};

describe('audit tables', () => {
  it('say "no data" where a location has none and never count it as a pass', () => {
    const tables = areaAuditTables(handAudit());
    const locs = tables.find((t) => t.id === 'classification-locations')!;
    const b2 = locs.rows.find((r) => r[0]!.text === 'BOR-B2')!;
    expect(b2.map((c) => c.text)).toContain('no data');
    expect(b2.map((c) => c.text)).not.toContain('pass');
    expect(b2[b2.length - 1]!.text).toBe('no data');
    const summary = tables.find((t) => t.id === 'classification-summary')!;
    expect(
      summary.rows
        .at(-1)!
        .map((c) => c.text)
        .slice(0, 2),
    ).toEqual(['Area verdict', 'no data']);
    expect(auditProblems(handAudit())).toContain('No usable counter sample in this period at BOR-B2.');
  });

  it('write CSV (both variants) and JSON holding exactly the rows the HTML table shows', () => {
    for (const t of areaAuditTables(handAudit())) {
      const html = String(AuditTableView({ table: t, href: null }));
      const shown = htmlTables(html);
      if (t.rows.length === 0) {
        expect(shown).toEqual([]);
        continue;
      }
      expect(shown).toHaveLength(1);
      const plain = csvRows(toCsv(tableForCsv(t)));
      expect(plain[0]).toEqual(shown[0]!.header);
      expect(plain.slice(1)).toEqual(shown[0]!.rows);
      const sheet = toCsv(tableForCsv(t), 'spreadsheet');
      expect(sheet.startsWith(UTF8_BOM)).toBe(true);
      expect(csvRows(sheet).length).toBe(plain.length);
      const json = tableForJson(t);
      expect(json.rows.map((r) => t.columns.map((c) => (r[c.key] === null ? '' : String(r[c.key]))))).toEqual(
        shown[0]!.rows,
      );
    }
  });
});

describe('area audit page and report', () => {
  const tables = areaAuditTables(handAudit());
  const query = {
    from: '2026-10-01T00:00Z',
    to: '2026-10-19T00:00Z',
    occupancy: 'operational' as const,
    edition: 2015 as const,
  };

  it('tells an excursion in the air from a counter fault, shows what it added, and offers every table for download', () => {
    const html = String(
      AreaAuditPage({
        area: { id: 'BOR', name: 'Boreas bay' },
        query,
        audit: handAudit(),
        problems: [],
        tables,
        downloadHref: (t, f) => `/x/${t}?format=${f}`,
        csrfToken: 'tok',
        locations: [{ id: 'BOR-B1', name: 'Bay 1' }],
        channelsUm: [0.5],
      }),
    );
    const ex = htmlTables(html).find((t) => t.id === 'excursions')!;
    const nature = ex.header.indexOf('Most likely');
    expect(ex.rows.map((r) => r[nature])).toEqual(['air', 'instrument']);
    // Each excursion names its event; the event carries the cost (hand-built: 0.31 voids).
    expect(ex.rows.map((r) => r[ex.header.indexOf('Event')])).toEqual([
      `event:BOR-B1:${T0 + 5 * H}`,
      `event:BOR-B1:${T0 + 2 * H}`,
    ]);
    const ev = htmlTables(html).find((t) => t.id === 'events')!;
    expect(
      ev.rows.map((r) => [r[0], r[ev.header.indexOf('Excursions')], r[ev.header.indexOf('Added voids')]]),
    ).toEqual([
      [`event:BOR-B1:${T0 + 2 * H}`, 'alert-run:BOR-B1:1760500000000', '0'],
      [`event:BOR-B1:${T0 + 5 * H}`, 'action-point:BOR-B1:1760748000000', '0.31'],
    ]);
    expect(html).not.toContain('data-missing');
    for (const t of tables.filter((x) => x.rows.length > 0))
      expect(html).toContain(`data-downloads="${t.id}"`);
    expect(html).toContain('data-chart="control-chart"');
    // Only the unacknowledged excursion is offered for acknowledgement.
    expect(html).toContain('<option value="action-point:BOR-B1:1760748000000">');
    expect(html).not.toContain('<option value="alert-run:BOR-B1:1760500000000">');
  });

  it('prints its sections in order with our headings, and no download links', () => {
    const html = String(
      AuditReportPage({
        area: { id: 'BOR', name: 'Boreas bay' },
        query,
        audit: handAudit(),
        problems: [],
        tables,
        generatedAtMs: T0,
        version: 'test',
      }),
    );
    const at = REPORT_HEADINGS.map((h) => html.indexOf(h));
    expect(at.every((i) => i >= 0)).toBe(true);
    expect([...at].sort((a, b) => a - b)).toEqual(at);
    expect(html).not.toContain('vc-downloads');
    expect(html).toContain('inlet, &quot;blocked&quot;');
    // The cover sums the events (hand computation: 0 + 0.31), naming each costed one with its excursions.
    expect(html).toContain(
      '0.31 expected voids and 4.4 dies of loss in all, each event counted once (its excursions together): Event 2 (E1) 0.31 voids',
    );
  });
});

describe('splitColumns', () => {
  it('cuts a wide table into balanced parts that each repeat the first column and together hold every cell once', () => {
    const t = areaAuditTables(handAudit()).find((x) => x.id === 'excursions')!;
    const parts = splitColumns(t, 10);
    // 15 columns: the name and 14 more, in ⌈14 / 9⌉ = 2 parts of 7 (hand computation).
    expect(t.columns).toHaveLength(15);
    expect(parts.map((p) => p.columns.length)).toEqual([8, 8]);
    for (const p of parts) expect(p.columns[0]).toEqual(t.columns[0]);
    expect(parts.flatMap((p) => p.columns.slice(1))).toEqual(t.columns.slice(1));
    parts.forEach((p) => {
      p.rows.forEach((r, i) => {
        expect(r[0]).toEqual(t.rows[i]![0]);
      });
    });
    expect(splitColumns(t, 20)).toEqual([t]);
  });
});
