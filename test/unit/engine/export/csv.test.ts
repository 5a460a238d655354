/**
 * The CSV writer against RFC 4180 §2 (its own examples, rules 1–7) and against papaparse as an
 * independent reader (the registry's CSV parser, not ours): whatever we write, it reads back to the
 * same cells.
 */
import fc from 'fast-check';
import Papa from 'papaparse';
import { describe, expect, it } from 'vitest';
import { csvField, toCsv, UTF8_BOM } from '../../../../src/engine/export/csv.ts';

function readBack(text: string): string[][] {
  const body = text.startsWith(UTF8_BOM) ? text.slice(1) : text;
  const parsed = Papa.parse<string[]>(body, { delimiter: ',', newline: '\r\n', skipEmptyLines: false });
  expect(parsed.errors).toEqual([]);
  // RFC 4180 rule 2: the final CRLF ends the last record; papaparse reports an empty last row for it.
  const rows = parsed.data;
  if (rows.length > 0 && rows[rows.length - 1]!.length === 1 && rows[rows.length - 1]![0] === '') rows.pop();
  return rows;
}

describe('RFC 4180 §2, its examples', () => {
  it('rule 1 and 2: records separated and ended by CRLF ("aaa,bbb,ccc CRLF zzz,yyy,xxx CRLF")', () => {
    expect(toCsv({ header: ['aaa', 'bbb', 'ccc'], rows: [['zzz', 'yyy', 'xxx']] })).toBe(
      'aaa,bbb,ccc\r\nzzz,yyy,xxx\r\n',
    );
  });
  it('rule 6: a field with a line break, comma or quote is enclosed in double quotes ("b CRLF bb")', () => {
    expect(csvField('b\r\nbb')).toBe('"b\r\nbb"');
    expect(csvField('b\nbb')).toBe('"b\nbb"');
    expect(csvField('b\rbb')).toBe('"b\rbb"');
    expect(csvField('a,b')).toBe('"a,b"');
  });
  it('rule 7: a double quote inside a field is doubled ("aaa","b""bb","ccc")', () => {
    expect(toCsv({ header: ['aaa', 'b"bb', 'ccc'], rows: [] })).toBe('aaa,"b""bb",ccc\r\n');
  });
  it('rule 4: spaces are part of a field and are kept unquoted', () => {
    expect(csvField(' a b ')).toBe(' a b ');
  });
  it('rule 4: every record has as many fields as the header, or the writer refuses', () => {
    expect(() => toCsv({ header: ['a', 'b'], rows: [['1']] })).toThrow(
      'CSV row 1 has 1 fields; the header has 2',
    );
  });
  it('numbers, booleans and missing values (our rule, stated in the module)', () => {
    expect(toCsv({ header: ['n', 'b', 'x', 'y'], rows: [[0.1, true, null, Number.NaN]] })).toBe(
      'n,b,x,y\r\n0.1,true,,\r\n',
    );
  });
});

describe('the spreadsheet variant', () => {
  it('starts with the UTF-8 byte-order mark and otherwise keeps RFC 4180', () => {
    const t = toCsv({ header: ['size ≥ µm'], rows: [['a,b']] }, 'spreadsheet');
    expect(t.startsWith('\uFEFF')).toBe(true);
    expect(t.slice(1)).toBe('size ≥ µm\r\n"a,b"\r\n');
  });
  it('prefixes text cells starting with = + - @ tab CR with an apostrophe (formula-injection guard)', () => {
    for (const s of ['=1+2', '+1', '-1', '@SUM(A1)', '\tx', '\rx'])
      expect(readBack(toCsv({ header: ['c'], rows: [[s]] }, 'spreadsheet'))[1]![0]).toBe(`'${s}`);
    // The plain variant leaves them as they are.
    expect(csvField('=1+2')).toBe('=1+2');
    // Numbers are never prefixed: −3.5 stays a number.
    expect(csvField(-3.5, 'spreadsheet')).toBe('-3.5');
    // A trigger later in the text is harmless and left alone.
    expect(csvField('a=b', 'spreadsheet')).toBe('a=b');
  });
});

describe('round trip through papaparse (an independent reader)', () => {
  const cell = fc.oneof(
    fc.string(),
    fc.constantFrom('', ',', '"', '""', '\r\n', '\n', '\r', 'a"b', ' x ', 'µm ≥ 0.5', '日本'),
  );
  it('any text cells read back unchanged (plain variant)', () => {
    fc.assert(
      fc.property(
        fc.integer({ min: 1, max: 5 }),
        fc.array(fc.array(cell, { minLength: 5, maxLength: 5 })),
        (w, rows) => {
          const header = Array.from({ length: w }, (_, i) => `h${i}`);
          const body = rows.map((r) => r.slice(0, w));
          // A lone empty cell in a one-column row is indistinguishable from an empty line in CSV
          // (RFC 4180 has no way to write it); papaparse reads it as [''], which is what we compare.
          const back = readBack(toCsv({ header, rows: body }));
          expect(back).toEqual([header, ...body]);
        },
      ),
      { seed: 16_401, numRuns: 300 },
    );
  });
  it('any text cells read back with only the apostrophe added (spreadsheet variant)', () => {
    fc.assert(
      fc.property(fc.array(fc.array(cell, { minLength: 3, maxLength: 3 })), (rows) => {
        const back = readBack(toCsv({ header: ['a', 'b', 'c'], rows }, 'spreadsheet'));
        const expected = rows.map((r) =>
          r.map((s) => (s.length > 0 && '=+-@\t\r'.includes(s[0]!) ? `'${s}` : s)),
        );
        expect(back).toEqual([['a', 'b', 'c'], ...expected]);
      }),
      { seed: 16_402, numRuns: 300 },
    );
  });
  it('numbers read back to the same value (shortest round-trip form)', () => {
    fc.assert(
      fc.property(
        fc.array(fc.double({ noNaN: true, noDefaultInfinity: true }), { minLength: 1, maxLength: 6 }),
        (xs) => {
          const back = readBack(toCsv({ header: xs.map((_, i) => `x${i}`), rows: [xs] }));
          expect(back[1]!.map(Number)).toEqual(xs.map((x) => (Object.is(x, -0) ? 0 : x)));
        },
      ),
      { seed: 16_403, numRuns: 200 },
    );
  });
});
