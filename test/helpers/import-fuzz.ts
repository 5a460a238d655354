/**
 * Generators and checks for the property tests of the import kinds (issue 14): files that are valid
 * with good probability (a good example file of test/fixtures/good, unchanged or with numbers
 * nudged) and near-valid otherwise (a cell replaced, a column dropped, a unit, number or time
 * mangled, a line cut, deleted or repeated, a metadata line changed, binary junk inserted). Every
 * generator is a fast-check arbitrary of the file's bytes, so a failure shrinks and reproduces from
 * its seed.
 */
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import fc from 'fast-check';
import { expect } from 'vitest';
import type { ByteSource } from '../../src/ingest/csv.ts';
import { getKind } from '../../src/ingest/kinds/index.ts';
import { parseProductFile } from '../../src/ingest/kinds/products.ts';
import { parseToolsFile } from '../../src/ingest/kinds/tools.ts';
import { importFile, importSource, readCsvSource, sha256Text } from '../../src/ingest/pipeline.ts';
import type { ImportKind, ImportKindName, KindIssue } from '../../src/ingest/types.ts';
import { type Db, migrate, openDatabase } from '../../src/store/db.ts';
import { dumpDatabase } from './db-dump.ts';

const GOOD = fileURLToPath(new URL('../fixtures/good/', import.meta.url));

export function goodFixture(name: string): string {
  return readFileSync(join(GOOD, name), 'utf8');
}

/** The good example files of each kind (the bases the generators start from). */
export const KIND_BASES: Record<ImportKindName, string[]> = {
  locations: ['locations-line.csv', 'locations-quoted.csv', 'locations-for-ledger.csv'],
  'counter-samples': [
    'counter-samples-bay.csv',
    'counter-samples-differential-zone.csv',
    'counter-samples-semicolon-decimal-comma.csv',
  ],
  products: ['products-hybrid-300.json'],
  tools: ['tools-line.json'],
  scans: ['scans-one-wafer.csv', 'scans-batch.csv'],
  ledger: ['ledger-lot.csv'],
  pairs: ['pairs-lot.csv'],
  'void-inspections': ['void-inspections-pair.csv'],
};

/**
 * A database holding everything the good files refer to (tools, products, locations of both
 * examples, scans, the ledger, the pair), so that a valid generated file of any kind can be stored.
 */
export async function referenceDb(): Promise<Db> {
  const db = openDatabase(':memory:');
  migrate(db);
  const files: [ImportKindName, string][] = [
    ['tools', 'tools-line.json'],
    ['products', 'products-hybrid-300.json'],
    ['locations', 'locations-for-ledger.csv'],
    ['locations', 'locations-line.csv'],
    ['scans', 'scans-one-wafer.csv'],
    ['scans', 'scans-batch.csv'],
    ['ledger', 'ledger-lot.csv'],
    ['pairs', 'pairs-lot.csv'],
  ];
  for (const [kind, name] of files) {
    const r = await importFile(db, { kind, path: join(GOOD, name) });
    if (r.status !== 'imported')
      throw new Error(`set-up import of ${name} is ${r.status}: ${JSON.stringify(r.issues)}`);
  }
  return db;
}

/** A byte source over a buffer (what importSource reads). */
export function bufferBytes(bytes: Buffer): ByteSource {
  let pos = 0;
  return {
    size: bytes.length,
    read: (buf: Buffer) => {
      const k = bytes.copy(buf, 0, pos);
      pos += k;
      return k;
    },
    close: () => {},
  };
}

/** Cell texts that break a rule somewhere: empty, non-finite, out of range, unsafe counts, junk. */
export const BAD_CELLS = [
  '',
  ' ',
  'NaN',
  'Infinity',
  '-Infinity',
  '1e400',
  '-1e400',
  '1e-400',
  '-0',
  '0',
  '-1',
  '9007199254740993',
  '1e15',
  '2.5',
  '1,5',
  'x',
  '"',
  '""',
  '"a,b"',
  '1e',
  '.',
  '+',
  '٣',
  'null',
  '0x10',
  '\u0000',
  '１２',
  'A'.repeat(3000),
  '2026-02-30T00:00:00Z',
];

const BAD_TIMES = [
  '2026-02-30T00:00:00Z',
  '2026-13-01T00:00:00Z',
  '2026-01-01T25:00:00Z',
  '2026-01-01T00:00:00',
  '2026-01-01T00:00:00+25:00',
  '9999-12-31T23:59:59Z',
  '0000-01-01T00:00:00Z',
  '275760-09-13T00:00:01Z',
  'yesterday',
  '1e400',
  '',
];

const UNIT_WORDS = [
  'nm',
  'mm',
  'um',
  'µm',
  'L',
  'ft3',
  'm3',
  'per_m3',
  'per_ft3',
  'raw',
  's',
  'min',
  'furlong',
  '%',
  '',
];

const METADATA_JUNK = [
  '# zone: Mars/Olympus',
  '# zone: +99:00',
  '# delimiter: |',
  '# decimal: ,',
  '# decimal: ;',
  '# units: counts=per_parsec',
  '# units: volume=furlong',
  '# format: voidcast scans 99',
  '# format: something else 1',
  '# coordinates: origin=left x=up y=up view=side',
  '# notch_deg: 400',
  '# notch_deg: NaN',
  '# wafer_diameter_mm: 0',
  '# wafer_diameter_mm: 1e400',
  '# threshold_nm: -5',
  '# rated_max: 1e400 per_ft3',
  '# smallest_void_mm: NaN',
  '# edge_exclusion_mm: 200',
  '#',
  '# : :',
];

const NUMBER_RE = /(?<![\w.])-?\d+(?:\.\d+)?(?![\w.])/g;
const TIME_RE = /\d{4}-\d{2}-\d{2}[T ]\d{2}:\d{2}(?::\d{2}(?:\.\d+)?)?(?:Z|[+-]\d{2}:?\d{2})?/g;
const UNIT_RE = /(?<=[_ =(])(?:um|µm|nm|mm|L|ft3|m3|per_m3|per_ft3|raw|s|min|deg)(?![A-Za-z0-9])/g;

/** The index-th match of a regular expression in a text (modulo the number of matches), or null. */
function nthMatch(text: string, re: RegExp, index: number): RegExpExecArray | null {
  const all = [...text.matchAll(re)];
  if (all.length === 0) return null;
  return all[index % all.length] as RegExpExecArray;
}

function replaceAt(text: string, m: RegExpExecArray | null, by: string): string {
  if (!m) return text;
  return text.slice(0, m.index) + by + text.slice(m.index + m[0].length);
}

/** A number nudged by a factor, written with the same number of decimals (usually still valid). */
function nudge(written: string, factor: number): string {
  const dot = written.indexOf('.');
  const decimals = dot === -1 ? 0 : written.length - dot - 1;
  return (Number(written) * factor).toFixed(decimals);
}

function delimiterOf(header: string): string {
  if (header.includes('\t')) return '\t';
  return header.split(';').length > header.split(',').length ? ';' : ',';
}

type Mutation = (text: string) => string;

/** One text mutation of a CSV file; the picks come from fast-check so that they shrink. */
const csvMutation: fc.Arbitrary<Mutation> = fc.oneof(
  // Nudge a number (the file usually stays valid).
  fc.tuple(fc.nat(), fc.double({ min: 0.5, max: 1.5, noNaN: true })).map(
    ([i, f]): Mutation =>
      (t) => {
        const m = nthMatch(t, NUMBER_RE, i);
        return m ? replaceAt(t, m, nudge(m[0], f)) : t;
      },
  ),
  // Replace a number by a bad cell.
  fc.tuple(fc.nat(), fc.constantFrom(...BAD_CELLS)).map(
    ([i, c]): Mutation =>
      (t) =>
        replaceAt(t, nthMatch(t, NUMBER_RE, i), c),
  ),
  // Replace one cell of one data row.
  fc.tuple(fc.nat(), fc.nat(), fc.constantFrom(...BAD_CELLS)).map(
    ([r, k, c]): Mutation =>
      (t) => {
        const lines = t.split('\n');
        const data = lines.map((l, i) => [l, i] as const).filter(([l]) => l !== '' && !l.startsWith('#'));
        if (data.length < 2) return t;
        const [line, at] = data[1 + (r % (data.length - 1))]!;
        const d = delimiterOf(data[0]![0]);
        const cells = line.split(d);
        cells[k % cells.length] = c;
        lines[at] = cells.join(d);
        return lines.join('\n');
      },
  ),
  // Drop a column from the header and every row, or from one row only.
  fc.tuple(fc.nat(), fc.boolean(), fc.nat()).map(
    ([k, everywhere, r]): Mutation =>
      (t) => {
        const lines = t.split('\n');
        const data = lines.map((l, i) => [l, i] as const).filter(([l]) => l !== '' && !l.startsWith('#'));
        if (data.length === 0) return t;
        const d = delimiterOf(data[0]![0]);
        const targets = everywhere ? data : [data[r % data.length]!];
        for (const [line, at] of targets) {
          const cells = line.split(d);
          cells.splice(k % cells.length, 1);
          lines[at] = cells.join(d);
        }
        return lines.join('\n');
      },
  ),
  // Mangle a unit in the header or the metadata.
  fc.tuple(fc.nat(), fc.constantFrom(...UNIT_WORDS)).map(
    ([i, u]): Mutation =>
      (t) =>
        replaceAt(t, nthMatch(t, UNIT_RE, i), u),
  ),
  // Mangle a time.
  fc.tuple(fc.nat(), fc.constantFrom(...BAD_TIMES)).map(
    ([i, v]): Mutation =>
      (t) =>
        replaceAt(t, nthMatch(t, TIME_RE, i), v),
  ),
  // Cut the file at a character (often mid-line).
  fc.nat().map(
    (i): Mutation =>
      (t) =>
        t.slice(0, t.length === 0 ? 0 : i % t.length),
  ),
  // Delete or repeat a line.
  fc.tuple(fc.nat(), fc.boolean()).map(
    ([i, repeat]): Mutation =>
      (t) => {
        const lines = t.split('\n');
        const k = i % lines.length;
        if (repeat) lines.splice(k, 0, lines[k]!);
        else lines.splice(k, 1);
        return lines.join('\n');
      },
  ),
  // A metadata line added in front (or replacing the first line).
  fc.tuple(fc.constantFrom(...METADATA_JUNK), fc.boolean()).map(
    ([m, replace]): Mutation =>
      (t) => {
        const lines = t.split('\n');
        if (replace) lines[0] = m;
        else lines.unshift(m);
        return lines.join('\n');
      },
  ),
  // Another delimiter, or CRLF line ends.
  fc.constantFrom<Mutation>(
    (t) => t.replaceAll(',', ';'),
    (t) => t.replaceAll(',', '\t'),
    (t) => t.replaceAll('\n', '\r\n'),
    (t) => t.replaceAll('"', ''),
  ),
);

/** Bytes of junk (often invalid UTF-8) spliced into a file, or a file that is junk only. */
function withJunk(base: fc.Arbitrary<Buffer>): fc.Arbitrary<Buffer> {
  return fc.oneof(
    { weight: 8, arbitrary: base },
    {
      weight: 1,
      arbitrary: fc
        .tuple(base, fc.nat(), fc.uint8Array({ minLength: 1, maxLength: 16 }))
        .map(([b, i, junk]) => {
          const k = b.length === 0 ? 0 : i % b.length;
          return Buffer.concat([b.subarray(0, k), Buffer.from(junk), b.subarray(k)]);
        }),
    },
    { weight: 1, arbitrary: fc.uint8Array({ maxLength: 200 }).map((a) => Buffer.from(a)) },
  );
}

/** CSV files of a kind: a good file, unchanged (weight 2) or with one to three mutations. */
export function csvFiles(bases: readonly string[]): fc.Arbitrary<Buffer> {
  const texts = bases.map(goodFixture);
  const text = fc
    .tuple(
      fc.constantFrom(...texts),
      fc.oneof(
        { weight: 2, arbitrary: fc.constant([] as Mutation[]) },
        { weight: 5, arbitrary: fc.array(csvMutation, { minLength: 1, maxLength: 3 }) },
      ),
    )
    .map(([t, ms]) => ms.reduce((acc, m) => m(acc), t));
  return withJunk(text.map((t) => Buffer.from(t, 'utf8')));
}

type Json = null | boolean | number | string | Json[] | { [k: string]: Json };

/** Paths of every value inside a JSON value (objects and arrays included), root excluded. */
function valuePaths(
  v: Json,
  prefix: (string | number)[] = [],
  out: (string | number)[][] = [],
): (string | number)[][] {
  if (Array.isArray(v))
    v.forEach((x, i) => {
      out.push([...prefix, i]);
      valuePaths(x, [...prefix, i], out);
    });
  else if (v !== null && typeof v === 'object')
    for (const [k, x] of Object.entries(v)) {
      out.push([...prefix, k]);
      valuePaths(x, [...prefix, k], out);
    }
  return out;
}

function edit(
  root: Json,
  path: (string | number)[],
  f: (parent: Json[] | Record<string, Json>, key: string | number) => void,
): Json {
  const copy = structuredClone(root);
  let parent = copy as Json;
  for (const k of path.slice(0, -1)) parent = (parent as Record<string, Json>)[k as string] as Json;
  f(parent as Record<string, Json>, path[path.length - 1]!);
  return copy;
}

const BAD_JSON_VALUES: Json[] = [
  -1,
  0,
  -0.5,
  1e308,
  5e-324,
  2 ** 53 + 2,
  1e21,
  '',
  '12',
  'x',
  null,
  true,
  [],
  {},
  [1, 2],
];

/** One structural mutation of a JSON value. */
const jsonMutation: fc.Arbitrary<(v: Json) => Json> = fc.oneof(
  // Nudge a number (usually still valid).
  fc.tuple(fc.nat(), fc.double({ min: 0.5, max: 1.5, noNaN: true })).map(([i, f]) => (v: Json) => {
    const nums = valuePaths(v).filter(
      (p) =>
        typeof p.reduce<Json>((o, k) => (o as Record<string, Json>)[k as string] as Json, v) === 'number',
    );
    if (nums.length === 0) return v;
    return edit(v, nums[i % nums.length]!, (o, k) => {
      const x = (o as Record<string, Json>)[k as string] as number;
      (o as Record<string, Json>)[k as string] = Number.isInteger(x) ? Math.round(x * f) : x * f;
    });
  }),
  // Replace any value.
  fc.tuple(fc.nat(), fc.constantFrom(...BAD_JSON_VALUES)).map(([i, bad]) => (v: Json) => {
    const paths = valuePaths(v);
    if (paths.length === 0) return v;
    return edit(v, paths[i % paths.length]!, (o, k) => {
      (o as Record<string, Json>)[k as string] = structuredClone(bad);
    });
  }),
  // Delete a key or an array element.
  fc.nat().map((i) => (v: Json) => {
    const paths = valuePaths(v);
    if (paths.length === 0) return v;
    return edit(v, paths[i % paths.length]!, (o, k) => {
      if (Array.isArray(o)) o.splice(k as number, 1);
      else delete o[k as string];
    });
  }),
  // Add an unknown key to an object.
  fc
    .tuple(fc.nat(), fc.constantFrom('extra', 'diameterMM', 'thickness_um', ''))
    .map(([i, key]) => (v: Json) => {
      const objs = [[], ...valuePaths(v)].filter((p) => {
        const x = p.reduce<Json>((o, k) => (o as Record<string, Json>)[k as string] as Json, v);
        return x !== null && typeof x === 'object' && !Array.isArray(x);
      });
      const p = objs[i % objs.length]!;
      return edit(v, [...p, key], (o, k) => {
        (o as Record<string, Json>)[k as string] = 1;
      });
    }),
);

/** Text-level mutations of a JSON file (after the structural ones). */
const jsonTextMutation: fc.Arbitrary<Mutation> = fc.oneof(
  fc
    .tuple(fc.nat(), fc.constantFrom('1e400', '-1e400', '1E999', 'NaN', 'Infinity', '01', '1.', '-', '"x"'))
    .map(
      ([i, c]): Mutation =>
        (t) =>
          replaceAt(t, nthMatch(t, NUMBER_RE, i), c),
    ),
  fc.nat().map(
    (i): Mutation =>
      (t) =>
        t.slice(0, t.length === 0 ? 0 : i % t.length),
  ),
  fc
    .tuple(
      fc.nat(),
      fc.constantFrom(',', '}', ']', '"', '\\', '\n', '/', '//', ' "__proto__": {},', '"a": 1,'),
    )
    .map(
      ([i, c]): Mutation =>
        (t) => {
          const k = t.length === 0 ? 0 : i % t.length;
          return t.slice(0, k) + c + t.slice(k + 1);
        },
    ),
  fc.constantFrom<Mutation>(
    (t) => t.replace(/\n\s*([}\]])/, ',\n$1'),
    (t) => t.replace('{', '{ "constructor": 1, '),
    (t) => `${'['.repeat(200)}${t}${']'.repeat(200)}`,
    (t) => t.replaceAll('\n', '\r\n'),
  ),
);

/** JSON files of a kind: the good file, unchanged or with structural and text mutations. */
export function jsonFiles(bases: readonly string[]): fc.Arbitrary<Buffer> {
  const values = bases.map((b) => JSON.parse(goodFixture(b)) as Json);
  const text = fc
    .tuple(
      fc.constantFrom(...values),
      fc.array(jsonMutation, { maxLength: 3 }),
      fc.oneof(
        { weight: 3, arbitrary: fc.constant([] as Mutation[]) },
        { weight: 2, arbitrary: fc.array(jsonTextMutation, { minLength: 1, maxLength: 2 }) },
      ),
      fc.constantFrom(0, 2),
    )
    .map(([v, ms, ts, indent]) =>
      ts.reduce(
        (acc, m) => m(acc),
        JSON.stringify(
          ms.reduce((acc, m) => m(acc), v),
          null,
          indent,
        ),
      ),
    );
  return withJunk(text.map((t) => Buffer.from(t, 'utf8')));
}

/** Files of a kind, by its format. */
export function kindFiles(kind: ImportKindName): fc.Arbitrary<Buffer> {
  const bases = KIND_BASES[kind];
  return bases[0]!.endsWith('.json') ? jsonFiles(bases) : csvFiles(bases);
}

/** Every number inside a value (parsed rows, normalised definitions), for the "no NaN out" check. */
export function numbersIn(v: unknown, out: number[] = []): number[] {
  if (typeof v === 'number') out.push(v);
  else if (Array.isArray(v)) for (const x of v) numbersIn(x, out);
  else if (v instanceof Map) for (const x of v.values()) numbersIn(x, out);
  else if (v !== null && typeof v === 'object') for (const x of Object.values(v)) numbersIn(x, out);
  return out;
}

/** Cells of every table that hold a non-finite REAL (SQLite stores ±Infinity as such; NaN as NULL). */
export function nonFiniteCells(db: Db): string[] {
  const out: string[] = [];
  const tables = db
    .prepare("SELECT name FROM sqlite_master WHERE type = 'table' AND name NOT LIKE 'sqlite_%'")
    .pluck()
    .all() as string[];
  for (const t of tables) {
    const cols = (db.prepare(`PRAGMA table_info("${t}")`).all() as { name: string }[]).map((c) => c.name);
    for (const c of cols) {
      const n = db
        .prepare(
          `SELECT count(*) FROM "${t}" WHERE typeof("${c}") = 'real' AND ("${c}" > 1.7976931348623157e308 OR "${c}" < -1.7976931348623157e308)`,
        )
        .pluck()
        .get() as number;
      if (n > 0) out.push(`${t}.${c}: ${n}`);
    }
  }
  return out;
}

/** Checks shared by both levels: an issue names a line (0 = the file as a whole) and a rule in words. */
export function expectClearIssue(i: { line: number; column: string | null; rule: string }): void {
  expect(Number.isInteger(i.line) && i.line >= 0).toBe(true);
  expect(i.column === null || typeof i.column === 'string').toBe(true);
  expect(typeof i.rule).toBe('string');
  expect(i.rule.trim().length).toBeGreaterThan(0);
  // No stack trace, no engine error name, no NaN or undefined that code wrote into the words (a
  // quoted "NaN" is the file's own text, shown back).
  expect(i.rule).not.toMatch(/\n\s+at |TypeError|RangeError|ReferenceError|(?<!")\b(?:undefined|NaN)\b(?!")/);
}

/** The database-free reading of one generated file of a kind: what it found, for the checks. */
export function readWithoutDb(kind: ImportKind, bytes: Buffer): { issues: KindIssue[]; values: unknown[] } {
  if (kind.config) {
    let text: string;
    try {
      text = new TextDecoder('utf-8', { fatal: true }).decode(bytes);
    } catch {
      return { issues: [{ line: 0, column: null, value: null, rule: 'not UTF-8' }], values: [] };
    }
    if (text.charCodeAt(0) === 0xfeff) text = text.slice(1);
    const r = kind.name === 'products' ? parseProductFile(text) : parseToolsFile(text);
    return 'issues' in r ? { issues: r.issues, values: [] } : { issues: [], values: [r.value] };
  }
  const r = readCsvSource(kind, bufferBytes(bytes));
  return { issues: r.issues, values: r.rows };
}

/** Generated cases per kind at each level (issue 14 asks for at least 10,000 per parser). */
export const READ_RUNS = 10_000;
export const IMPORT_RUNS = 300;

/**
 * The two properties of one kind. (1) READ_RUNS generated files through the kind's database-free
 * reader (readCsvSource, or the JSON kinds' parse-validate-normalise): never an exception, every
 * refusal a clear issue, no NaN or infinity in what comes out. (2) IMPORT_RUNS generated files
 * through the whole import (importSource into an in-memory database holding everything the good
 * files refer to): a report of a known status, never an exception; a rejected file leaves every
 * table as it was; no non-finite number stored. Returns the counts for the report of the run.
 */
export function kindProperties(
  kindName: ImportKindName,
  seed: number,
): { read: () => { cases: number; refused: number }; imports: () => Promise<Record<string, number>> } {
  const kind = getKind(kindName);
  if (!kind) throw new Error(`no import kind ${kindName}`);
  const files = kindFiles(kindName);
  return {
    read: () => {
      let cases = 0;
      let refused = 0;
      fc.assert(
        fc.property(files, (bytes) => {
          cases++;
          const r = readWithoutDb(kind, bytes);
          if (r.issues.length > 0) refused++;
          for (const i of r.issues) expectClearIssue(i);
          for (const x of numbersIn(r.values)) expect(Number.isFinite(x)).toBe(true);
        }),
        { seed, numRuns: READ_RUNS },
      );
      return { cases, refused };
    },
    imports: async () => {
      const db = await referenceDb();
      const statuses: Record<string, number> = {};
      let n = 0;
      try {
        fc.assert(
          fc.property(files, fc.boolean(), (bytes, acceptValidRows) => {
            n++;
            const before = dumpDatabase(db);
            const r = importSource(db, kind, {
              displayName: `generated-${n}`,
              sha256: sha256Text(bytes),
              bytes: bytes.length,
              acceptValidRows,
              open: () => bufferBytes(bytes),
            });
            statuses[r.status] = (statuses[r.status] ?? 0) + 1;
            expect(['imported', 'partial', 'rejected', 'unchanged']).toContain(r.status);
            expect(r.rowsStored).toBeLessThanOrEqual(r.rowsRead);
            for (const i of r.issues) {
              expect(i.file).toBe(`generated-${n}`);
              expectClearIssue(i);
            }
            if (r.status === 'rejected' || r.status === 'unchanged') {
              if (r.status === 'rejected') expect(r.issues.length).toBeGreaterThan(0);
              expect(r.rowsStored).toBe(0);
              expect(dumpDatabase(db)).toEqual(before);
            }
          }),
          { seed: seed + 1, numRuns: IMPORT_RUNS },
        );
        expect(nonFiniteCells(db)).toEqual([]);
        expect(db.pragma('integrity_check', { simple: true })).toBe('ok');
      } finally {
        db.close();
      }
      return statuses;
    },
  };
}
