/**
 * JSON configuration files (products, tools): parse with positions, validate with a zod schema,
 * and turn every problem into an import issue naming the file's line and the JSON path.
 *
 * The grammar is jsonc-parser's (Microsoft's JSON scanner and parser, the one VS Code uses), held to
 * RFC 8259: no comments, no trailing commas, no empty file. It reports every syntax error with its
 * offset, which this reader turns into a line and a column (1-based; the column counts UTF-16 code
 * units, as an editor does) and a rule in plain words. On top of the library this reader refuses
 * duplicate keys (RFC 8259 §4 leaves them undefined, so they are refused rather than silently
 * resolved) and records the line each value starts on, keyed by its path (`stack.top.thicknessUm`,
 * `tools[2].chambers[0].adders`), so that a zod issue found later can name the line. The result is
 * the same value `JSON.parse` returns.
 *
 * Two limits keep a hostile file from harming the reader: nesting deeper than MAX_JSON_DEPTH is
 * refused where it goes too deep — checked first by a flat pass over the library's scanner, because
 * the parser itself recurses once per level and a file nested 10,000 deep would exhaust the stack —
 * and the keys `__proto__`, `constructor` and `prototype` are refused wherever they appear, at the
 * key's line and column (they could change or shadow an object's prototype in code that copies the
 * value; no voidcast field has them).
 *
 * Issues use `column` for the JSON path (the "column" of a configuration file) and `value` for the
 * value as written (shortened to 80 characters); a syntax error names its character column in the rule.
 */
import { createHash } from 'node:crypto';
import { createScanner, type Node, type ParseError, parseTree, printParseErrorCode } from 'jsonc-parser';
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
    /** 1-based line of the problem. */
    readonly line: number,
    /** 1-based column (UTF-16 code units from the start of the line). */
    readonly column: number,
    readonly rule: string,
    /** jsonc-parser's name of the error (printParseErrorCode), or this reader's own: 'NestingTooDeep', 'ForbiddenKey', 'DuplicateKey'. */
    readonly code: string,
    /** The text at the problem, as written (may be empty, e.g. at the end of the file). */
    readonly found: string,
  ) {
    super(`line ${line}, column ${column}: ${rule}`);
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

/** The parser options that hold jsonc-parser to RFC 8259. */
const STRICT = { disallowComments: true, allowTrailingComma: false, allowEmptyContent: false } as const;

// jsonc-parser's SyntaxKind is a `const enum` (not importable under isolated modules): its values.
const OPEN_BRACE = 1;
const CLOSE_BRACE = 2;
const OPEN_BRACKET = 3;
const CLOSE_BRACKET = 4;
const EOF = 17;

/** Offsets where each line starts; lines end at "\n" (a "\r\n" counts once). */
function lineStarts(text: string): number[] {
  const starts = [0];
  for (let i = text.indexOf('\n'); i !== -1; i = text.indexOf('\n', i + 1)) starts.push(i + 1);
  return starts;
}

/** Line and column (both 1-based) of an offset, by binary search in the line starts. */
function positionOf(starts: readonly number[], offset: number): { line: number; column: number } {
  let lo = 0;
  let hi = starts.length - 1;
  while (lo < hi) {
    const mid = (lo + hi + 1) >> 1;
    if (starts[mid]! <= offset) lo = mid;
    else hi = mid - 1;
  }
  return { line: lo + 1, column: offset - starts[lo]! + 1 };
}

function quoted(s: string): string {
  const t = s.length > 40 ? `${s.slice(0, 37)}...` : s;
  return JSON.stringify(t);
}

/** The rule in plain words for each of jsonc-parser's errors, given the text found at the error. */
const RULES: Record<string, (found: string, atEnd: boolean) => string> = {
  InvalidSymbol: (f) =>
    f.startsWith('/')
      ? 'unexpected character "/" (JSON has no comments)'
      : `${quoted(f)} is not a JSON value (a value is a number, a string in double quotes, true, false, null, an object or an array)`,
  InvalidNumberFormat: (f) => `${quoted(f)} is not a number as JSON writes it`,
  PropertyNameExpected: (f, end) =>
    end
      ? 'the file ends where a key is expected'
      : f === '}'
        ? 'expected a key in double quotes, found "}" (JSON has no trailing commas)'
        : 'expected a key in double quotes',
  ValueExpected: (f, end) =>
    end
      ? 'the file ends where a value is expected'
      : f === ']' || f === '}' || f === ','
        ? `unexpected character ${quoted(f)} where a value is expected (JSON has no comments or trailing commas)`
        : 'a value is expected here',
  ColonExpected: () => 'expected ":" after the key',
  CommaExpected: () => 'expected "," between two values (or the end of the object or array)',
  CloseBraceExpected: (_f, end) =>
    end ? 'the file ends inside an object (a "}" is missing)' : 'expected "}" to close the object',
  CloseBracketExpected: (_f, end) =>
    end ? 'the file ends inside an array (a "]" is missing)' : 'expected "]" to close the array',
  EndOfFileExpected: () => 'unexpected text after the end of the JSON value',
  InvalidCommentToken: () => 'JSON has no comments (// or /* */)',
  UnexpectedEndOfComment: () => 'a comment is not closed (JSON has no comments)',
  UnexpectedEndOfString: () =>
    'a string is not closed on its line (a " without its closing "; a line break inside a string is written \\n)',
  UnexpectedEndOfNumber: (f) => `the number ${quoted(f)} is cut short (a digit must follow "." and "e")`,
  InvalidUnicode: () => 'in this string, \\u is not followed by four hexadecimal digits',
  InvalidEscapeCharacter: () =>
    'this string has an unknown escape (JSON knows \\" \\\\ \\/ \\b \\f \\n \\r \\t and \\u followed by four hexadecimal digits)',
  InvalidCharacter: () =>
    'this string contains a control character (write it as an escape: \\t, \\n, \\u0001)',
};

function syntaxError(text: string, e: ParseError): JsonSyntaxError {
  const code = printParseErrorCode(e.error);
  const found = text.slice(e.offset, e.offset + e.length);
  const atEnd = e.offset >= text.length;
  const { line, column } = positionOf(lineStarts(text), e.offset);
  const rule =
    code === 'ValueExpected' && /^[ \t\r\n]*$/.test(text)
      ? 'the file is empty: a JSON object is expected'
      : (RULES[code]?.(found, atEnd) ?? `not JSON here (${code})`);
  return new JsonSyntaxError(line, column, rule, code, found);
}

/** Offset of the first "{" or "[" nested deeper than MAX_JSON_DEPTH, or -1: a flat pass over the tokens. */
function tooDeepAt(text: string): number {
  const scanner = createScanner(text, true);
  let depth = 0;
  for (let t = scanner.scan(); t !== EOF; t = scanner.scan()) {
    if (t === OPEN_BRACE || t === OPEN_BRACKET) {
      depth++;
      if (depth > MAX_JSON_DEPTH) return scanner.getTokenOffset();
    } else if ((t === CLOSE_BRACE || t === CLOSE_BRACKET) && depth > 0) depth--;
  }
  return -1;
}

/** The first syntax error (smallest offset) of a text whose nesting is within the limit, or null. */
function firstSyntaxError(text: string): { tree: Node | undefined; error: ParseError | null } {
  const errors: ParseError[] = [];
  const tree = parseTree(text, errors, STRICT);
  let error: ParseError | null = null;
  for (const e of errors) if (error === null || e.offset < error.offset) error = e;
  return { tree, error };
}

/** Parses JSON text, recording lines per path. Throws JsonSyntaxError with the line and column of the problem. */
export function parseJsonSource(textIn: string): JsonSource {
  const text = textIn.charCodeAt(0) === 0xfeff ? textIn.slice(1) : textIn;
  const deep = tooDeepAt(text);
  if (deep !== -1) {
    // A syntax error before the place that is too deep comes first, as a reader meets it: parse
    // only the part before it (which is within the limit) and keep errors that lie inside that part.
    const { error } = firstSyntaxError(text.slice(0, deep));
    if (error !== null && error.offset < deep) throw syntaxError(text, error);
    const { line, column } = positionOf(lineStarts(text), deep);
    throw new JsonSyntaxError(
      line,
      column,
      `objects and arrays are nested deeper than ${MAX_JSON_DEPTH} levels`,
      'NestingTooDeep',
      text[deep] ?? '',
    );
  }
  const { tree, error } = firstSyntaxError(text);
  if (error !== null) throw syntaxError(text, error);
  if (tree === undefined)
    throw new JsonSyntaxError(1, 1, 'the file is empty: a JSON object is expected', 'ValueExpected', '');

  const lines = new Map<string, number>();
  const texts = new Map<string, string>();
  const starts = lineStarts(text);
  const at = (node: Node) => positionOf(starts, node.offset);
  // Recursion is bounded: the tree is at most MAX_JSON_DEPTH deep (checked above).
  const build = (node: Node, path: string): unknown => {
    lines.set(path, at(node).line);
    if (node.type === 'object') {
      const obj: Record<string, unknown> = {};
      for (const prop of node.children ?? []) {
        const [keyNode, valueNode] = prop.children ?? [];
        if (keyNode === undefined || valueNode === undefined) continue; // unreachable: errors were thrown above
        const key = keyNode.value as string;
        const { line, column } = at(keyNode);
        const found = text.slice(keyNode.offset, keyNode.offset + keyNode.length);
        if (FORBIDDEN_JSON_KEYS.has(key))
          throw new JsonSyntaxError(
            line,
            column,
            `the key "${key}" is not allowed (it names an object's prototype; no field is called so)`,
            'ForbiddenKey',
            found,
          );
        if (Object.hasOwn(obj, key))
          throw new JsonSyntaxError(
            line,
            column,
            `key "${key}" is given twice in the same object`,
            'DuplicateKey',
            found,
          );
        obj[key] = build(valueNode, childPath(path, key));
      }
      return obj;
    }
    if (node.type === 'array') return (node.children ?? []).map((c, i) => build(c, childPath(path, i)));
    texts.set(path, text.slice(node.offset, node.offset + node.length));
    return node.value;
  };
  return { value: build(tree, ''), lines, texts };
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
    if (!(e instanceof JsonSyntaxError)) throw e;
    const rule = `not valid JSON at column ${e.column}: ${e.rule}`;
    return {
      issues: [{ line: e.line, column: null, value: e.found === '' ? null : shorten(e.found), rule }],
    };
  }
  const v = validateJson(source, schema);
  if (!v.ok) return { issues: v.issues };
  const value = normalise(v.value);
  return { source, value, contentSha256: createHash('sha256').update(JSON.stringify(value)).digest('hex') };
}
