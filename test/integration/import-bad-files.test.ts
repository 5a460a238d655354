/**
 * Broken files are rejected with the exact issue (file, line, column, value, rule) and leave every
 * table of the database exactly as it was (the content dump before and after is equal).
 * Each expected message was read and judged against the rule the file breaks; they are the contract
 * users see, so a change of wording must be deliberate.
 */
import { mkdtempSync, readdirSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { importFile } from '../../src/ingest/pipeline.ts';
import type { ImportKindName } from '../../src/ingest/types.ts';
import { type Db, migrate, openDatabase } from '../../src/store/db.ts';
import { dumpDatabase } from '../helpers/db-dump.ts';

const BAD = join(import.meta.dirname, '../fixtures/bad');
const GOOD = join(import.meta.dirname, '../fixtures/good');

type Expected = { line: number; column: string | null; value: string | null; rule: string };

const CASES: [string, Expected[]][] = [
  [
    'counter-samples-cell-count.csv',
    [
      {
        line: 3,
        column: null,
        value: null,
        rule: 'the row has 7 cells but the header has 8 (check the delimiter and quotes)',
      },
    ],
  ],
  [
    'counter-samples-channels-descending.csv',
    [
      {
        line: 2,
        column: 'ge_0.1um',
        value: 'ge_0.1um',
        rule: 'channel columns must be in ascending order of size, each size once (after "ge_0.5um")',
      },
    ],
  ],
  [
    'counter-samples-counts-unit-undeclared.csv',
    [
      {
        line: 0,
        column: null,
        value: null,
        rule: 'declare what the channel columns hold: # units: counts=raw (counts in the sampled volume) or counts=per_m3, per_L or per_ft3',
      },
    ],
  ],
  [
    'counter-samples-decimal-comma-with-comma-delimiter.csv',
    [
      {
        line: 3,
        column: 'volume_L',
        value: '28,3',
        rule: 'must be a number with a decimal point (for decimal commas declare "# decimal: ," and "# delimiter: ;")',
      },
    ],
  ],
  [
    'counter-samples-differential-not-contiguous.csv',
    [
      {
        line: 2,
        column: 'd_0.3-0.5um',
        value: 'd_0.3-0.5um',
        rule: 'differential channels must be contiguous: "d_0.1-0.2um" ends where the next must start',
      },
    ],
  ],
  [
    'counter-samples-duplicate-header.csv',
    [
      {
        line: 2,
        column: 'GE_0.1um',
        value: 'GE_0.1um',
        rule: 'duplicate column "ge_0.1um" (columns 6 and 7; header names are compared ignoring case and spaces)',
      },
    ],
  ],
  ['counter-samples-empty.csv', [{ line: 0, column: null, value: null, rule: 'the file is empty' }]],
  [
    'counter-samples-end-before-start.csv',
    [{ line: 3, column: 'end', value: null, rule: 'the sample must end after it starts' }],
  ],
  [
    'counter-samples-header-only.csv',
    [{ line: 2, column: null, value: null, rule: 'the file has a header but no data rows' }],
  ],
  [
    'counter-samples-missing-column.csv',
    [
      {
        line: 2,
        column: 'location_id',
        value: null,
        rule: 'missing column "location_id" (where it sampled; must be a stored location)',
      },
    ],
  ],
  [
    'counter-samples-mixed-modes.csv',
    [
      {
        line: 2,
        column: 'ge_0.1um',
        value: 'ge_0.1um',
        rule: 'cumulative (ge_) and differential (d_) channels cannot be mixed, except one open ge_ channel at the top',
      },
    ],
  ],
  [
    // 2^53 + 1 = 9007199254740993 has no double of its own (IEEE 754 binary64): it would be stored as 2^53.
    'counter-samples-count-above-2-53.csv',
    [
      {
        line: 3,
        column: 'ge_0.1um',
        value: '9007199254740993',
        rule: 'must be at most 9007199254740991 (2^53 − 1, the largest whole number stored exactly)',
      },
    ],
  ],
  [
    // Found by the property test (test/unit/properties/parsers.test.ts): an empty volume cell used to
    // reach the database as NULL and fail its NOT NULL constraint (an internal error, not an issue).
    'counter-samples-empty-volume.csv',
    [
      {
        line: 3,
        column: 'volume_L',
        value: null,
        rule: 'the sampled volume is required: give volume_L as a number > 0',
      },
    ],
  ],
  [
    'counter-samples-negative-count.csv',
    [{ line: 3, column: 'ge_0.3um', value: '-3', rule: 'must be a whole number ≥ 0' }],
  ],
  [
    'counter-samples-no-channels.csv',
    [
      {
        line: 2,
        column: null,
        value: null,
        rule: 'no channel columns: name them ge_<size>um (cumulative) or d_<low>-<high>um (differential), e.g. ge_0.1um',
      },
    ],
  ],
  [
    'counter-samples-non-monotone-cumulative.csv',
    [
      {
        line: 4,
        column: 'ge_0.5um',
        value: '31',
        rule: 'cumulative counts must not rise with size: ge_0.5um = 31 is above ge_0.3um = 30',
      },
    ],
  ],
  [
    'counter-samples-non-numeric-count.csv',
    [{ line: 3, column: 'ge_0.3um', value: 'n/a', rule: 'must be a whole number ≥ 0' }],
  ],
  [
    'counter-samples-nonexistent-local-time.csv',
    [
      {
        line: 4,
        column: 'start',
        value: '2026-03-29T02:30:00',
        rule: 'this local time does not exist in Europe/Berlin (skipped by a daylight-saving change); give an offset',
      },
    ],
  ],
  [
    'counter-samples-not-utf8.csv',
    [
      {
        line: 4,
        column: null,
        value: null,
        rule: 'the file is not valid UTF-8 text (byte 153 is not part of a UTF-8 character); save it as UTF-8',
      },
    ],
  ],
  [
    'counter-samples-pipe-delimiter.csv',
    [
      {
        line: 2,
        column: null,
        value: 'counter_id|location_id|start|duration_s|volume_L|ge_0.1um|ge_0.3um|ge_0.5um',
        rule: 'the header is one column: voidcast reads files delimited by "," ";" or tab',
      },
    ],
  ],
  [
    'counter-samples-time-without-zone.csv',
    [
      {
        line: 3,
        column: 'start',
        value: '2026-03-02T08:00:00',
        rule: 'has no offset: add Z or ±HH:MM to each time, or declare the zone in the file (# zone: Europe/Berlin)',
      },
    ],
  ],
  [
    'counter-samples-unclosed-quote.csv',
    [
      {
        line: 4,
        column: null,
        value: null,
        rule: 'a quoted field is not closed before the end of the file (a " without its closing ")',
      },
    ],
  ],
  [
    'counter-samples-unit-conflict.csv',
    [
      {
        line: 2,
        column: 'volume_L',
        value: 'ft3',
        rule: 'unit conflict: the header says volume_L but # units: declares volume=ft3',
      },
    ],
  ],
  [
    'counter-samples-unknown-location.csv',
    [
      {
        line: 4,
        column: 'location_id',
        value: 'BAY-NOWHERE',
        rule: 'unknown location "BAY-NOWHERE": import it in a locations file first',
      },
    ],
  ],
  [
    'counter-samples-unknown-status.csv',
    [
      {
        line: 3,
        column: 'status',
        value: 'dusty',
        rule: 'must be ok or values from flow, laser, overload separated by |',
      },
    ],
  ],
  [
    'counter-samples-unknown-zone.csv',
    [
      {
        line: 2,
        column: null,
        value: '# zone: Mars/Olympus_Mons',
        rule: 'zone "Mars/Olympus_Mons" is not an IANA time-zone name (e.g. Europe/Berlin) or an offset (e.g. +01:00)',
      },
    ],
  ],
  [
    'counter-samples-unparseable-time.csv',
    [
      {
        line: 3,
        column: 'start',
        value: '02/03/2026 08:00',
        rule: 'must be an ISO 8601 date-time with an offset, e.g. 2026-03-02T08:00:00Z or 2026-03-02T09:00:00+01:00',
      },
    ],
  ],
  [
    'counter-samples-volume-flow-disagree.csv',
    [
      {
        line: 3,
        column: 'volume_L',
        value: '28.3',
        rule: 'the volume disagrees with flow_L_min × duration = 2.830 L by more than 2 %',
      },
    ],
  ],
  [
    'counter-samples-volume-without-unit.csv',
    [
      {
        line: 2,
        column: 'volume',
        value: null,
        rule: 'column "volume" has no unit: declare it (# units: volume=L) or write the unit in the header',
      },
    ],
  ],
  [
    'counter-samples-wrong-delimiter-declared.csv',
    [
      {
        line: 3,
        column: null,
        value: 'counter_id;location_id;start;duration_s;volume_L;ge_0.1um;ge_0.3um;ge_0.5um',
        rule: 'the header is one column when split on ","; if the file uses ";", declare it: # delimiter: ;',
      },
    ],
  ],
  [
    'counter-samples-wrong-volume-unit.csv',
    [
      {
        line: 1,
        column: null,
        value: 'gal',
        rule: 'unknown volume unit "gal" in # units: (allowed: L|m3|ft3)',
      },
    ],
  ],
  [
    'counter-samples-zero-duration.csv',
    [{ line: 3, column: 'duration_s', value: '0', rule: 'must be a number > 0 (s)' }],
  ],
  [
    'locations-alert-above-action.csv',
    [
      {
        line: 2,
        column: 'alert_ge_0.5um_per_m3',
        value: '3000',
        rule: 'the alert level must not exceed the action level at 0.5 µm',
      },
    ],
  ],
  [
    'locations-duplicate-header.csv',
    [
      {
        line: 1,
        column: 'environment',
        value: 'environment',
        rule: 'duplicate column "environment" (columns 3 and 4; header names are compared ignoring case and spaces)',
      },
    ],
  ],
  [
    'locations-duplicate-id.csv',
    [{ line: 3, column: 'location_id', value: 'S1', rule: 'location "S1" is given twice (first on line 2)' }],
  ],
  [
    'locations-iso-class-out-of-range.csv',
    [
      {
        line: 2,
        column: 'iso_class',
        value: '10',
        rule: 'must be an ISO 14644-1 class from 1 to 9 in steps of 0.1 (e.g. 4 or 4.5)',
      },
    ],
  ],
  [
    'locations-iso-class-step.csv',
    [
      {
        line: 2,
        column: 'iso_class',
        value: '4.25',
        rule: 'must be an ISO 14644-1 class from 1 to 9 in steps of 0.1 (e.g. 4 or 4.5)',
      },
    ],
  ],
  [
    'locations-level-order.csv',
    [
      {
        line: 4,
        column: 'parent_id',
        value: 'T1',
        rule: 'a bay cannot sit in a tool ("B1" in "T1"): the order is site > area > bay > tool > point',
      },
    ],
  ],
  [
    'locations-missing-column.csv',
    [
      {
        line: 1,
        column: 'level',
        value: null,
        rule: 'missing column "level" (place in the hierarchy: site, area, bay, tool, point)',
      },
      {
        line: 1,
        column: 'environment',
        value: null,
        rule: 'missing column "environment" (environment type: open-room, mini-environment, efem, load-port, purged-carrier, process-module)',
      },
    ],
  ],
  [
    'locations-missing-parent.csv',
    [
      {
        line: 3,
        column: 'parent_id',
        value: 'S9',
        rule: 'parent location "S9" is neither in this file nor stored',
      },
    ],
  ],
  [
    'locations-unknown-environment.csv',
    [
      {
        line: 4,
        column: 'environment',
        value: 'clean room',
        rule: 'must be one of open-room, mini-environment, efem, load-port, purged-carrier, process-module',
      },
    ],
  ],
  [
    'locations-wrong-kind-declared.csv',
    [
      {
        line: 1,
        column: null,
        value: '# format: voidcast counter-samples 1',
        rule: 'this file declares kind "counter-samples" but is imported as locations',
      },
    ],
  ],
];

let dir: string;
let db: Db;

beforeAll(async () => {
  dir = mkdtempSync(join(tmpdir(), 'voidcast-bad-'));
  db = openDatabase(join(dir, 'voidcast.db'));
  migrate(db);
  // A database with data in it: a rejected file must not touch any of it.
  for (const [kind, file] of [
    ['locations', 'locations-line.csv'],
    ['counter-samples', 'counter-samples-bay.csv'],
  ] as const) {
    const r = await importFile(db, { kind, path: join(GOOD, file) });
    expect(r.status).toBe('imported');
  }
});

afterAll(() => {
  db.close();
  rmSync(dir, { recursive: true, force: true });
});

describe('broken locations and counter-samples files', () => {
  it('every broken fixture of these kinds has a case here', () => {
    const files = readdirSync(BAD).filter(
      (f) => f.startsWith('locations-') || f.startsWith('counter-samples-'),
    );
    expect(CASES.map((c) => c[0]).sort()).toEqual(files.sort());
    expect(CASES.length).toBeGreaterThanOrEqual(15);
  });

  it.each(CASES)('%s is rejected with its exact issues and changes nothing', async (file, expected) => {
    const kind: ImportKindName = file.startsWith('locations-') ? 'locations' : 'counter-samples';
    const before = dumpDatabase(db);
    const r = await importFile(db, { kind, path: join(BAD, file) });
    expect(r.status).toBe('rejected');
    expect(r.importId).toBeNull();
    expect(r.rowsStored).toBe(0);
    expect(r.issues).toEqual(expected.map((i) => ({ file, ...i })));
    expect(dumpDatabase(db)).toEqual(before);
    // With --accept-valid-rows a file-level problem still rejects the file; a row-level one stores the
    // rest (checked in import-counter-samples.test.ts). Either way a rejection leaves no trace.
    const again = await importFile(db, { kind, path: join(BAD, file), acceptValidRows: true });
    if (again.status === 'rejected') expect(dumpDatabase(db)).toEqual(before);
    else expect(again.rowsRejected).toBeGreaterThan(0);
  });
});
