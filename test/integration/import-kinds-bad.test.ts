/**
 * Every broken example file of the six kinds (test/fixtures/bad/<kind>-*.{csv,json}) is rejected with
 * the exact issue — file, line, column, value as written, rule — and leaves every table as it was.
 * The lines are counted by hand in each fixture (metadata lines, header, rows; JSON: the line of the
 * offending key).
 */
import { describe, expect, it } from 'vitest';
import { importFile } from '../../src/ingest/pipeline.ts';
import type { ImportIssue, ImportKindName } from '../../src/ingest/types.ts';
import { BASE_FILES, bad, freshDb, importAll, PAIR_FILES, snapshot } from './import-kinds-fixtures.ts';

type Case = {
  file: string;
  kind: ImportKindName;
  /** Set-up: the base files, plus the pairs when the case needs a stored pair. */
  withPairs?: boolean;
  issues: Omit<ImportIssue, 'file'>[];
};

const CASES: Case[] = [
  {
    file: 'scans-outside-wafer.csv',
    kind: 'scans',
    issues: [
      {
        line: 17,
        column: 'x_mm',
        value: '160.0',
        rule: 'the defect at (160, 5) mm lies outside the wafer: 160.078 mm from the centre, the radius is 150 mm (check the coordinate convention and units)',
      },
    ],
  },
  {
    file: 'scans-below-threshold.csv',
    kind: 'scans',
    issues: [
      {
        line: 17,
        column: 'size_nm',
        value: '40',
        rule: "40 nm is below the scan's detection threshold of 45 nm (a scanner reports nothing below its threshold: check the threshold or the size unit)",
      },
    ],
  },
  {
    file: 'scans-unknown-convention.csv',
    kind: 'scans',
    issues: [
      {
        line: 13,
        column: null,
        value: '# coordinates: origin=centre x=east y=up view=front',
        rule: 'unknown coordinate convention: x=east (allowed: x=right, x=left)',
      },
    ],
  },
  {
    file: 'scans-header-missing-lot.csv',
    kind: 'scans',
    issues: [
      {
        line: 0,
        column: null,
        value: null,
        rule: 'the metadata block must give lot (a line "# lot: L2403" before the header)',
      },
    ],
  },
  {
    file: 'scans-defect-before-scan.csv',
    kind: 'scans',
    issues: [
      {
        line: 8,
        column: 'scan_id',
        value: 'SC-BAD-5',
        rule: 'scan "SC-BAD-5" has no scan row above this line (each scan row comes before its defects)',
      },
    ],
  },
  {
    file: 'scans-wafer-in-other-lot.csv',
    kind: 'scans',
    issues: [
      {
        line: 4,
        column: null,
        value: '# wafer: L2403-07',
        rule: 'wafer "L2403-07" belongs to lot "L2403", not "L9999"',
      },
    ],
  },
  {
    file: 'ledger-end-before-start.csv',
    kind: 'ledger',
    issues: [
      {
        line: 3,
        column: 'end',
        value: '2026-03-02T08:55:00Z',
        rule: 'the step ends before it starts (start 2026-03-02T09:00:00Z); end must be at or after start',
      },
    ],
  },
  {
    file: 'ledger-unknown-step-kind.csv',
    kind: 'ledger',
    issues: [
      {
        line: 3,
        column: 'step_kind',
        value: 'polish',
        rule: 'must be one of process, clean, activation, inspection, wait, transfer, bond',
      },
    ],
  },
  {
    file: 'ledger-unknown-location.csv',
    kind: 'ledger',
    issues: [
      {
        line: 3,
        column: 'location',
        value: 'BAY-9',
        rule: 'location "BAY-9" is not stored (import the locations file that defines it first)',
      },
    ],
  },
  {
    file: 'ledger-time-without-offset.csv',
    kind: 'ledger',
    issues: [
      {
        line: 3,
        column: 'start',
        value: '2026-03-02T09:00:00',
        rule: 'has no offset: add Z or ±HH:MM to each time, or declare the zone in the file (# zone: Europe/Berlin)',
      },
    ],
  },
  {
    file: 'pairs-unknown-wafer.csv',
    kind: 'pairs',
    issues: [
      {
        line: 3,
        column: 'bottom_wafer',
        value: 'L2403-99',
        rule: 'wafer "L2403-99" is not stored (wafers come from scans or ledger files; import those first)',
      },
    ],
  },
  {
    file: 'pairs-top-equals-bottom.csv',
    kind: 'pairs',
    issues: [
      {
        line: 3,
        column: 'bottom_wafer',
        value: 'L2403-07',
        rule: 'top and bottom wafer are the same wafer ("L2403-07"); a pair bonds two different wafers',
      },
    ],
  },
  {
    file: 'pairs-flip-axis-invalid.csv',
    kind: 'pairs',
    issues: [{ line: 3, column: 'flip_axis', value: 'z', rule: 'must be one of x, y' }],
  },
  {
    file: 'pairs-unknown-product.csv',
    kind: 'pairs',
    issues: [
      {
        line: 3,
        column: 'product',
        value: 'NO-SUCH-PRODUCT',
        rule: 'product "NO-SUCH-PRODUCT" is not stored (import its products file first)',
      },
    ],
  },
  {
    file: 'products-die-larger-than-wafer.json',
    kind: 'products',
    issues: [
      {
        line: 15,
        column: 'die.widthMm',
        value: '250',
        rule: 'a 250 × 200 mm die does not fit on the wafer: its diagonal exceeds the 294 mm usable diameter (wafer diameter minus twice the edge exclusion)',
      },
    ],
  },
  {
    file: 'products-missing-spec.json',
    kind: 'products',
    issues: [{ line: 1, column: 'spec', value: null, rule: 'is required' }],
  },
  {
    file: 'products-unknown-material.json',
    kind: 'products',
    issues: [
      {
        line: 9,
        column: 'stack.top.material',
        value: '"fused silica"',
        rule: 'material "fused silica" has no preset: state plateModulusGPa (presets: Si(100) E\' = 155.4 GPa)',
      },
    ],
  },
  {
    file: 'tools-clean-adds-particles.json',
    kind: 'tools',
    issues: [
      {
        line: 60,
        column: 'cleans[1].removal.bands[1].after',
        value: '75',
        rule: "must not exceed before (60): particles a clean adds are its tool's adders, state them there",
      },
    ],
  },
  {
    file: 'tools-overlapping-bands.json',
    kind: 'tools',
    issues: [
      {
        line: 35,
        column: 'tools[3].adders.bands[1].fromNm',
        value: '90',
        rule: 'band 90–300 nm overlaps band 45–100 nm',
      },
    ],
  },
  {
    file: 'tools-trailing-comma.json',
    kind: 'tools',
    issues: [
      {
        line: 41,
        column: null,
        value: ']',
        rule: 'not valid JSON at column 3: unexpected character "]" where a value is expected (JSON has no comments or trailing commas)',
      },
    ],
  },
  {
    file: 'void-inspections-negative-diameter.csv',
    kind: 'void-inspections',
    withPairs: true,
    issues: [{ line: 13, column: 'diameter_mm', value: '-2.1', rule: 'must be a number > 0 (mm)' }],
  },
  {
    file: 'void-inspections-below-smallest.csv',
    kind: 'void-inspections',
    withPairs: true,
    issues: [
      {
        line: 13,
        column: 'diameter_mm',
        value: '0.2',
        rule: "0.2 mm is below the inspection's smallest reported void of 0.3 mm (check smallest_void_mm or the diameter unit)",
      },
    ],
  },
  {
    file: 'void-inspections-unknown-pair.csv',
    kind: 'void-inspections',
    withPairs: true,
    issues: [
      {
        line: 3,
        column: null,
        value: '# pair: P-NONE',
        rule: 'pair "P-NONE" is not stored (import its pairs file first)',
      },
    ],
  },
];

describe('broken files of the scans, ledger, tools, products, pairs and void-inspections kinds', () => {
  it('has a case for at least twelve distinct broken files, two or more per kind', () => {
    expect(new Set(CASES.map((c) => c.file)).size).toBe(CASES.length);
    expect(CASES.length).toBeGreaterThanOrEqual(12);
    for (const k of ['scans', 'ledger', 'tools', 'products', 'pairs', 'void-inspections'])
      expect(CASES.filter((c) => c.kind === k).length).toBeGreaterThanOrEqual(2);
  });

  for (const c of CASES) {
    it(`rejects ${c.file} with the exact issue and stores nothing`, async () => {
      const db = freshDb();
      await importAll(db, c.withPairs ? [...BASE_FILES, ...PAIR_FILES] : BASE_FILES);
      const before = snapshot(db);
      const r = await importFile(db, { kind: c.kind, path: bad(c.file) });
      expect(r.status).toBe('rejected');
      expect(r.importId).toBeNull();
      expect(r.issues).toEqual(c.issues.map((i) => ({ file: c.file, ...i })));
      expect(snapshot(db)).toEqual(before);
    });
  }
});
