/**
 * docs/formats.md against the importers' schemas (the single source of truth): every column a kind
 * knows is documented with its unit and whether it is required, and nothing else is; the metadata keys
 * and the sample flag bits are the code's; every example in the page imports cleanly.
 */
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { bufferSource } from '../../../src/ingest/csv.ts';
import { COUNTER_METADATA, counterSamples, SAMPLE_FLAGS } from '../../../src/ingest/kinds/counter-samples.ts';
import { locations } from '../../../src/ingest/kinds/locations.ts';
import { COMMON_METADATA } from '../../../src/ingest/metadata.ts';
import { importSource, sha256Text } from '../../../src/ingest/pipeline.ts';
import type { ImportKind } from '../../../src/ingest/types.ts';
import { migrate, openDatabase } from '../../../src/store/db.ts';

const DOC = readFileSync(join(import.meta.dirname, '../../../docs/formats.md'), 'utf8');

/** The text of a `## name` section, up to the next `## `. */
function section(name: string): string {
  const start = DOC.indexOf(`\n## ${name}\n`);
  if (start === -1) throw new Error(`docs/formats.md has no section "## ${name}"`);
  const next = DOC.indexOf('\n## ', start + 4);
  const marker = DOC.indexOf('<!-- ═══', start);
  const end = [next, marker].filter((i) => i !== -1).sort((a, b) => a - b)[0] ?? DOC.length;
  return DOC.slice(start, end);
}

/** Rows of the markdown tables in a text whose header starts with `first`, cells unescaped. */
function tableRows(text: string, first: string): string[][] {
  const out: string[][] = [];
  const lines = text.split('\n');
  for (let i = 0; i < lines.length; i++) {
    if (!lines[i]!.startsWith(`| ${first} |`)) continue;
    for (let j = i + 2; j < lines.length && lines[j]!.startsWith('|'); j++) {
      const cells = lines[j]!.slice(1, -1)
        .split(/(?<!\\)\|/)
        .map((c) => c.trim().replace(/\\\|/g, '|'));
      out.push(cells);
    }
  }
  return out;
}

const code = (s: string) => s.replace(/^`|`$/g, '');

function checkColumns(kind: ImportKind) {
  const rows = tableRows(section(kind.name), 'column');
  const documented = rows.map((r) => ({
    name: code(r[0]!),
    required: r[1] === 'yes',
    unit: r[2] === '—' ? null : r[2],
  }));
  const fromCode = [
    ...kind.columns.map((c) => ({ name: c.name, required: c.required, unit: c.unit })),
    ...(kind.patternColumns ?? []).map((p) => ({
      name: p.pattern,
      required: p.required === true,
      unit: p.unit,
    })),
  ];
  expect(documented).toEqual(fromCode);
}

describe('docs/formats.md matches the schemas', () => {
  it('locations: every column, its unit and whether it is required', () => checkColumns(locations));
  it('counter-samples: every column, its unit and whether it is required', () =>
    checkColumns(counterSamples));

  it('the common metadata keys and those of counter-samples', () => {
    const common = tableRows(section('Conventions'), 'key').map((r) => code(r[0]!));
    expect(common).toEqual(COMMON_METADATA.map((m) => m.key));
    const own = tableRows(section('counter-samples'), 'key').map((r) => code(r[0]!));
    expect(own).toEqual(COUNTER_METADATA.map((m) => m.key));
    expect(section('locations')).toContain('No metadata keys of its own.');
    expect(locations.metadata ?? []).toEqual([]);
  });

  it('the sample flag bits', () => {
    const rows = tableRows(section('counter-samples'), 'bit').map((r) => [Number(r[0]), code(r[1]!)]);
    expect(rows).toEqual(Object.entries(SAMPLE_FLAGS).map(([name, bit]) => [bit, name]));
  });

  it('every example imports cleanly, in the order of the page', () => {
    const db = openDatabase(':memory:');
    migrate(db);
    const examples: { kind: ImportKind; text: string }[] = [];
    for (const kind of [locations, counterSamples]) {
      const s = section(kind.name);
      for (const m of s.matchAll(/```csv\n([\s\S]*?)```/g)) examples.push({ kind, text: m[1]! });
    }
    expect(examples.length).toBe(3);
    for (const [i, e] of examples.entries()) {
      const r = importSource(db, e.kind, {
        displayName: `example-${i + 1}.csv`,
        sha256: sha256Text(e.text),
        bytes: Buffer.byteLength(e.text),
        open: () => bufferSource(e.text),
      });
      expect(r.issues).toEqual([]);
      expect(r.status).toBe('imported');
      expect(r.rowsStored).toBe(
        e.text
          .trim()
          .split('\n')
          .filter((l) => !l.startsWith('#')).length - 1,
      );
    }
    db.close();
  });
});
