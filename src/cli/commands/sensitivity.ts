/**
 * `voidcast sensitivity --pair ID | --lot ID [--json]`: the tornado of the call — each uncertain input
 * over its stated range, one at a time, and the value at which the call would change.
 */
import { fmtCount } from '../../engine/format.ts';
import { EngineInputError } from '../../engine/pair.ts';
import {
  ScenarioError,
  type SensitivityResult,
  sensitivity as sensitivityOf,
} from '../../engine/tuning/index.ts';
import { parseOptions } from '../args.ts';
import { type Command, EXIT, UsageError } from '../io.ts';
import { openExisting, parseAsOf } from './assess.ts';
import { commandAsOf } from './whatif.ts';
import { openSubjectContext } from './whatif-levers.ts';

function table(rows: string[][]): string {
  const widths = rows[0]!.map((_, i) => Math.max(...rows.map((r) => (r[i] ?? '').length)));
  return rows
    .map((r) => r.map((c, i) => (i === r.length - 1 ? c : c.padEnd(widths[i]!))).join('  '))
    .join('\n');
}

function v(x: number, unit: string): string {
  const t = `${+x.toPrecision(3)}`;
  return unit === '×' ? `×${t}` : unit === '1' ? t : `${t} ${unit}`;
}

/** The tornado in words, largest swing first. */
export function renderSensitivity(s: SensitivityResult): string {
  const out = [
    `Sensitivity of the call — ${s.subject.kind} ${s.subject.id}, as of ${new Date(s.asOfMs).toISOString()}`,
    `as is: ${s.base.call.toUpperCase()}, expected voids ${fmtCount(s.base.voids)}${s.base.dieLoss === null ? '' : `, killed dies ${fmtCount(s.base.dieLoss)}`}`,
    '',
    table([
      ['input', 'range', 'voids low → high', 'killed dies low → high', 'calls', 'flip point'],
      ...s.rows.map((r) => [
        r.label,
        `${v(r.low, r.unit)} – ${v(r.high, r.unit)}`,
        `${fmtCount(r.voidsAtLow)} → ${fmtCount(r.voidsAtHigh)}`,
        r.dieLossAtLow === null || r.dieLossAtHigh === null
          ? '—'
          : `${fmtCount(r.dieLossAtLow)} → ${fmtCount(r.dieLossAtHigh)}`,
        `${r.callAtLow.toUpperCase()} / ${r.callAtHigh.toUpperCase()}`,
        r.specFlip.value === null ? r.flip.text : `${r.flip.text}; ${r.specFlip.text}`,
      ]),
    ]),
    '',
    'Ranges:',
    ...s.rows.map((r) => `  ${r.label}: ${r.rangeSource}`),
    ...s.notVaried.map((n) => `  not varied — ${n.input}: ${n.reason}`),
  ];
  return `${out.join('\n')}\n`;
}

export const sensitivity: Command = {
  name: 'sensitivity',
  summary: 'which uncertain input the call of a pair or lot is most sensitive to, and where it would flip',
  usage: `voidcast sensitivity --pair ID | --lot ID [--json] [--as-of TIME] [--data DIR]

  Each uncertain input (interface energy, tail slope, deposition velocity, closed-carrier isolation,
  every tool's adders, every clean's d50) over its stated range, one at a time: expected voids and
  killed dies at both ends, the calls there, and the value where the call changes (the flip point,
  by bisection to 0.01 decade) or "no flip within range" — and, found the same way, where the spec
  verdict (within / outside spec) changes when the call does not. Largest swing in voids first.

  --json   {subject, asOfMs, base {voids, dieLoss, call, withinSpec}, rows [{input, label, unit, nominal, low, high,
           rangeSource, voidsAtLow, voidsAtHigh, dieLossAtLow, dieLossAtHigh, callAtLow, callAtHigh,
           withinSpecAtLow, withinSpecAtHigh, swingVoids, flip {value, call, text},
           specFlip {value, withinSpec, text}}], notVaried [{input, reason}]}

  exit codes: 0 done, 2 usage, 4 no database or no such pair or lot, 1 the data cannot be assessed`,
  async run(argv, io) {
    const { values } = parseOptions(argv, {
      pair: { type: 'string' },
      lot: { type: 'string' },
      json: { type: 'boolean' },
      'as-of': { type: 'string' },
      data: { type: 'string' },
    });
    if ((values.pair === undefined) === (values.lot === undefined))
      throw new UsageError('give exactly one of --pair or --lot');
    parseAsOf(values['as-of'], 0);
    const { db, file } = openExisting(values.data, io);
    if (!db) {
      io.err(`voidcast sensitivity: no database at ${file} (import data or start the server first)\n`);
      return EXIT.notFound;
    }
    try {
      const asOfMs = commandAsOf(db, values['as-of'], 'sensitivity', io);
      const ctx = openSubjectContext(db, values, asOfMs, 'sensitivity', io);
      if (!ctx) return EXIT.notFound;
      const s = sensitivityOf(ctx);
      io.out(values.json ? `${JSON.stringify(s)}\n` : renderSensitivity(s));
      return EXIT.ok;
    } catch (e) {
      if (e instanceof ScenarioError || e instanceof EngineInputError) {
        io.err(`voidcast sensitivity: ${e.message}\n`);
        return EXIT.failure;
      }
      throw e;
    } finally {
      db.close();
    }
  },
};
