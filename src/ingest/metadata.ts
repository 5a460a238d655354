/**
 * The metadata block: `#` lines at the top of a CSV file, before the header, that declare what the
 * file cannot say in its cells.
 *
 *   # format: voidcast counter-samples 1
 *   # zone: Europe/Berlin
 *   # units: counts=raw volume=L
 *   # delimiter: ;
 *   # decimal: ,
 *
 * A line `# key: value` with a key of lower-case letters, digits and `_` is an entry; any other `#`
 * line is a free comment. Keys are case-insensitive; a key given twice is an error. Keys the kind does
 * not know are reported as ignored (a note), never silently used. `units` holds space- or comma-separated
 * `quantity=unit` pairs.
 */
import type { Delimiter, MetadataLine } from './csv.ts';
import { parseZone, type Zone } from './time.ts';
import type { KindIssue, MetadataSpec } from './types.ts';

/** Keys every kind understands (docs/formats.md, "Conventions"). */
export const COMMON_METADATA: readonly MetadataSpec[] = [
  {
    key: 'format',
    description: 'the kind and format version, `voidcast <kind> 1`',
    example: 'voidcast locations 1',
  },
  {
    key: 'zone',
    description: 'time zone of times written without an offset: an IANA name or a fixed offset',
    example: 'Europe/Berlin',
  },
  {
    key: 'units',
    description: 'units of columns whose header carries none, as `quantity=unit` pairs',
    example: 'counts=raw volume=L',
  },
  {
    key: 'delimiter',
    description: 'the cell delimiter: `,` `;` or `tab` (else detected from the header)',
    example: ';',
  },
  {
    key: 'decimal',
    description: 'the decimal separator of numbers: `.` or `,` (`,` needs delimiter `;` or tab)',
    example: ',',
  },
];

const KEY_LINE = /^([A-Za-z][A-Za-z0-9_]*)\s*:\s*(.*)$/;

export interface Metadata {
  entries: Map<string, string>;
  /** Line of each entry, for issues. */
  lines: Map<string, number>;
  units: Map<string, string>;
  delimiter: Delimiter | null;
  decimal: '.' | ',' | null;
  zone: Zone | null;
  issues: KindIssue[];
  notes: string[];
}

/** Parses the metadata lines against the keys a kind knows (plus the common ones). */
export function parseMetadata(
  lines: readonly MetadataLine[],
  kindKeys: readonly MetadataSpec[],
  kind: string,
): Metadata {
  const known = new Set([...COMMON_METADATA, ...kindKeys].map((k) => k.key));
  const md: Metadata = {
    entries: new Map(),
    lines: new Map(),
    units: new Map(),
    delimiter: null,
    decimal: null,
    zone: null,
    issues: [],
    notes: [],
  };
  for (const l of lines) {
    const m = KEY_LINE.exec(l.text);
    if (!m) continue; // a free comment
    const key = m[1]!.toLowerCase();
    const value = m[2]!.trim();
    if (md.entries.has(key)) {
      md.issues.push({
        line: l.line,
        column: null,
        value: `# ${l.text}`,
        rule: `metadata key "${key}" is given twice (first on line ${md.lines.get(key)})`,
      });
      continue;
    }
    md.entries.set(key, value);
    md.lines.set(key, l.line);
    if (!known.has(key)) {
      md.notes.push(`ignored metadata line ${l.line}: "${key}" is not a key of ${kind} files`);
      continue;
    }
    const bad = (rule: string) => md.issues.push({ line: l.line, column: null, value: `# ${l.text}`, rule });
    switch (key) {
      case 'format': {
        const f = /^voidcast\s+([a-z-]+)\s+(\d+)$/i.exec(value);
        if (!f) bad('format must read "voidcast <kind> <version>", e.g. "voidcast locations 1"');
        else if (f[1]!.toLowerCase() !== kind)
          bad(`this file declares kind "${f[1]}" but is imported as ${kind}`);
        else if (f[2] !== '1') bad(`format version ${f[2]} is not supported (this build reads version 1)`);
        break;
      }
      case 'zone': {
        const z = parseZone(value);
        if (typeof z === 'string') bad(z);
        else md.zone = z;
        break;
      }
      case 'delimiter': {
        const d = value === 'tab' || value === '\\t' ? '\t' : value;
        if (d === ',' || d === ';' || d === '\t') md.delimiter = d;
        else bad('delimiter must be "," ";" or "tab"');
        break;
      }
      case 'decimal': {
        if (value === '.' || value === ',') md.decimal = value;
        else bad('decimal must be "." or ","');
        break;
      }
      case 'units': {
        for (const pair of value.split(/[\s,]+/).filter(Boolean)) {
          const p = /^([A-Za-z][A-Za-z0-9_]*)=(\S+)$/.exec(pair);
          if (!p) {
            bad(`units entry "${pair}" must read quantity=unit, e.g. volume=L`);
            continue;
          }
          const q = p[1]!.toLowerCase();
          if (md.units.has(q)) bad(`units entry for "${q}" is given twice`);
          else md.units.set(q, p[2]!);
        }
        break;
      }
      default:
        break;
    }
  }
  if (md.decimal === ',' && md.delimiter === ',') {
    md.issues.push({
      line: md.lines.get('decimal') ?? 0,
      column: null,
      value: '# decimal: ,',
      rule: 'a decimal comma needs another delimiter: declare "# delimiter: ;"',
    });
  }
  return md;
}
