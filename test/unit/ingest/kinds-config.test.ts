/**
 * The JSON configuration kinds (products, tools): the line-numbering JSON reader, the schemas'
 * rules and the normalisation to SI and to the engine's input shapes.
 */

import { readFileSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';
import type { CleanInput, ProductInput } from '../../../src/engine/types.ts';
import { MAX_JSON_DEPTH, parseJsonSource } from '../../../src/ingest/kinds/json-source.ts';
import { parseProductFile } from '../../../src/ingest/kinds/products.ts';
import { parseToolsFile } from '../../../src/ingest/kinds/tools.ts';
import { removalEfficiency } from '../../../src/model/clean.ts';

const fixture = (p: string) =>
  readFileSync(fileURLToPath(new URL(`../../fixtures/${p}`, import.meta.url)), 'utf8');
// biome-ignore lint/suspicious/noExplicitAny: the tests mutate fixtures as plain JSON values
type J = any;
const PRODUCT = JSON.parse(fixture('good/products-hybrid-300.json'));
const TOOLS = JSON.parse(fixture('good/tools-line.json'));

function product(mut: (p: J) => void) {
  const p = structuredClone(PRODUCT);
  mut(p);
  return parseProductFile(JSON.stringify(p, null, 2));
}

describe('parseJsonSource (RFC 8259 with line numbers)', () => {
  it('returns what JSON.parse returns, for nested and escaped values', () => {
    const texts = [
      '{"a": [1, -2.5e3, true, false, null], "b": {"c": "x\\"y\\\\z\\u00e9\\n"}, "": {}}',
      '[]',
      '"<script>&amp;"',
      '  0.125  ',
    ];
    for (const t of texts) expect(parseJsonSource(t).value).toEqual(JSON.parse(t));
  });

  it('records the line each value starts on, by path', () => {
    const src = parseJsonSource('{\n  "a": {\n    "b": [\n      1,\n      {"c": 2}\n    ]\n  }\n}');
    expect(src.lines.get('a')).toBe(2);
    expect(src.lines.get('a.b')).toBe(3);
    expect(src.lines.get('a.b[1].c')).toBe(5);
    expect(src.texts.get('a.b[0]')).toBe('1');
  });

  // Lines and columns are hand computation: 1-based, the column counting characters from the start
  // of the line (for a string problem, its opening quote; for a key, the key's opening quote).
  const PROTO = "is not allowed (it names an object's prototype; no field is called so)";
  it.each([
    ['{"a": 1, "a": 2}', 1, 10, 'key "a" is given twice in the same object', 'DuplicateKey'],
    [
      '{\n"a": 1,\n}',
      3,
      1,
      'expected a key in double quotes, found "}" (JSON has no trailing commas)',
      'PropertyNameExpected',
    ],
    [
      '[1,\r\n ]',
      2,
      2,
      'unexpected character "]" where a value is expected (JSON has no comments or trailing commas)',
      'ValueExpected',
    ],
    [
      '{"a": 01}',
      1,
      8,
      'expected "," between two values (or the end of the object or array)',
      'CommaExpected',
    ],
    ['{"a" 1}', 1, 6, 'expected ":" after the key', 'ColonExpected'],
    [
      '{\r\n  "a": tru}',
      2,
      8,
      '"tru" is not a JSON value (a value is a number, a string in double quotes, true, false, null, an object or an array)',
      'InvalidSymbol',
    ],
    ['[1.]', 1, 2, 'the number "1." is cut short (a digit must follow "." and "e")', 'UnexpectedEndOfNumber'],
    [
      '{"a": "line\nbreak"}',
      1,
      7,
      'a string is not closed on its line (a " without its closing "; a line break inside a string is written \\n)',
      'UnexpectedEndOfString',
    ],
    [
      '["ok", "tab\there"]',
      1,
      8,
      'this string contains a control character (write it as an escape: \\t, \\n, \\u0001)',
      'InvalidCharacter',
    ],
    ['["\\u12G4"]', 1, 2, 'in this string, \\u is not followed by four hexadecimal digits', 'InvalidUnicode'],
    ['// comment\n{}', 1, 1, 'JSON has no comments (// or /* */)', 'InvalidCommentToken'],
    ['{"a": [1, 2', 1, 12, 'the file ends inside an array (a "]" is missing)', 'CloseBracketExpected'],
    ['', 1, 1, 'the file is empty: a JSON object is expected', 'ValueExpected'],
    [' \r\n\t', 2, 2, 'the file is empty: a JSON object is expected', 'ValueExpected'],
    ['{} {}', 1, 4, 'unexpected text after the end of the JSON value', 'EndOfFileExpected'],
    ['{"__proto__": {"polluted": true}}', 1, 2, `the key "__proto__" ${PROTO}`, 'ForbiddenKey'],
    ['{"a": [\n{"constructor": {"prototype": {}}}]}', 2, 2, `the key "constructor" ${PROTO}`, 'ForbiddenKey'],
    ['{"a": {"prototype": 1}}', 1, 8, `the key "prototype" ${PROTO}`, 'ForbiddenKey'],
  ])('refuses %j at line %i, column %i', (text, line, column, rule, code) => {
    expect(() => parseJsonSource(text)).toThrow(expect.objectContaining({ line, column, rule, code }));
  });

  it('names the syntax error a reader meets first, even when the file also nests too deep later', () => {
    // The missing ":" is at line 1, column 6 (hand computation); the nesting goes too deep after it.
    const text = `{"a" 1, "b": ${'['.repeat(100)}${']'.repeat(100)}}`;
    expect(() => parseJsonSource(text)).toThrow(
      expect.objectContaining({ line: 1, column: 6, code: 'ColonExpected' }),
    );
  });

  it('turns a syntax error into an import issue with its line, its column in the rule and the text found', () => {
    const r = parseProductFile('{\n  "id": "P",\n  "stack": [1,]\n}');
    expect(r).toEqual({
      issues: [
        {
          line: 3,
          column: null,
          value: ']',
          rule: 'not valid JSON at column 15: unexpected character "]" where a value is expected (JSON has no comments or trailing commas)',
        },
      ],
    });
  });

  it('refuses nesting deeper than MAX_JSON_DEPTH at the line where it goes too deep, even 10,000 deep', () => {
    // Issue 14: a file nested 10,000 deep used to exhaust the parser's stack (RangeError).
    const deep = `${'['.repeat(10_000)}${']'.repeat(10_000)}`;
    expect(() => parseJsonSource(deep)).toThrow(
      expect.objectContaining({
        line: 1,
        rule: `objects and arrays are nested deeper than ${MAX_JSON_DEPTH} levels`,
      }),
    );
    const objects = `${'{"a":\n'.repeat(10_000)}1${'}'.repeat(10_000)}`;
    // The first value deeper than the limit starts on line MAX_JSON_DEPTH + 1 (hand computation:
    // one "{" per line, the root on line 1).
    expect(() => parseJsonSource(objects)).toThrow(expect.objectContaining({ line: MAX_JSON_DEPTH + 1 }));
    // Exactly at the limit is accepted and equals JSON.parse.
    const atLimit = `${'['.repeat(MAX_JSON_DEPTH)}${']'.repeat(MAX_JSON_DEPTH)}`;
    expect(parseJsonSource(atLimit).value).toEqual(JSON.parse(atLimit));
  });

  it('leaves Object.prototype untouched by a refused prototype key', () => {
    expect(() => parseJsonSource('{"__proto__": {"vcPolluted": 1}}')).toThrow();
    expect(({} as Record<string, unknown>).vcPolluted).toBeUndefined();
  });
});

describe('products', () => {
  it('normalises the example to SI in the engine’s ProductInput shape', () => {
    const r = parseProductFile(fixture('good/products-hybrid-300.json'));
    if ('issues' in r) throw new Error(JSON.stringify(r.issues));
    const p: ProductInput = r.value; // compile-time proof the stored shape is the engine's input
    expect(p.waferDiameterM).toBe(0.3);
    // street 0.1 mm + die 10 mm → pitch 10.1 mm (hand computation)
    expect(p.die).toEqual({
      widthM: 0.01,
      heightM: 0.012,
      pitchXM: 0.0101,
      pitchYM: 0.0121,
      originXM: -0.005,
      originYM: -0.006,
      pad: { xM: 0.001, yM: 0.001, widthM: 0.008, heightM: 0.01 },
    });
    expect(p.spec.qTimes[0]).toEqual({ fromKind: 'activation', maxS: 8 * 3600, label: 'activation → bond' });
    expect(p.incoming).toEqual({ countAbove: 5, atDiameterM: 45e-9, slope: 2, fromM: null });
    // Si(100) preset E' = 155.4 GPa (Hopcroft, Nix & Kenny 2010)
    expect(p.stack.plateModulusPa).toBe(155.4e9);
  });

  it('refuses a Q-time or scan age of 1e308 h with an issue (it crashed the import by overflowing to infinite seconds)', () => {
    // Found by test/unit/properties/import-json.test.ts: hToS(1e308) threw ModelInputError out of the import.
    const r = product((p) => {
      p.spec.qTimes[0].maxHours = 1e308;
      p.spec.maxScanAgeHours = 1e308;
    });
    expect('issues' in r && r.issues.map((i) => [i.column, i.rule])).toEqual([
      ['spec.qTimes[0].maxHours', 'must be a number > 0 h and ≤ 100000 h'],
      ['spec.maxScanAgeHours', 'must be a number > 0 h and ≤ 100000 h'],
    ]);
  });

  it('defaults die-to-wafer to the die-on-rigid-wafer model and centres the die grid', () => {
    const r = product((p) => {
      p.bonding = 'die-to-wafer';
      delete p.stack.model;
      p.stack.top.thicknessUm = 50;
      delete p.die.originXMm;
      delete p.die.originYMm;
    });
    if ('issues' in r) throw new Error(JSON.stringify(r.issues));
    expect(r.value.stack.model).toBe('die-on-rigid-wafer');
    expect(r.value.stack.topThicknessM).toBe(50e-6);
    expect(r.value.die?.originXM).toBe(-0.005);
  });

  it.each([
    [
      'two moduli',
      (p: J) => {
        p.stack.top.plateModulusGPa = 130;
      },
      'stack.bottom.plateModulusGPa',
      'top and bottom plate moduli differ (130 and 155.4 GPa); the void model takes one plate modulus for both plates',
    ],
    [
      'pad outside the die',
      (p: J) => {
        p.die.padArray.widthMm = 9.5;
      },
      'die.padArray',
      'the pad array (x 1 + width 9.5 mm, y 1 + height 10 mm) must lie inside the 10 × 12 mm die',
    ],
    [
      'pitch and street',
      (p: J) => {
        p.die.pitchXMm = 10.1;
      },
      'die.streetXMm',
      'give pitchXMm or streetXMm, not both',
    ],
    [
      'no limit',
      (p: J) => {
        p.spec.maxVoids = null;
        p.spec.maxUnbondedFraction = null;
        p.spec.minDieYield = null;
      },
      'spec',
      'states no limit: give at least one of maxVoids, maxUnbondedFraction, minDieYield',
    ],
    [
      'unknown convention word',
      (p: J) => {
        p.surface.energyConvention = 'gamma';
      },
      'surface.energyConvention',
      'must be one of "per-surface", "work-of-adhesion"',
    ],
    [
      'wrong kind in format',
      (p: J) => {
        p.format = 'voidcast tools 1';
      },
      'format',
      'this file declares kind "tools" but is imported as products',
    ],
    [
      'a misspelt key',
      (p: J) => {
        p.wafer.edgeExclusion = 3;
      },
      'wafer.edgeExclusion',
      '"edgeExclusion" is not a field of this object; check its spelling',
    ],
  ])('refuses %s', (_name, mut, column, rule) => {
    const r = product(mut);
    expect('issues' in r && r.issues.map((i) => [i.column, i.rule])).toEqual([[column, rule]]);
  });
});

describe('tools', () => {
  it('stores the logistic width w = 1/(k ln 10) for a steepness k, the same curve as src/model/clean.ts', () => {
    const t = structuredClone(TOOLS);
    t.cleans[0].removal = { model: 'logistic-log-d', maxEfficiency: 0.998, d50Nm: 24, steepness: 1.9 };
    const r = parseToolsFile(JSON.stringify(t));
    if ('issues' in r) throw new Error(JSON.stringify(r.issues));
    const c = r.value.cleans[0]!;
    if (c.removal.model !== 'logistic-log-d') throw new Error('logistic expected');
    const ci: CleanInput = { cleanId: c.cleanId, name: c.name, toolId: c.toolId, ...c.removal };
    // PRE(d) = E/(1 + exp(−(log10 d − log10 d50)/w)) must equal E/(1 + (d50/d)^k) (algebraic identity).
    for (const d of [10e-9, 30e-9, 50e-9, 300e-9, 5e-6]) {
      const ours =
        ci.maxEfficiency / (1 + Math.exp(-(Math.log10(d) - Math.log10(ci.halfSizeM)) / ci.widthDecades));
      // 1e-14: two evaluations of one expression in double precision.
      expect(
        Math.abs(ours - removalEfficiency(d, { d50M: 24e-9, maxEfficiency: 0.998, steepness: 1.9 })),
      ).toBeLessThan(1e-14);
    }
  });

  it('refuses both or neither of widthDecades and steepness', () => {
    const t = structuredClone(TOOLS);
    t.cleans[0].removal.steepness = 2;
    const r = parseToolsFile(JSON.stringify(t, null, 2));
    expect('issues' in r && r.issues.map((i) => [i.column, i.rule])).toEqual([
      [
        'cleans[0].removal',
        'give the curve width once: widthDecades (decades of diameter) or steepness (k in ln d), not both or neither',
      ],
    ]);
  });

  it('refuses a tool or chamber given twice and a band that runs downwards', () => {
    const t = structuredClone(TOOLS);
    t.tools.push(structuredClone(t.tools[0]));
    t.tools[2].chambers.push({ chamber: 'PM1', adders: null });
    t.tools[3].adders.bands[0].toNm = 40;
    const r = parseToolsFile(JSON.stringify(t, null, 2));
    expect('issues' in r && r.issues.map((i) => [i.column, i.rule])).toEqual([
      ['tools[2].chambers[2].chamber', 'chamber "PM1" of tool "ACT-1" is given twice'],
      ['tools[3].adders.bands[0].toNm', 'must be greater than fromNm (45 nm)'],
      ['tools[5].id', 'tool "CMP-2" is given twice (first as tools[0])'],
    ]);
  });

  it('gives chambers the tool’s uncertainty unless they state their own, and 3 when neither does', () => {
    const r = parseToolsFile(fixture('good/tools-line.json'));
    if ('issues' in r) throw new Error(JSON.stringify(r.issues));
    const act = r.value.tools[2]!;
    expect(act.map((e) => [e.chamber, e.adderUncertaintyFactor])).toEqual([
      [null, 3],
      ['PM1', 2],
      ['PM2', 3],
    ]);
  });
});
