import { describe, expect, it } from 'vitest';
import { bufferSource, CsvReadError, CsvReader, detectDelimiter } from '../../../src/ingest/csv.ts';

/** Reads a whole text with a given chunk size: the metadata lines, the header and every record with its line. */
function readAll(text: string | Buffer, chunkBytes = 1 << 20, delimiter: ',' | ';' | '\t' | null = null) {
  const r = new CsvReader(bufferSource(text), { chunkBytes, delimiter });
  const meta = r.readPreamble();
  const rows: { line: number; cells: string[] }[] = [];
  for (let b = r.nextBatch(); b; b = r.nextBatch()) {
    for (let i = 0; i < b.rows.length; i++) rows.push({ line: b.lines[i]!, cells: b.rows[i]! });
  }
  r.close();
  return { meta, header: r.header, headerLine: r.headerLine, rows, reader: r };
}

describe('CsvReader: line numbers and real-world variants (RFC 4180 records)', () => {
  it('numbers records by the physical line they start on, counting line breaks inside quoted fields', () => {
    const text = 'a,b\n1,"two\nlines"\n3,"x"\n4,"three\n\nlines"\n5,y\n';
    const { rows, headerLine } = readAll(text);
    expect(headerLine).toBe(1);
    expect(rows).toEqual([
      { line: 2, cells: ['1', 'two\nlines'] },
      { line: 4, cells: ['3', 'x'] },
      { line: 5, cells: ['4', 'three\n\nlines'] },
      { line: 8, cells: ['5', 'y'] },
    ]);
  });

  it('gives the same records and lines whatever the chunk size (records split across reads)', () => {
    const text =
      '# format: x\n\n# zone: UTC\nid,"name, with comma",v\n' +
      Array.from({ length: 40 }, (_, i) =>
        i % 7 === 3 ? `r${i},"multi\r\nline ""${i}""",µ${i}` : `r${i},plain ${i},€${i}`,
      ).join('\r\n') +
      '\r\n\r\n  \r\n';
    const ref = readAll(text);
    for (const chunk of [1, 2, 3, 5, 7, 13, 64]) {
      const got = readAll(text, chunk);
      expect(got.rows).toEqual(ref.rows);
      expect(got.header).toEqual(ref.header);
      expect(got.meta).toEqual(ref.meta);
    }
    expect(ref.header).toEqual(['id', 'name, with comma', 'v']);
    expect(ref.rows).toHaveLength(40);
    expect(ref.rows[3]).toEqual({ line: 8, cells: ['r3', 'multi\r\nline "3"', 'µ3'] });
    expect(ref.rows[4]!.line).toBe(10);
  });

  it('strips a UTF-8 byte-order mark and reports it', () => {
    const { header, reader } = readAll(
      Buffer.concat([Buffer.from([0xef, 0xbb, 0xbf]), Buffer.from('a,b\n1,2\n')]),
    );
    expect(header).toEqual(['a', 'b']);
    expect(reader.bom).toBe(true);
  });

  it('reads CRLF files (reported) and trims the CR from the last cell', () => {
    const { rows, reader } = readAll('a,b\r\n1,2\r\n3,"4"\r\n');
    expect(reader.lineBreak).toBe('\r\n');
    expect(rows).toEqual([
      { line: 2, cells: ['1', '2'] },
      { line: 3, cells: ['3', '4'] },
    ]);
  });

  it('reads old Mac files with lone CR line breaks', () => {
    const { rows, reader } = readAll('a,b\r1,2\r3,4\r');
    expect(reader.lineBreak).toBe('\r');
    expect(rows.map((r) => r.line)).toEqual([2, 3]);
  });

  it('skips blank and whitespace-only lines anywhere (trailing ones included) but counts them', () => {
    const { rows } = readAll('a,b\n\n1,2\n   \n3,4\n\n\n\n');
    expect(rows).toEqual([
      { line: 3, cells: ['1', '2'] },
      { line: 5, cells: ['3', '4'] },
    ]);
  });

  it('collects the metadata block of # lines and blank lines before the header', () => {
    const { meta, headerLine, rows } = readAll('# format: voidcast locations 1\n\n#units: volume=L\nx\n1\n');
    expect(meta).toEqual([
      { line: 1, text: 'format: voidcast locations 1' },
      { line: 3, text: 'units: volume=L' },
    ]);
    expect(headerLine).toBe(4);
    expect(rows).toEqual([{ line: 5, cells: ['1'] }]);
  });

  it('detects a semicolon or tab delimiter from the header, outside quotes', () => {
    expect(detectDelimiter('a;b;c')).toBe(';');
    expect(detectDelimiter('a\tb\tc')).toBe('\t');
    expect(detectDelimiter('"x;y",b')).toBe(',');
    expect(detectDelimiter('abc')).toBeNull();
    const { rows, reader } = readAll('a;b\n1,5;2\n');
    expect(reader.delimiter).toBe(';');
    expect(reader.delimiterSource).toBe('detected');
    expect(rows[0]!.cells).toEqual(['1,5', '2']);
  });

  it('a declared delimiter wins over detection', () => {
    const { header, reader } = readAll('a;b\n1;2\n', 1 << 20, ',');
    expect(header).toEqual(['a;b']);
    expect(reader.delimiterSource).toBe('declared');
  });

  it('an unclosed quote is an error naming the line where the quoted field starts', () => {
    expect(() => readAll('a,b\n1,2\n3,"open\nstill open\n')).toThrow(CsvReadError);
    try {
      readAll('a,b\n1,2\n3,"open\nstill open\n');
    } catch (e) {
      expect((e as CsvReadError).line).toBe(3);
      expect((e as CsvReadError).message).toBe(
        'a quoted field is not closed before the end of the file (a " without its closing ")',
      );
    }
  });

  it('refuses bytes that are not UTF-8 instead of guessing (a Latin-1 µ is 0xB5)', () => {
    expect(() => readAll(Buffer.from([0x61, 0x2c, 0x62, 0x0a, 0x31, 0x2c, 0xb5, 0x0a]))).toThrow(
      /^the file is not valid UTF-8 text/,
    );
  });

  it('keeps multi-byte characters split across chunk boundaries intact', () => {
    const text = 'a\n' + '€µ°'.repeat(50) + '\n';
    expect(readAll(text, 1).rows[0]!.cells[0]).toBe('€µ°'.repeat(50));
  });

  it('an empty file has no header', () => {
    expect(readAll('').header).toBeNull();
    expect(readAll('\n\n# only a comment\n').header).toBeNull();
  });
});
