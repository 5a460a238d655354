/**
 * JSON configuration files (products, tools): parse with line numbers, validate with a zod schema,
 * and turn every problem into an import issue naming the file's line and the JSON path.
 *
 * JSON itself is RFC 8259; this reader follows it exactly (no comments, no trailing commas, no
 * duplicate keys — RFC 8259 §4 leaves duplicates undefined, so they are refused rather than
 * silently resolved). While parsing it records the line each value starts on, keyed by its path
 * (`stack.top.thicknessUm`, `tools[2].chambers[0].adders`), so that a zod issue found later can name
 * the line. The result is the same value `JSON.parse` returns.
 *
 * Two limits keep a hostile file from harming the reader: nesting deeper than MAX_JSON_DEPTH is
 * refused at the line where it goes too deep (a file nested 10,000 deep used to exhaust the stack),
 * and the keys `__proto__`, `constructor` and `prototype` are refused wherever they appear (they could
 * change or shadow an object's prototype in code that copies the value; no voidcast field has them).
 *
 * Issues use `column` for the JSON path (the "column" of a configuration file) and `value` for the
 * value as written (shortened to 80 characters).
 */
import { createHash } from 'node:crypto';
import type { z } from 'zod';
import type { KindIssue } from '../types.ts';

export interface JsonSource {
  value: unknown;
  /** Line (1-based) where the value at each path starts; '' is the root. */
  lines: Map<string, number>;
  /** The text of each scalar value as written, by path. */
  texts: Map<string, string>;
}

export class JsonSyntaxError extends Error {
  constructor(
    readonly line: number,
    readonly rule: string,
  ) {
    super(`line ${line}: ${rule}`);
  }
}

/** Deepest nesting of objects and arrays accepted; voidcast's configuration files need fewer than 10. */
export const MAX_JSON_DEPTH = 64;

/** Keys refused in any object (prototype pollution). */
export const FORBIDDEN_JSON_KEYS: ReadonlySet<string> = new Set(['__proto__', 'constructor', 'prototype']);

/** Path text of a key under a parent path: `a.b`, `a[3]`; keys that are not identifiers are quoted. */
export function childPath(parent: string, key: string | number): string {
  if (typeof key === 'number') return `${parent}[${key}]`;
  const k = /^[A-Za-z_$][A-Za-z0-9_$]*$/.test(key) ? key : JSON.stringify(key);
  return parent === '' ? k : `${parent}.${k}`;
}

/** Parses JSON text, recording lines per path. Throws JsonSyntaxError with the line of the problem. */
export function parseJsonSource(text: string): JsonSource {
  let i = 0;
  let line = 1;
  const lines = new Map<string, number>();
  const texts = new Map<string, string>();
  const src = text.charCodeAt(0) === 0xfeff ? text.slice(1) : text;

  const fail = (rule: string): never => {
    throw new JsonSyntaxError(line, rule);
  };
  const ws = () => {
    for (;;) {
      const c = src.charCodeAt(i);
      if (c === 10) {
        line++;
        i++;
      } else if (c === 32 || c === 9 || c === 13) i++;
      else break;
    }
  };
  const parseString = (): string => {
    // src[i] is the opening quote
    i++;
    let out = '';
    for (;;) {
      if (i >= src.length) fail('a string is not closed (a " without its closing ")');
      const c = src.charCodeAt(i);
      if (c === 34) {
        i++;
        return out;
      }
      if (c < 0x20) fail('a string contains a control character or a line break (write it as \\n)');
      if (c === 92) {
        const e = src[i + 1];
        i += 2;
        if (e === 'u') {
          const hex = src.slice(i, i + 4);
          if (!/^[0-9a-fA-F]{4}$/.test(hex)) fail('\\u must be followed by four hexadecimal digits');
          out += String.fromCharCode(Number.parseInt(hex, 16));
          i += 4;
        } else {
          const map: Record<string, string> = {
            '"': '"',
            '\\': '\\',
            '/': '/',
            b: '\b',
            f: '\f',
            n: '\n',
            r: '\r',
            t: '\t',
          };
          const m = e === undefined ? undefined : map[e];
          if (m === undefined) fail(`unknown escape \\${e ?? ''} in a string`);
          out += m;
        }
        continue;
      }
      out += src[i];
      i++;
    }
  };
  const parseValue = (path: string, depth: number): unknown => {
    ws();
    lines.set(path, line);
    const c = src[i];
    if ((c === '{' || c === '[') && depth >= MAX_JSON_DEPTH)
      fail(`objects and arrays are nested deeper than ${MAX_JSON_DEPTH} levels`);
    if (c === '{') {
      i++;
      const obj: Record<string, unknown> = {};
      ws();
      if (src[i] === '}') {
        i++;
        return obj;
      }
      for (;;) {
        ws();
        if (src[i] !== '"') fail('expected a key in double quotes');
        const key = parseString();
        if (FORBIDDEN_JSON_KEYS.has(key))
          fail(`the key "${key}" is not allowed (it names an object's prototype; no field is called so)`);
        if (Object.hasOwn(obj, key)) fail(`key "${key}" is given twice in the same object`);
        ws();
        if (src[i] !== ':') fail(`expected ":" after the key "${key}"`);
        i++;
        obj[key] = parseValue(childPath(path, key), depth + 1);
        ws();
        if (src[i] === ',') {
          i++;
          continue;
        }
        if (src[i] === '}') {
          i++;
          return obj;
        }
        fail('expected "," or "}" after a value in an object');
      }
    }
    if (c === '[') {
      i++;
      const arr: unknown[] = [];
      ws();
      if (src[i] === ']') {
        i++;
        return arr;
      }
      for (;;) {
        arr.push(parseValue(childPath(path, arr.length), depth + 1));
        ws();
        if (src[i] === ',') {
          i++;
          continue;
        }
        if (src[i] === ']') {
          i++;
          return arr;
        }
        fail('expected "," or "]" after a value in an array');
      }
    }
    if (c === '"') {
      const s0 = i;
      const s = parseString();
      texts.set(path, src.slice(s0, i));
      return s;
    }
    const m = /^-?(?:0|[1-9]\d*)(?:\.\d+)?(?:[eE][+-]?\d+)?/.exec(src.slice(i, i + 64));
    if (m && m[0].length > 0) {
      i += m[0].length;
      texts.set(path, m[0]);
      return Number(m[0]);
    }
    for (const [word, v] of [
      ['true', true],
      ['false', false],
      ['null', null],
    ] as const) {
      if (src.startsWith(word, i)) {
        i += word.length;
        texts.set(path, word);
        return v;
      }
    }
    if (i >= src.length) fail('the file ends where a value is expected');
    return fail(
      `unexpected character ${JSON.stringify(src[i])} where a value is expected (JSON has no comments or trailing commas)`,
    );
  };

  ws();
  if (i >= src.length) fail('the file is empty: a JSON object is expected');
  const value = parseValue('', 0);
  ws();
  if (i < src.length) fail('unexpected text after the end of the JSON value');
  return { value, lines, texts };
}

/** The path text of a zod issue path. */
export function issuePath(path: readonly PropertyKey[]): string {
  let p = '';
  for (const k of path) p = childPath(p, typeof k === 'number' ? k : String(k));
  return p;
}

/** The line of a path, or of its nearest ancestor that has one. */
export function lineOf(src: JsonSource, path: string): number {
  let p = path;
  for (;;) {
    const l = src.lines.get(p);
    if (l !== undefined) return l;
    if (p === '') return 1;
    const cut = Math.max(p.lastIndexOf('.'), p.lastIndexOf('['));
    p = cut <= 0 ? '' : p.slice(0, cut);
  }
}

function shorten(s: string): string {
  return s.length > 80 ? `${s.slice(0, 77)}...` : s;
}

/** Issue at a JSON path of a source. */
export function jsonIssue(src: JsonSource, path: string, rule: string): KindIssue {
  const text = src.texts.get(path);
  return {
    line: lineOf(src, path),
    column: path === '' ? null : path,
    value: text === undefined ? null : shorten(text),
    rule,
  };
}

/**
 * Validates a parsed source with a zod schema. Returns the typed value, or issues (every zod issue,
 * in document order) naming the line and JSON path.
 */
export function validateJson<T>(
  src: JsonSource,
  schema: z.ZodType<T>,
): { ok: true; value: T } | { ok: false; issues: KindIssue[] } {
  const r = schema.safeParse(src.value);
  if (r.success) return { ok: true, value: r.data };
  const issues: KindIssue[] = [];
  for (const iss of r.error.issues) {
    const base = issuePath(iss.path);
    if (iss.code === 'unrecognized_keys') {
      // One issue per unknown key, at the key's own line.
      for (const k of iss.keys)
        issues.push(
          jsonIssue(src, childPath(base, k), `"${k}" is not a field of this object; check its spelling`),
        );
      continue;
    }
    issues.push(jsonIssue(src, base, iss.message));
  }
  issues.sort((a, b) => a.line - b.line);
  return { ok: false, issues };
}

/** A configuration file read, validated and normalised. */
export interface ParsedConfig<T> {
  source: JsonSource;
  value: T;
  /** sha256 (hex) of the normalised value's JSON. */
  contentSha256: string;
}

/**
 * Reads a JSON configuration file (products, tools): JSON syntax errors and schema violations come
 * back as issues with their line; a valid file is normalised and fingerprinted by its content.
 */
export function parseConfigFile<Raw, T>(
  textIn: string,
  schema: z.ZodType<Raw>,
  normalise: (raw: Raw) => T,
): ParsedConfig<T> | { issues: KindIssue[] } {
  let source: JsonSource;
  try {
    source = parseJsonSource(textIn);
  } catch (e) {
    const err = e as { line?: number; rule?: string };
    if (err.line !== undefined && err.rule !== undefined)
      return { issues: [{ line: err.line, column: null, value: null, rule: `not valid JSON: ${err.rule}` }] };
    throw e;
  }
  const v = validateJson(source, schema);
  if (!v.ok) return { issues: v.issues };
  const value = normalise(v.value);
  return { source, value, contentSha256: createHash('sha256').update(JSON.stringify(value)).digest('hex') };
}
