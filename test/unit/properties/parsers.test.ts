/**
 * Property-based tests of the parsers (issue 14), with fast-check: on at least 10,000 generated
 * inputs each, a parser never crashes, never lets NaN out, and answers every invalid input with its
 * own clear error. The oracles are independent of the code under test: the JavaScript engine's own
 * JSON.parse (ECMA-262 §25.5.1) for the JSON reader, the documented regular expression for number
 * text, and the zod schema for each cell's hand-written fast path. Seeds are fixed so that a failure
 * reproduces.
 */
import { join } from 'node:path';
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { CELL_FAIL, isNumberText, NUMBER_TEXT, numberCell } from '../../../src/ingest/cells.ts';
import { getKind } from '../../../src/ingest/kinds/index.ts';
import {
  FORBIDDEN_JSON_KEYS,
  JsonSyntaxError,
  parseJsonSource,
} from '../../../src/ingest/kinds/json-source.ts';
import { importFile, importSource, sha256Text } from '../../../src/ingest/pipeline.ts';
import { parseIsoTime } from '../../../src/ingest/time.ts';
import { migrate, openDatabase } from '../../../src/store/db.ts';

const RUNS = 10_000;
const opts = (seed: number, numRuns = RUNS) => ({ seed, numRuns });

function hasForbiddenKey(v: unknown): boolean {
  if (Array.isArray(v)) return v.some(hasForbiddenKey);
  if (v !== null && typeof v === 'object')
    return Object.keys(v).some(
      (k) => FORBIDDEN_JSON_KEYS.has(k) || hasForbiddenKey((v as Record<string, unknown>)[k]),
    );
  return false;
}

/** Text that is JSON with high probability, and near-JSON otherwise (a character changed or cut). */
const jsonish = fc.oneof(
  fc.jsonValue({ maxDepth: 6 }).map((v) => JSON.stringify(v, null, 1)),
  fc
    .tuple(
      fc.jsonValue({ maxDepth: 4 }).map((v) => JSON.stringify(v)),
      fc.nat(),
      fc.constantFrom('', ',', '}', ']', '"', '\\', '\n', '/', 'x'),
    )
    .map(([t, i, c]) => {
      const k = t.length === 0 ? 0 : i % t.length;
      return t.slice(0, k) + c + t.slice(k + 1);
    }),
  fc.string({ unit: 'binary', maxLength: 60 }),
);

describe('the JSON reader', () => {
  it('agrees with JSON.parse, or refuses with a JsonSyntaxError naming a line and column — never another error', () => {
    fc.assert(
      fc.property(jsonish, (text) => {
        let ours: unknown;
        let refused: JsonSyntaxError | null = null;
        try {
          ours = parseJsonSource(text).value;
        } catch (e) {
          if (!(e instanceof JsonSyntaxError)) throw e;
          refused = e;
        }
        let reference: unknown;
        let referenceFails = false;
        try {
          reference = JSON.parse(text.charCodeAt(0) === 0xfeff ? text.slice(1) : text);
        } catch {
          referenceFails = true;
        }
        if (refused) {
          expect(refused.line).toBeGreaterThanOrEqual(1);
          expect(refused.line).toBeLessThanOrEqual(text.split('\n').length);
          // The column lies on that line (1 past its end for "the file ends here"); a byte-order
          // mark is not counted.
          const body = text.charCodeAt(0) === 0xfeff ? text.slice(1) : text;
          const lineText = body.split('\n')[refused.line - 1] ?? '';
          expect(refused.column).toBeGreaterThanOrEqual(1);
          expect(refused.column).toBeLessThanOrEqual(lineText.length + 1);
          expect(refused.rule.length).toBeGreaterThan(0);
          return;
        }
        // Accepted: it is JSON, with no key twice and no prototype key, and means what JSON.parse means.
        expect(referenceFails).toBe(false);
        expect(hasForbiddenKey(reference)).toBe(false);
        expect(ours).toEqual(reference);
      }),
      opts(14_001),
    );
  });

  it('refuses every prototype key, wherever it is nested', () => {
    fc.assert(
      fc.property(fc.constantFrom(...FORBIDDEN_JSON_KEYS), fc.nat({ max: 20 }), (key, depth) => {
        const text = `${'{"a":['.repeat(depth)}{${JSON.stringify(key)}:1}${']}'.repeat(depth)}`;
        expect(() => parseJsonSource(text)).toThrow(JsonSyntaxError);
      }),
      opts(14_002, 1000),
    );
  });
});

describe('number cells', () => {
  const numberish = fc.oneof(
    fc.double().map(String),
    fc.bigInt({ min: -(2n ** 70n), max: 2n ** 70n }).map(String),
    fc.stringMatching(/^[+-]?\d{0,20}(\.\d{0,6})?([eE][+-]?\d{1,3})?$/),
    fc.string({
      unit: fc.constantFrom('0', '1', '9', '.', 'e', 'E', '+', '-', ' ', 'x', ','),
      maxLength: 12,
    }),
  );

  it('the fast path agrees with the schema, and no value out is NaN or unsafe for a count', () => {
    const cells = [
      numberCell({ min: 0, integer: true }),
      numberCell({ min: 0, minExclusive: true, unit: 'L' }),
      numberCell({ min: -5, max: 5 }),
    ];
    fc.assert(
      fc.property(numberish, (s) => {
        for (const [i, cell] of cells.entries()) {
          const slow = cell.schema.safeParse(s);
          const fast = cell.fast ? cell.fast(s) : CELL_FAIL;
          if (slow.success) {
            expect(Number.isFinite(slow.data)).toBe(true);
            if (i === 0) expect(Number.isSafeInteger(slow.data)).toBe(true);
            expect(fast === CELL_FAIL || fast === slow.data).toBe(true);
          } else {
            expect(fast).toBe(CELL_FAIL);
            expect(slow.error.issues[0]?.message).toMatch(/^must be /);
          }
        }
      }),
      opts(14_003),
    );
  });

  it('isNumberText is exactly the documented expression', () => {
    fc.assert(
      fc.property(numberish, (s) => {
        expect(isNumberText(s)).toBe(NUMBER_TEXT.test(s));
      }),
      opts(14_004),
    );
  });
});

describe('times', () => {
  it('an ISO 8601 time is read to a finite instant or refused with a reason — never NaN, never a crash', () => {
    const timeish = fc.oneof(
      fc.date({ min: new Date(-1e14), max: new Date(1e14), noInvalidDate: true }).map((d) => d.toISOString()),
      fc.stringMatching(/^\d{4}-\d{2}-\d{2}([T ]\d{2}:\d{2}(:\d{2}(\.\d{1,9})?)?)?(Z|[+-]\d{2}:?\d{2})?$/),
      fc.string({ maxLength: 40 }),
    );
    fc.assert(
      fc.property(timeish, (s) => {
        const r = parseIsoTime(s, null);
        if (r.ok) expect(Number.isFinite(r.ms)).toBe(true);
        else expect(String((r as { rule?: unknown }).rule ?? '').length).toBeGreaterThan(0);
      }),
      opts(14_005),
    );
  });
});

describe('a whole counter log through the import pipeline', () => {
  it('every generated file is imported, partly imported or rejected with issues — never a crash or NaN stored', async () => {
    const db = openDatabase(':memory:');
    migrate(db);
    const locations = join(import.meta.dirname, '../../fixtures/good/locations-line.csv');
    expect((await importFile(db, { kind: 'locations', path: locations })).status).toBe('imported');
    const kind = getKind('counter-samples')!;
    const cell = fc.oneof(
      fc.nat({ max: 5000 }).map(String),
      fc.constantFrom('', '-1', 'n/a', '1e400', '9007199254740993', '2.5', ' 7 '),
    );
    const time = fc.oneof(
      fc
        .integer({ min: 0, max: 10_000 })
        .map((m) => new Date(Date.UTC(2026, 0, 1) + m * 60_000).toISOString()),
      fc.constantFrom('2026-02-30T00:00:00Z', 'yesterday', '', '2026-01-01T00:00:00'),
    );
    const row = fc
      .tuple(
        fc.constantFrom('BAY-BOND', 'NOWHERE'),
        time,
        fc.constantFrom('60', '0', '-1', 'x'),
        fc.constantFrom('28.3', '0', ''),
        cell,
        cell,
      )
      .map(([loc, t, d, v, a, b]) => `PC-1,${loc},${t},${d},${v},${a},${b}`);
    const file = fc
      .tuple(
        fc.constantFrom('# units: counts=raw\n', '# units: counts=per_m3\n', ''),
        fc.array(row, { maxLength: 6 }),
        fc.boolean(),
      )
      .map(([meta, rows, crlf]) =>
        `${meta}counter_id,location_id,start,duration_s,volume_L,ge_0.3um,ge_0.5um\n${rows.join('\n')}\n`.replace(
          /\n/g,
          crlf ? '\r\n' : '\n',
        ),
      );
    let n = 0;
    fc.assert(
      fc.property(file, fc.boolean(), (text, acceptValidRows) => {
        n++;
        const bytes = Buffer.from(text);
        let pos = 0;
        const r = importSource(db, kind, {
          displayName: `generated-${n}.csv`,
          sha256: sha256Text(bytes),
          bytes: bytes.length,
          acceptValidRows,
          open: () => ({
            size: bytes.length,
            read: (buf: Buffer) => {
              const k = bytes.copy(buf, 0, pos);
              pos += k;
              return k;
            },
            close: () => {},
          }),
        });
        expect(['imported', 'partial', 'rejected', 'unchanged']).toContain(r.status);
        expect(r.rowsStored).toBeLessThanOrEqual(r.rowsRead);
        if (r.status === 'rejected') {
          expect(r.rowsStored).toBe(0);
          expect(r.issues.length).toBeGreaterThan(0);
          for (const i of r.issues) expect(i.rule.length).toBeGreaterThan(0);
        }
      }),
      opts(14_006),
    );
    const bad = db
      .prepare(
        'SELECT COUNT(*) AS n FROM counter_samples WHERE volume_m3 != volume_m3 OR start_ms != start_ms',
      )
      .get() as { n: number };
    expect(bad.n).toBe(0);
    db.close();
  }, 120_000);
});
