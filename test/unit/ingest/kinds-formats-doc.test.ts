/**
 * docs/formats.md, sections of the scans, ledger, tools, products, pairs and void-inspections kinds,
 * against the importers' schemas (the single source of truth): the CSV column tables and metadata keys
 * are the kinds' own, the JSON field tables list every field of the zod schemas with whether it is
 * required, every example is byte for byte the good fixture it names, and the examples import cleanly
 * in the order of the page. (The locations and counter-samples sections are checked by
 * formats-doc.test.ts.)
 */
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import type { z } from 'zod';
import { ledger } from '../../../src/ingest/kinds/ledger.ts';
import { pairs } from '../../../src/ingest/kinds/pairs.ts';
import { productFileSchema } from '../../../src/ingest/kinds/products.ts';
import { SCAN_METADATA, scans } from '../../../src/ingest/kinds/scans.ts';
import { toolsFileSchema } from '../../../src/ingest/kinds/tools.ts';
import { VOID_METADATA, voidInspections } from '../../../src/ingest/kinds/void-inspections.ts';
import { importFile } from '../../../src/ingest/pipeline.ts';
import type { ImportKind, ImportKindName } from '../../../src/ingest/types.ts';
import { migrate, openDatabase } from '../../../src/store/db.ts';

const ROOT = join(import.meta.dirname, '../../..');
const DOC = readFileSync(join(ROOT, 'docs/formats.md'), 'utf8');

function section(name: string): string {
  const start = DOC.indexOf(`\n## ${name}\n`);
  if (start === -1) throw new Error(`docs/formats.md has no section "## ${name}"`);
  const next = DOC.indexOf('\n## ', start + 4);
  return DOC.slice(start, next === -1 ? DOC.length : next);
}

function tableRows(text: string, first: string): string[][] {
  const out: string[][] = [];
  const lines = text.split('\n');
  for (let i = 0; i < lines.length; i++) {
    if (!lines[i]!.startsWith(`| ${first} |`)) continue;
    for (let j = i + 2; j < lines.length && lines[j]!.startsWith('|'); j++)
      out.push(
        lines[j]!.slice(1, -1)
          .split(/(?<!\\)\|/)
          .map((c) => c.trim().replace(/\\\|/g, '|')),
      );
  }
  return out;
}
const code = (s: string) => s.replace(/^`|`$/g, '');

function checkColumns(kind: ImportKind) {
  const documented = tableRows(section(kind.name), 'column').map((r) => ({
    name: code(r[0]!),
    required: r[1] === 'yes',
    unit: r[2] === '—' ? null : r[2],
  }));
  expect(documented).toEqual(kind.columns.map((c) => ({ name: c.name, required: c.required, unit: c.unit })));
}

/** Every field path of a zod schema (objects, arrays, unions walked), with whether it is required. */
function fieldPaths(schema: z.ZodType): [string, boolean][] {
  const out = new Map<string, boolean>();
  const walk = (s: z.ZodType, path: string, required: boolean) => {
    const def = (s as unknown as { _zod: { def: Record<string, unknown> & { type: string } } })._zod.def;
    const mark = () => out.set(path, (out.get(path) ?? false) || required);
    switch (def.type) {
      case 'optional':
        return walk(def.innerType as z.ZodType, path, false);
      case 'nullable':
        return walk(def.innerType as z.ZodType, path, required);
      case 'object':
        if (path) mark();
        for (const [k, v] of Object.entries(def.shape as Record<string, z.ZodType>))
          walk(v, path ? `${path}.${k}` : k, true);
        return;
      case 'array':
        mark();
        return walk(def.element as z.ZodType, `${path}[]`, true);
      case 'union':
        for (const o of def.options as z.ZodType[]) walk(o, path, required);
        return;
      default:
        mark();
    }
  };
  walk(schema, '', true);
  return [...out].filter(([p]) => !p.endsWith('[]'));
}

function checkFields(name: string, schema: z.ZodType) {
  const documented = tableRows(section(name), 'field').map((r) => [code(r[0]!), r[1] === 'yes']);
  expect(documented).toEqual(fieldPaths(schema));
}

describe('docs/formats.md matches the schemas of the six kinds', () => {
  it('scans: columns and metadata keys', () => {
    checkColumns(scans);
    expect(tableRows(section('scans'), 'key').map((r) => code(r[0]!))).toEqual(
      SCAN_METADATA.map((m) => m.key),
    );
  });
  it('ledger: columns, no metadata of its own', () => {
    checkColumns(ledger);
    expect(section('ledger')).toContain('No metadata keys of its own.');
  });
  it('pairs: columns, no metadata of its own', () => {
    checkColumns(pairs);
    expect(section('pairs')).toContain('No metadata keys of its own.');
  });
  it('void-inspections: columns and metadata keys', () => {
    checkColumns(voidInspections);
    expect(tableRows(section('void-inspections'), 'key').map((r) => code(r[0]!))).toEqual(
      VOID_METADATA.map((m) => m.key),
    );
  });
  it('tools: every field of the JSON schema', () => checkFields('tools', toolsFileSchema));
  it('products: every field of the JSON schema', () => checkFields('products', productFileSchema));

  const KIND_OF_SECTION: Record<string, ImportKindName> = {
    tools: 'tools',
    products: 'products',
    scans: 'scans',
    pairs: 'pairs',
    'void-inspections': 'void-inspections',
  };
  const examples = [...DOC.matchAll(/<!-- example: (\S+) -->\n```(csv|json)\n([\s\S]*?)```/g)].map((m) => ({
    path: m[1]!,
    text: m[3]!,
    at: m.index,
  }));

  it('every example is the good fixture it names, byte for byte', () => {
    expect(examples.length).toBe(8);
    for (const e of examples) expect(e.text).toBe(readFileSync(join(ROOT, e.path), 'utf8'));
  });

  it('the examples import cleanly in the order of the page', async () => {
    const db = openDatabase(':memory:');
    migrate(db);
    for (const e of examples) {
      const before = DOC.lastIndexOf('\n## ', e.at);
      const sectionName = DOC.slice(before + 4, DOC.indexOf('\n', before + 4));
      const kind: ImportKindName = e.path.includes('/locations-')
        ? 'locations'
        : sectionName === 'ledger'
          ? 'ledger'
          : KIND_OF_SECTION[sectionName]!;
      const r = await importFile(db, { kind, path: join(ROOT, e.path) });
      expect([e.path, r.issues]).toEqual([e.path, []]);
      expect(r.status).toBe('imported');
    }
    db.close();
  });
});
