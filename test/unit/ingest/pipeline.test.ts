/**
 * The shared pipeline on its own: metadata, header normalisation, decimal separators, atomicity on
 * internal errors, progress, the issue cap and line numbers in a file of many chunks — with a small
 * kind defined here (as another engineer's kind would be) so that nothing depends on a real kind.
 */
import { describe, expect, it } from 'vitest';
import { idCell, numberCell, textCell } from '../../../src/ingest/cells.ts';
import { bufferSource } from '../../../src/ingest/csv.ts';
import { headerKey, matchHeader } from '../../../src/ingest/header.ts';
import { parseMetadata } from '../../../src/ingest/metadata.ts';
import { DecimalState, importSource, sha256Text } from '../../../src/ingest/pipeline.ts';
import type { ImportKind, ImportProgress, KindSession } from '../../../src/ingest/types.ts';
import { type Db, migrate, openDatabase } from '../../../src/store/db.ts';
import { dumpDatabase } from '../../helpers/db-dump.ts';

/** A toy kind storing (id, mass) rows into a table it creates; it throws on the id "boom". */
function toyKind(): ImportKind {
  return {
    name: 'tools',
    summary: 'test kind',
    columns: [
      { name: 'id', required: true, unit: null, description: 'id', cell: idCell },
      {
        name: 'mass_kg',
        required: true,
        unit: 'kg',
        description: 'mass',
        cell: () => numberCell({ min: 0, unit: 'kg' }),
      },
      { name: 'note', required: false, unit: null, description: 'note', cell: () => textCell() },
    ],
    begin(ctx): KindSession {
      ctx.db.exec('CREATE TABLE IF NOT EXISTS toy (id TEXT PRIMARY KEY, mass REAL, note TEXT, line INTEGER)');
      const ins = ctx.db.prepare('INSERT INTO toy VALUES (?, ?, ?, ?) ON CONFLICT (id) DO NOTHING');
      return {
        row(row, line) {
          if (row.id === 'boom') throw new Error('internal failure');
          return ins.run(row.id, row.mass_kg, row.note ?? null, line).changes ? 'stored' : 'duplicate';
        },
        finish: () => ({}),
      };
    },
  };
}

function run(
  db: Db,
  text: string,
  opts: { acceptValidRows?: boolean; maxIssues?: number; onProgress?: (p: ImportProgress) => void } = {},
) {
  return importSource(db, toyKind(), {
    displayName: 'toy.csv',
    sha256: sha256Text(text),
    bytes: Buffer.byteLength(text),
    open: () => bufferSource(text),
    ...opts,
  });
}

function freshDb(): Db {
  const db = openDatabase(':memory:');
  migrate(db);
  db.exec('CREATE TABLE toy (id TEXT PRIMARY KEY, mass REAL, note TEXT, line INTEGER)');
  return db;
}

describe('metadata block', () => {
  it('reads entries, units, zone, delimiter and decimal; notes unknown keys; refuses repeats and bad values', () => {
    const md = parseMetadata(
      [
        { line: 1, text: 'format: voidcast tools 1' },
        { line: 2, text: 'a free comment, with words' },
        { line: 3, text: 'Units: counts=raw, volume=L' },
        { line: 4, text: 'zone: +05:30' },
        { line: 5, text: 'delimiter: tab' },
        { line: 6, text: 'exported_by: someone' },
        { line: 7, text: 'zone: UTC' },
        { line: 8, text: 'decimal: ;' },
      ],
      [],
      'tools',
    );
    expect(md.units).toEqual(
      new Map([
        ['counts', 'raw'],
        ['volume', 'L'],
      ]),
    );
    expect(md.zone?.fixedOffsetMs).toBe(5.5 * 3_600_000);
    expect(md.delimiter).toBe('\t');
    expect(md.notes).toEqual(['ignored metadata line 6: "exported_by" is not a key of tools files']);
    expect(md.issues).toEqual([
      {
        line: 7,
        column: null,
        value: '# zone: UTC',
        rule: 'metadata key "zone" is given twice (first on line 4)',
      },
      { line: 8, column: null, value: '# decimal: ;', rule: 'decimal must be "." or ","' },
    ]);
    expect(parseMetadata([{ line: 1, text: 'format: voidcast tools 2' }], [], 'tools').issues[0]!.rule).toBe(
      'format version 2 is not supported (this build reads version 1)',
    );
  });
});

describe('header normalisation', () => {
  it('trims, ignores case and turns inner spaces into _', () => {
    expect(headerKey('  Mass  KG ')).toBe('mass_kg');
    const h = matchHeader(toyKind(), [' ID ', 'Mass kg', 'x_comment', ''], 1, ',');
    expect(h.issues).toEqual([]);
    expect(h.columns.map((c) => [c.index, c.written, c.spec?.name])).toEqual([
      [0, 'ID', 'id'],
      [1, 'Mass kg', 'mass_kg'],
    ]);
  });

  it('names the unit a unit-less column needs, and lists the known columns for an unknown one', () => {
    const h = matchHeader(toyKind(), ['id', 'mass', 'colour'], 1, ',');
    expect(h.issues.map((i) => i.rule)).toEqual([
      'column "mass" needs a unit: write it as mass_kg, or declare it (# units: mass=…)',
      'unknown column "colour" for tools files (known: id, mass_kg, note; prefix x_ to keep a column voidcast ignores)',
      'missing column "mass_kg" (mass)',
    ]);
  });
});

describe('decimal separators', () => {
  const dialect = (delimiter: ',' | ';', decimal: '.' | ',' | null) => ({
    delimiter,
    decimal: decimal ?? '.',
    delimiterSource: 'detected' as const,
    decimalSource: decimal ? ('declared' as const) : ('default' as const),
    bom: false,
    lineBreak: '\n' as const,
  });

  it('in a semicolon file, the first fraction decides and the other form is refused later', () => {
    const d = new DecimalState(dialect(';', null));
    expect(d.normalise('12', 2)).toBe('12');
    expect(d.normalise('1,5', 3)).toBe('1.5');
    expect(d.note).toBe('decimal comma detected (first on line 3)');
    expect(d.normalise('2.5', 4)).toEqual({
      rule: 'must be a number with a decimal comma, as in the rest of this file (first on line 3); no thousands separators',
    });
    const p = new DecimalState(dialect(';', null));
    expect(p.normalise('2.5', 2)).toBe('2.5');
    expect(p.normalise('1,5', 3)).toEqual({
      rule: 'must be a number with a decimal point, as in the rest of this file (first on line 2)',
    });
  });

  it('in a comma file a decimal comma is refused with the way to declare it', () => {
    expect(new DecimalState(dialect(',', null)).normalise('1,5', 2)).toEqual({
      rule: 'must be a number with a decimal point (for decimal commas declare "# decimal: ," and "# delimiter: ;")',
    });
  });
});

describe('importSource with a plugged-in kind', () => {
  it('stores rows with their lines and reports progress up to the whole file', () => {
    const db = freshDb();
    const progress: ImportProgress[] = [];
    const r = run(db, 'id,mass_kg,note\nA,1.5,"x,\ny"\nB,2,\n', { onProgress: (p) => progress.push(p) });
    expect(r.status).toBe('imported');
    expect(db.prepare('SELECT id, mass, note, line FROM toy ORDER BY id').all()).toEqual([
      { id: 'A', mass: 1.5, note: 'x,\ny', line: 2 },
      { id: 'B', mass: 2, note: null, line: 4 },
    ]);
    expect(progress.at(-1)).toEqual({ bytesRead: r.bytes, bytesTotal: r.bytes, rows: 2 });
    for (let i = 1; i < progress.length; i++)
      expect(progress[i]!.bytesRead).toBeGreaterThanOrEqual(progress[i - 1]!.bytesRead);
  });

  it('an internal error aborts the import and leaves the database as it was', () => {
    const db = freshDb();
    run(db, 'id,mass_kg\nKEEP,1\n');
    const before = dumpDatabase(db);
    expect(() => run(db, 'id,mass_kg\nA,1\nB,2\nboom,3\n')).toThrow('internal failure');
    expect(dumpDatabase(db)).toEqual(before);
  });

  it('lists at most maxIssues issues and says how many more there were', () => {
    const db = freshDb();
    const text = `id,mass_kg\n${Array.from({ length: 30 }, (_, i) => `R${i},-1`).join('\n')}\n`;
    const r = run(db, text, { maxIssues: 5 });
    expect(r.rowsRejected).toBe(30);
    expect(r.issues).toHaveLength(6);
    expect(r.issues[4]).toEqual({
      file: 'toy.csv',
      line: 6,
      column: 'mass_kg',
      value: '-1',
      rule: 'must be a number ≥ 0 (kg)',
    });
    expect(r.issues[5]).toEqual({
      file: 'toy.csv',
      line: 0,
      column: null,
      value: null,
      rule: '25 further issues not listed (the first 5 are)',
    });
  });

  it('numbers lines right in a file of many chunks with quoted line breaks (about 3 MiB)', () => {
    const db = freshDb();
    const lines = ['id,mass_kg,note'];
    let physical = 1;
    let badLine = 0;
    for (let i = 0; i < 60_000; i++) {
      if (i === 59_000) {
        lines.push(`BAD${i},heavy,`);
        badLine = physical + 1;
        physical += 1;
      } else if (i % 97 === 0) {
        lines.push(`R${i},${i},"two\nlines ${'x'.repeat(20)}"`);
        physical += 2;
      } else {
        lines.push(`R${i},${i},${'y'.repeat(40)}`);
        physical += 1;
      }
    }
    const text = `${lines.join('\n')}\n`;
    expect(text.length).toBeGreaterThan(2 * (1 << 20));
    const r = run(db, text);
    expect(r.issues).toEqual([
      {
        file: 'toy.csv',
        line: badLine,
        column: 'mass_kg',
        value: 'heavy',
        rule: 'must be a number ≥ 0 (kg)',
      },
    ]);
    expect(r.rowsRead).toBe(60_000);
  });
});
