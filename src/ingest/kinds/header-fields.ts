/**
 * Reading the metadata block of the record kinds (scans, void inspections): each `# key: value`
 * entry goes through the same zod cells as a table cell (src/ingest/cells.ts), so a value in the
 * metadata block and the same value in a column obey one rule. Issues name the metadata line, and
 * `value` shows the line as written (`# threshold_nm: abc`), as src/ingest/metadata.ts does.
 */
import { runCell } from '../cells.ts';
import { parseIsoTime, parseZone, type Zone } from '../time.ts';
import type { Cell, FileContext, KindIssue, MetadataSpec } from '../types.ts';
import { type FrameConvention, parseCoordinates } from './wafer-frame.ts';

/**
 * v · 10^(−digits) as the double nearest to the decimal result ("-120.4" mm → −0.1204 m), by shifting
 * the exponent in the number's shortest text form; plain division (−120.4 / 1000 = −0.12040000000000001)
 * can land one unit in the last place away. Falls back to division for numbers already written with
 * an exponent.
 */
export function shiftDecimal(v: number, digits: number): number {
  const t = String(v);
  if (t.includes('e')) return v / 10 ** digits;
  return Number(`${t}e-${digits}`);
}

export interface HeaderFieldReader {
  issues: KindIssue[];
  zone: Zone | null;
  /** The raw text of an entry, or undefined. */
  raw: (key: string) => string | undefined;
  /** The line of an entry (0 when absent). */
  line: (key: string) => number;
  /** An entry through a cell; a missing required entry or a bad value adds an issue and returns undefined. */
  get: <T>(key: string, cell: Cell<T>, required: boolean) => T | undefined;
  /** A time entry (ISO 8601 with offset, or the file's zone): { ms, text }. */
  time: (key: string, required: boolean) => { ms: number; text: string } | undefined;
  /** The `coordinates` and `notch_deg` entries together. */
  convention: (required: boolean) => FrameConvention | undefined;
  /** Issue about an entry (its line, its text as value). */
  issue: (key: string, rule: string) => KindIssue;
}

/** The example line shown for a missing entry, from the kind's metadata specs. */
function exampleOf(specs: readonly MetadataSpec[], key: string): string {
  const s = specs.find((m) => m.key === key);
  return s ? `# ${key}: ${s.example}` : `# ${key}: …`;
}

export function headerFields(ctx: FileContext, specs: readonly MetadataSpec[]): HeaderFieldReader {
  const issues: KindIssue[] = [];
  const raw = (key: string) => {
    const v = ctx.metadata.get(key);
    return v === undefined || v.trim() === '' ? undefined : v.trim();
  };
  const line = (key: string) => ctx.metadataLines?.get(key) ?? 0;
  const issue = (key: string, rule: string): KindIssue => {
    const v = ctx.metadata.get(key);
    return { line: line(key), column: null, value: v === undefined ? null : `# ${key}: ${v}`, rule };
  };
  const missing = (key: string): KindIssue => ({
    line: 0,
    column: null,
    value: null,
    rule: `the metadata block must give ${key} (a line "${exampleOf(specs, key)}" before the header)`,
  });
  let zone: Zone | null = null;
  const zoneText = raw('zone');
  if (zoneText !== undefined) {
    const z = parseZone(zoneText);
    // The metadata parser reports a bad zone already; here it is simply not used.
    if (typeof z !== 'string') zone = z;
  }
  const get = <T>(key: string, cell: Cell<T>, required: boolean): T | undefined => {
    const t = raw(key);
    if (t === undefined) {
      if (required) issues.push(missing(key));
      return undefined;
    }
    const r = runCell(cell, t);
    if (r.ok) return r.value;
    issues.push(issue(key, `${key} ${r.rule}`));
    return undefined;
  };
  return {
    issues,
    zone,
    raw,
    line,
    issue,
    get,
    time: (key, required) => {
      const t = raw(key);
      if (t === undefined) {
        if (required) issues.push(missing(key));
        return undefined;
      }
      const r = parseIsoTime(t, zone);
      if (r.ok) return { ms: r.ms, text: t };
      issues.push(issue(key, `${key} ${r.rule}`));
      return undefined;
    },
    convention: (required) => {
      const c = raw('coordinates');
      const n = raw('notch_deg');
      let conv: Omit<FrameConvention, 'notchDeg'> | undefined;
      if (c === undefined) {
        if (required) issues.push(missing('coordinates'));
      } else {
        const p = parseCoordinates(c);
        if ('rule' in p) issues.push(issue('coordinates', p.rule));
        else conv = p;
      }
      let notch: number | undefined;
      if (n === undefined) {
        if (required) issues.push(missing('notch_deg'));
      } else {
        const v = /^[+-]?(?:\d+(?:\.\d*)?|\.\d+)$/.test(n) ? Number(n) : Number.NaN;
        if (Number.isFinite(v) && v >= 0 && v < 360) notch = v;
        else
          issues.push(
            issue(
              'notch_deg',
              'notch_deg must be the notch angle in the file’s axes, degrees counter-clockwise from +x, at least 0 and less than 360',
            ),
          );
      }
      return conv && notch !== undefined ? { ...conv, notchDeg: notch } : undefined;
    },
  };
}
