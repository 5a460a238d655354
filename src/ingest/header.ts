/**
 * Header normalisation: every header cell is trimmed, lower-cased and has inner runs of spaces turned
 * into `_` (so " Location ID " and "location_id" are the same column); a name given twice after that
 * is an error; each name is matched to a fixed column of the kind, then to its column families
 * (patterns such as `ge_0.1um`). Columns starting with `x_` are kept in the file but ignored by
 * voidcast, unless the kind has a column of that very name (the `x_mm` of a scan); empty names at
 * the end of the header (a trailing delimiter) are ignored.
 */
import type { ColumnSpec, HeaderColumn, ImportKind, KindIssue } from './types.ts';

export function headerKey(written: string): string {
  return written.trim().toLowerCase().replace(/\s+/g, '_');
}

export interface HeaderResult {
  columns: HeaderColumn[];
  issues: KindIssue[];
}

/** Matches a header against a kind's columns; `delimiter` is only used in the hint of a one-column header. */
export function matchHeader(
  kind: ImportKind,
  cells: readonly string[],
  line: number,
  delimiter: string,
): HeaderResult {
  const issues: KindIssue[] = [];
  const columns: HeaderColumn[] = [];
  const byKey = new Map<string, ColumnSpec>();
  for (const c of kind.columns) byKey.set(c.name.toLowerCase(), c);
  const seen = new Map<string, number>();
  let last = cells.length - 1;
  while (last >= 0 && cells[last]!.trim() === '') last--;
  for (let i = 0; i <= last; i++) {
    const written = cells[i]!.trim();
    const key = headerKey(written);
    if (key === '') {
      issues.push({ line, column: null, value: '', rule: `column ${i + 1} of the header has no name` });
      continue;
    }
    const first = seen.get(key);
    if (first !== undefined) {
      issues.push({
        line,
        column: written,
        value: written,
        rule: `duplicate column "${key}" (columns ${first + 1} and ${i + 1}; header names are compared ignoring case and spaces)`,
      });
      continue;
    }
    seen.set(key, i);
    // A kind's own column wins over the ignore prefix (scans and void inspections have x_mm, x_um).
    if (key.startsWith('x_') && !byKey.has(key)) continue;
    const spec = byKey.get(key) ?? null;
    let pattern: HeaderColumn['pattern'] = null;
    if (!spec) {
      for (const p of kind.patternColumns ?? []) {
        const d = p.match(key);
        if (d !== null) {
          pattern = { spec: p, descriptor: d };
          break;
        }
      }
    }
    if (!spec && !pattern) {
      issues.push({ line, column: written, value: written, rule: unknownColumnRule(kind, key) });
      continue;
    }
    columns.push({ index: i, written, key, spec, pattern });
  }
  const present = new Set(columns.map((c) => c.key));
  const missing = kind.columns.filter((c) => c.required && !present.has(c.name.toLowerCase()));
  if (missing.length > 0 && last === 0 && /[,;\t|]/.test(cells[0]!)) {
    // One column that holds delimiters: the file is split on something else. Say that, not more.
    const other = [',', ';', '\t'].filter((d) => d !== delimiter && cells[0]!.includes(d));
    const shown = (d: string) => (d === '\t' ? 'tab' : d);
    return {
      columns: [],
      issues: [
        {
          line,
          column: null,
          value: cells[0]!.trim(),
          rule:
            other.length > 0
              ? `the header is one column when split on "${shown(delimiter)}"; if the file uses "${shown(other[0]!)}", declare it: # delimiter: ${shown(other[0]!)}`
              : 'the header is one column: voidcast reads files delimited by "," ";" or tab',
        },
      ],
    };
  }
  for (const m of missing) {
    issues.push({ line, column: m.name, value: null, rule: `missing column "${m.name}" (${m.description})` });
  }
  return { columns, issues };
}

function unknownColumnRule(kind: ImportKind, key: string): string {
  const names = kind.columns.map((c) => c.name);
  const stems = names.filter((n) => n.toLowerCase().startsWith(`${key}_`));
  if (stems.length > 0) {
    return `column "${key}" needs a unit: write it as ${stems.join(' or ')}, or declare it (# units: ${key}=…)`;
  }
  const patterns = (kind.patternColumns ?? []).map((p) => p.pattern);
  return `unknown column "${key}" for ${kind.name} files (known: ${[...names, ...patterns].join(', ')}; prefix x_ to keep a column voidcast ignores)`;
}
