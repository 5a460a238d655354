/**
 * The plain reader (src/ingest/csv-rows.ts, PlainLines; numberCell's fastAt) against its plain twin,
 * the general path (papaparse, then parseRow with each cell's fast path and schema): on generated
 * files — plain rows mixed with the unusual ones the plain reader must hand on (quotes, blank and
 * white-space lines, cells with spaces, empty cells, wrong cell counts, CRLF and CR breaks, signs,
 * exponents, long digit strings, decimal commas in `;` files, non-ASCII spaces) and read in small
 * chunks so that lines straddle reads — both give the same rows, the same lines and the same issues.
 * Expected values: the general path's (itself checked by cells.test.ts against the zod schemas).
 * fast-check with fixed seeds, so that a failure reproduces.
 */
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { CELL_FAIL, numberCell } from '../../../src/ingest/cells.ts';
import { bufferSource, CsvReader } from '../../../src/ingest/csv.ts';
import { PLAIN_READER, readRows, startCsv } from '../../../src/ingest/csv-rows.ts';
import { getKind } from '../../../src/ingest/kinds/index.ts';
import type { ImportKindName, KindIssue, ParsedRow } from '../../../src/ingest/types.ts';

interface Read {
  issues: KindIssue[];
  rows: { line: number; row: ParsedRow | KindIssue[] }[];
  readOn: boolean | null;
}

function read(kindName: ImportKindName, text: string, plain: boolean, chunkBytes: number): Read {
  const kind = getKind(kindName)!;
  const out: Read = { issues: [], rows: [], readOn: null };
  const reader = new CsvReader(bufferSource(text), { chunkBytes });
  const before = PLAIN_READER.enabled;
  PLAIN_READER.enabled = plain;
  try {
    const start = startCsv(kind, reader, (i) => out.issues.push(i), { notes: [], dialect: null });
    if (!start || out.issues.length > 0) return out;
    out.readOn = readRows(
      reader,
      start,
      (i) => out.issues.push(i),
      (row, line) => out.rows.push({ line, row }),
      undefined,
      false,
    );
    return out;
  } finally {
    PLAIN_READER.enabled = before;
    reader.close();
  }
}

const CHANNELS = ['ge_0.3um', 'ge_0.5um', 'ge_1um'];

/** Number-like cells: mostly plain, some of every unusual shape. */
const numberText = fc.oneof(
  { weight: 6, arbitrary: fc.nat({ max: 100_000 }).map(String) },
  {
    weight: 3,
    arbitrary: fc.tuple(fc.nat({ max: 9999 }), fc.nat({ max: 99999 })).map(([a, b]) => `${a}.${b}`),
  },
  {
    weight: 2,
    arbitrary: fc.constantFrom(
      '',
      ' 5',
      '5 ',
      '\u00a05',
      '-1',
      '+2',
      '1e3',
      '2.5E-1',
      '.5',
      '5.',
      '0.1',
      '0.30000000000000004',
      '1234567890123456',
      '123456789012345',
      '9007199254740993',
      '12345678901234.5',
      '1.23456789012345',
      '0.000000000000001',
      '1,5',
      'x',
      '"7"',
      '"1,5"',
      'NaN',
    ),
  },
  { weight: 1, arbitrary: fc.string({ maxLength: 6 }) },
);
const idText = fc.oneof(
  { weight: 8, arbitrary: fc.constantFrom('PC-1', 'PC-2', 'c:7/a') },
  { weight: 1, arbitrary: fc.constantFrom('', ' PC-1', 'PC 1', '"PC,1"', 'PC-é', '-x') },
);
const timeText = fc.oneof(
  {
    weight: 8,
    arbitrary: fc
      .integer({ min: 1_700_000_000_000, max: 1_800_000_000_000 })
      .map((ms) => new Date(ms).toISOString().replace('.000Z', 'Z')),
  },
  { weight: 1, arbitrary: fc.constantFrom('2026-02-30T00:00:00Z', '2026-01-01T00:00:00', 'soon', '') },
);
const statusText = fc.constantFrom('ok', 'OK', '', 'flow', 'flow|laser', 'bad', 'none');
const roomText = fc.constantFrom('operational', 'at-rest', 'At rest', '', 'busy');

const counterRow = fc
  .tuple(
    idText,
    fc.constantFrom('LOC-1', 'LOC-2', 'LOC 3'),
    timeText,
    numberText,
    numberText,
    fc.array(numberText, { minLength: 3, maxLength: 3 }),
    statusText,
    roomText,
  )
  .map(([c, l, t, d, v, ch, st, rs]) => [c, l, t, d, v, ...ch, st, rs]);

/** A line of the file: mostly rows, sometimes a blank line, white space, too few or too many cells. */
const line = fc.oneof(
  { weight: 12, arbitrary: counterRow.map((cells) => ({ cells, extra: '' })) },
  { weight: 1, arbitrary: fc.constantFrom('', '   ', ',,,,', ' , ').map((t) => ({ cells: null, extra: t })) },
  { weight: 1, arbitrary: counterRow.map((cells) => ({ cells: cells.slice(0, 5), extra: '' })) },
  { weight: 1, arbitrary: counterRow.map((cells) => ({ cells: [...cells, 'more'], extra: '' })) },
  { weight: 1, arbitrary: counterRow.map((cells) => ({ cells: [...cells, ''], extra: '' })) },
);

function file(
  lines: { cells: string[] | null; extra: string }[],
  delim: ',' | ';',
  br: string,
  decimalComma: boolean,
): string {
  const head = [
    '# units: counts=raw',
    ...(delim === ';' ? ['# delimiter: ;'] : []),
    ...(decimalComma ? ['# decimal: ,'] : []),
    [
      'counter_id',
      'location_id',
      'start',
      'duration_s',
      'volume_L',
      ...CHANNELS,
      'status',
      'room_state',
    ].join(delim),
  ];
  const body = lines.map((l) => (l.cells ? l.cells.join(delim) : l.extra.replaceAll(',', delim)));
  return [...head, ...body].join(br) + (body.length % 2 ? br : '');
}

describe('plain reader and general path (plain twin)', () => {
  it('read the same rows, lines and issues from generated counter files', () => {
    fc.assert(
      fc.property(
        fc.array(line, { minLength: 1, maxLength: 40 }),
        fc.constantFrom<',' | ';'>(',', ',', ';'),
        fc.constantFrom('\n', '\n', '\r\n', '\r'),
        fc.boolean(),
        fc.constantFrom(16, 64, 1 << 16),
        (lines, delim, br, comma, chunk) => {
          const text = file(lines, delim, br, delim === ';' && comma);
          const general = read('counter-samples', text, false, chunk);
          const plain = read('counter-samples', text, true, chunk);
          expect(plain).toEqual(general);
        },
      ),
      { seed: 20261203, numRuns: 400 },
    );
  });

  it('give the same result on a long plain file in any chunk size', () => {
    const rows: string[] = [
      '# units: counts=raw',
      'counter_id,location_id,start,duration_s,volume_L,ge_0.3um,ge_0.5um,status',
    ];
    for (let i = 0; i < 2000; i++)
      rows.push(
        `PC-${i % 3},LOC-${i % 2},${new Date(1_770_000_000_000 + i * 60_000).toISOString()},60,28.${i % 10},${500 + (i % 17)},${i % 100},ok`,
      );
    const text = `${rows.join('\n')}\n`;
    const general = read('counter-samples', text, false, 1 << 16);
    expect(general.rows.length).toBe(2000);
    expect(general.rows.every((r) => !Array.isArray(r.row))).toBe(true);
    for (const chunk of [17, 1000, 1 << 16])
      expect(read('counter-samples', text, true, chunk)).toEqual(general);
  });

  it('agree on the other CSV kinds’ good fixtures read through the plain reader', () => {
    // locations: text, enum and number cells; the same comparison as above on a hand-written file.
    const text = [
      'location_id,parent_id,level,environment,iso_class',
      'FAB,,site,open-room,',
      'BAY-1,FAB,bay,open-room,5',
      ' BAY-2 ,FAB,bay,Open room,4.5',
      'PT-1,BAY-1,point,mini-environment,"4"',
      'PT-2,BAY-1,point,efem,1e1',
      '',
    ].join('\n');
    expect(read('locations', text, true, 16)).toEqual(read('locations', text, false, 16));
  });
});

describe('numberCell fastAt (plain twin: fast on the substring)', () => {
  it('returns what fast returns on the substring, for every rule', () => {
    const rules = [
      numberCell({ min: 0, integer: true }),
      numberCell({ min: 0, minExclusive: true, unit: 'L' }),
      numberCell({ min: 1, max: 9 }),
    ];
    const text = fc.oneof(
      fc.tuple(fc.nat(), fc.nat()).map(([a, b]) => `${a}.${b}`),
      fc
        .tuple(fc.stringMatching(/^\d{1,17}$/), fc.stringMatching(/^\d{0,17}$/))
        .map(([a, b]) => (b ? `${a}.${b}` : a)),
      fc.double({ noNaN: true }).map(String),
      fc.string({ maxLength: 20 }),
    );
    fc.assert(
      fc.property(fc.string({ maxLength: 3 }), text, fc.string({ maxLength: 3 }), (pre, t, post) => {
        const whole = pre + t + post;
        for (const cell of rules) {
          const a = cell.fastAt!(whole, pre.length, pre.length + t.length);
          const b = cell.fast!(t);
          expect(a).toBe(b);
          // and never a value where the schema refuses (the fast path's own contract)
          if (a !== CELL_FAIL) expect(cell.schema.safeParse(t).success).toBe(true);
        }
      }),
      { seed: 17, numRuns: 3000 },
    );
  });
});
