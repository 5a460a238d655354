import { describe, expect, it } from 'vitest';
import {
  CELL_FAIL,
  enumCell,
  enumListCell,
  idCell,
  isNumberText,
  NUMBER_TEXT,
  numberCell,
  numberRuleText,
  textCell,
  timeCell,
} from '../../../src/ingest/cells.ts';
import { COUNTER_COLUMNS } from '../../../src/ingest/kinds/counter-samples.ts';
import { isoClassCell, LOCATION_COLUMNS } from '../../../src/ingest/kinds/locations.ts';
import { parseZone, type Zone } from '../../../src/ingest/time.ts';
import type { Cell } from '../../../src/ingest/types.ts';

/** Hostile cells (Hono-style tables of malformed input) plus ordinary ones. */
const HOSTILE = [
  '',
  ' ',
  '0',
  '-0',
  '+0',
  '00',
  '007',
  '1',
  '-1',
  '1.',
  '.5',
  '-.5',
  '1.5',
  '1,5',
  '1e3',
  '1E-3',
  '1e',
  'e3',
  '1e+',
  '.',
  '+',
  '-',
  '--1',
  '1-',
  '0x10',
  '0b1',
  'Infinity',
  '-Infinity',
  'NaN',
  '1_000',
  '1 000',
  '１',
  '٣',
  '9'.repeat(400),
  '1e308',
  '1e309',
  '4.5',
  '9.0',
  '9.01',
  '0.99',
  '10',
  '2.25',
  '3.1',
  'ok',
  'OK',
  'flow',
  'flow|laser',
  'laser|flow',
  'flow|flow',
  'none',
  'None',
  'open room',
  'Open_Room',
  'open-room',
  'efem',
  'EFEM',
  'cleaned|activated',
  '|',
  'a b',
  'PC-01',
  'pc_01/a:b.c',
  '-x',
  'x'.repeat(65),
  '2026-03-02T08:00:00Z',
  '2026-03-02T08:00:00',
  '2026-02-30T00:00:00Z',
  '2026-03-02T08:00:00+01:00',
  '\u0000',
  '🙂',
  'at-rest',
  'operational',
];

/** Reproducible random strings from an alphabet that makes near-numbers likely (glibc LCG). */
function randomStrings(n: number): string[] {
  const alphabet = '0123456789.+-eE ,x|';
  let x = 42;
  const next = () => {
    x = (x * 1103515245 + 12345) % 2147483648;
    return x / 2147483648;
  };
  return Array.from({ length: n }, () => {
    const len = 1 + Math.floor(next() * 8);
    let s = '';
    for (let i = 0; i < len; i++) s += alphabet[Math.floor(next() * alphabet.length)];
    return s;
  });
}

/** The fast path never accepts what the zod schema refuses, and returns the same value when both accept. */
function expectAgreement(cell: Cell<unknown>, inputs: string[], exact: boolean) {
  for (const s of inputs) {
    const z = cell.schema.safeParse(s);
    const f = cell.fast ? cell.fast(s) : CELL_FAIL;
    if (f !== CELL_FAIL) {
      expect(z.success, `zod refuses "${s}" that the fast path accepts`).toBe(true);
      expect(f).toEqual(z.data);
    } else if (exact) {
      expect(z.success, `zod accepts "${s}" that the fast path refuses`).toBe(false);
    }
  }
}

const INPUTS = [...HOSTILE, ...randomStrings(5000)];
const berlin = parseZone('Europe/Berlin') as Zone;

describe('cell fast paths agree with their zod schemas (the source of truth)', () => {
  it('isNumberText is the same language as NUMBER_TEXT', () => {
    for (const s of INPUTS) expect(isNumberText(s), s).toBe(NUMBER_TEXT.test(s));
  });

  it.each([
    ['whole ≥ 0', { min: 0, integer: true }],
    ['> 0 L', { min: 0, minExclusive: true, unit: 'L' }],
    ['1 to 9', { min: 1, max: 9 }],
    ['any', {}],
    ['≤ 10', { max: 10 }],
  ])('numberCell %s', (_n, rule) => {
    expectAgreement(numberCell(rule) as Cell<unknown>, INPUTS, true);
  });

  it('enum, list, text, id, time and the kinds’ own cells', () => {
    const cells: Cell<unknown>[] = [
      enumCell(['open-room', 'efem']) as Cell<unknown>,
      enumListCell(['cleaned', 'activated']) as Cell<unknown>,
      textCell() as Cell<unknown>,
      idCell() as Cell<unknown>,
      timeCell(null) as Cell<unknown>,
      timeCell(berlin) as Cell<unknown>,
      isoClassCell() as Cell<unknown>,
      ...LOCATION_COLUMNS.map((c) => c.cell({ zone: null, units: new Map() })),
      ...COUNTER_COLUMNS.map((c) => c.cell({ zone: berlin, units: new Map() })),
    ];
    for (const c of cells) expectAgreement(c, INPUTS, true);
  });
});

describe('cell rules in words', () => {
  it('numbers', () => {
    expect(numberRuleText({ min: 0, integer: true })).toBe('must be a whole number ≥ 0');
    expect(numberRuleText({ min: 0, minExclusive: true, unit: 'L' })).toBe('must be a number > 0 (L)');
    expect(numberRuleText({ min: 1, max: 9 })).toBe('must be a number from 1 to 9');
    expect(numberRuleText({ min: 0, minExclusive: true, max: 10, unit: 'm/s' })).toBe(
      'must be a number > 0 and ≤ 10 (m/s)',
    );
    const r = numberCell({ min: 0, integer: true }).schema.safeParse('-3');
    expect(r.success).toBe(false);
    expect(r.error?.issues[0]?.message).toBe('must be a whole number ≥ 0');
    // 2^53 − 1 is the largest whole number a double holds exactly (IEEE 754 binary64); above it a
    // count would be stored as another number, so it is refused, by the schema and the fast path alike.
    const cell = numberCell({ min: 0, integer: true });
    expect(cell.schema.safeParse('9007199254740991').data).toBe(9007199254740991);
    expect(cell.fast?.('9007199254740991')).toBe(9007199254740991);
    for (const big of ['9007199254740993', '9007199254740992', '1e300', '18446744073709551616']) {
      const b = cell.schema.safeParse(big);
      expect(b.success, big).toBe(false);
      expect(b.error?.issues[0]?.message, big).toBe(
        'must be at most 9007199254740991 (2^53 − 1, the largest whole number stored exactly)',
      );
      expect(cell.fast?.(big), big).toBe(CELL_FAIL);
    }
  });

  it('ISO class (ISO 14644-1:2015: N from 1 to 9 in steps of 0.1)', () => {
    const c = isoClassCell();
    expect(c.schema.safeParse('4.5').data).toBe(4.5);
    expect(c.schema.safeParse('1').data).toBe(1);
    for (const bad of ['0', '9.5', '10', '4.55', '1e0', 'five']) {
      expect(c.schema.safeParse(bad).error?.issues[0]?.message).toBe(
        'must be an ISO 14644-1 class from 1 to 9 in steps of 0.1 (e.g. 4 or 4.5)',
      );
    }
  });

  it('enums normalise case, spaces and underscores', () => {
    const c = enumCell(['open-room', 'mini-environment']);
    expect(c.fast!('Open Room')).toBe('open-room');
    expect(c.fast!('MINI_environment')).toBe('mini-environment');
    expect(c.schema.safeParse('cleanroom').error?.issues[0]?.message).toBe(
      'must be one of open-room, mini-environment',
    );
  });
});
