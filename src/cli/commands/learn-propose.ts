/**
 * Proposing what `voidcast learn` fitted as a parameter set: `--propose --as NAME [--label TEXT]` on
 * `learn adders` and `learn removal` (their own values only), and `voidcast learn all`, which fits
 * the whole line — every tool's adders, every clean's removal, the calibration with those applied
 * (src/engine/learn/propose.ts) — and prints one line per fit, proposing them as ONE set with
 * --propose. Nothing is adopted: a person adopts a set with `voidcast params adopt`.
 */
import type { ParseArgsConfig } from 'node:util';
import { fmtCount, fmtMm2, fmtPercent, fmtSize } from '../../engine/format.ts';
import {
  adderProposals,
  type LineLearning,
  learnLine,
  proposeLineParameters,
  removalProposals,
} from '../../engine/learn/propose.ts';
import type { AddersReport, RemovalReport } from '../../engine/learn/types.ts';
import type { ParameterValues } from '../../engine/parameter-set-types.ts';
import { type ProposeOutcome, proposeParameterSet } from '../../engine/parameter-sets.ts';
import { emptyParameterValues } from '../../engine/parameters.ts';
import type { Db } from '../../store/db.ts';
import { type CliIo, EXIT, UsageError } from '../io.ts';

type Options = NonNullable<ParseArgsConfig['options']>;
type Values = Record<string, string | boolean | (string | boolean)[] | undefined>;

/** The options that propose: --propose, --as, --label. */
export const PROPOSE_OPTIONS: Options = {
  propose: { type: 'boolean' },
  as: { type: 'string' },
  label: { type: 'string' },
};

export interface ProposeRequest {
  who: string;
  label: string | null;
}

/** The proposal asked for, null when none; a UsageError for --propose without --as, or --as alone. */
export function proposeRequest(values: Values): ProposeRequest | null {
  const propose = Boolean(values.propose);
  const who = typeof values.as === 'string' ? values.as.trim() : '';
  if (propose && !who) throw new UsageError('--propose needs --as NAME: who proposes the set');
  if (!propose && (values.as !== undefined || values.label !== undefined))
    throw new UsageError('--as and --label go with --propose');
  if (!propose) return null;
  const label = typeof values.label === 'string' && values.label.trim() ? values.label.trim() : null;
  return { who, label };
}

export interface Proposed {
  proposed: { id: number; version: number; label: string } | null;
  refused: string | null;
}

export function proposedOf(out: ProposeOutcome): Proposed {
  return out.ok
    ? { proposed: { id: out.set.id, version: out.set.version, label: out.set.label }, refused: null }
    : { proposed: null, refused: out.message };
}

/** The closing lines of a proposal (text output). */
export function proposedText(p: Proposed, who: string): string {
  if (p.proposed)
    return `\nProposed as parameter set ${p.proposed.id} (version ${p.proposed.version}, “${p.proposed.label}”) by ${who}; adopt it with: voidcast params adopt ${p.proposed.id} --as NAME\n`;
  return p.refused ? `\nNot proposed: ${p.refused}\n` : '';
}

/** Proposes the adders report's values alone (learn adders --propose). */
export function proposeAdders(db: Db, rep: AddersReport, req: ProposeRequest, toolId?: string): Proposed {
  const a = adderProposals(rep);
  const values: ParameterValues = { ...emptyParameterValues(), adders: a.values };
  const label = req.label ?? `adders per wafer pass of ${toolId ?? 'every tool'}, from the line’s scans`;
  return proposedOf(proposeParameterSet(db, values, a.notes, label, req.who));
}

/** Proposes the removal report's values alone (learn removal --propose). */
export function proposeRemoval(db: Db, rep: RemovalReport, req: ProposeRequest, cleanId?: string): Proposed {
  const r = removalProposals(rep);
  const values: ParameterValues = { ...emptyParameterValues(), removal: r.values };
  const label = req.label ?? `removal curves of ${cleanId ?? 'every clean'}, from the line’s scans`;
  return proposedOf(proposeParameterSet(db, values, r.notes, label, req.who));
}

function row(subject: string, text: string, width: number): string {
  return `  ${subject.padEnd(width)}  ${text}`;
}

/** One line per fit: the value with its interval and n, or the too-little-data reason. */
export function renderLineLearning(l: LineLearning): string {
  const out: string[] = ['Learned from the line’s scans and void inspections (95 % intervals)', ''];
  const subjects = [
    ...l.adders.results.map((r) => r.toolKey),
    ...l.removal.results.map((r) => r.cleanId),
    ...(l.calibration?.products ?? []).map((p) => p.productId),
  ];
  const w = Math.max(8, ...subjects.map((s) => s.length));
  out.push('Adders per wafer pass');
  if (l.adders.results.length === 0) out.push('  no pass through a tool lies between two scans of a wafer');
  for (const r of l.adders.results) {
    const p = r.proposal;
    out.push(
      row(
        r.toolKey,
        p
          ? `${fmtCount(p.countAbove)} ≥ ${fmtSize(p.atDiameterM)} [${fmtCount(p.countLow)}–${fmtCount(p.countHigh)}], slope ${fmtCount(p.slope)} ± ${fmtCount(p.slopeSe)}; n = ${p.passes} passes`
          : (r.tooLittle ?? 'nothing proposed'),
        w,
      ),
    );
  }
  out.push('Removal by clean');
  if (l.removal.results.length === 0) out.push('  no pass through a clean lies between two scans of a wafer');
  for (const r of l.removal.results) {
    const p = r.proposal;
    out.push(
      row(
        r.cleanId,
        p
          ? `maximum ${fmtPercent(p.maxEfficiency)}, d50 ${fmtSize(p.halfSizeM)} [${fmtSize(p.halfSizeLowM)}–${fmtSize(p.halfSizeHighM)}], width ${fmtCount(p.widthDecades)} [${fmtCount(p.widthLowDecades)}–${fmtCount(p.widthHighDecades)}] decades; n = ${p.n} particles`
          : (r.tooLittle ?? 'nothing proposed'),
        w,
      ),
    );
  }
  out.push('Calibration from void inspections (with the fitted adders and removal applied)');
  if (!l.calibration) out.push('  no bonded lot has a void inspection');
  for (const p of l.calibration?.products ?? []) {
    const v = p.voidSize.fitted;
    out.push(
      row(
        p.productId,
        v
          ? `interface energy ${fmtCount(v.energyJm2)} J/m² [${fmtCount(v.energyLowJm2)}–${fmtCount(v.energyHighJm2)}] (typed ${fmtCount(p.voidSize.typedEnergyJm2)}); n = ${v.n} explained voids`
          : `interface energy not fitted: ${p.voidSize.note}`,
        w,
      ),
    );
    const u = p.unexplained.fitted;
    out.push(
      row(
        '',
        u
          ? `unexplained voids ${fmtCount(u.ratePerPair)} per pair [${fmtCount(u.rateLowPerPair)}–${fmtCount(u.rateHighPerPair)}], mean ${fmtSize(u.meanDiameterM)} (${fmtMm2(u.meanAreaM2)} each); n = ${u.n} pairs`
          : `unexplained voids not proposed: ${p.unexplained.note ?? 'nothing to propose'}`,
        w,
      ),
    );
  }
  const c = l.values;
  const held =
    Object.keys(c.adders).length +
    Object.keys(c.removal).length +
    Object.keys(c.voidSize).length +
    Object.keys(c.unexplainedVoids).length;
  const calNotes = l.calibration?.notes ?? [];
  if (calNotes.length) out.push('', 'Notes:', ...calNotes.map((n) => `  - ${n}`));
  out.push(
    '',
    `${held} value${held === 1 ? '' : 's'} with enough data to propose; ${l.notes.length} note${l.notes.length === 1 ? '' : 's'} kept with them.`,
    '',
    'How:',
    ...l.method.map((m) => `  - ${m}`),
    '',
    'Nothing is changed: a proposed set becomes the assessments’ parameters only when a person adopts it (voidcast params adopt).',
  );
  return `${out.join('\n')}\n`;
}

/** Shape of a `voidcast learn` subcommand (src/cli/commands/learn.ts LearnSubcommand). */
export interface ProposeSubcommand {
  name: string;
  summary: string;
  usage: string;
  options: Options;
  run: (db: Db, values: Values, json: boolean, io: CliIo) => number;
}

export const allSubcommand: ProposeSubcommand = {
  name: 'all',
  summary:
    'every fit at once — adders, removal, then the calibration with them applied — proposed as ONE set with --propose',
  usage: '[--propose --as NAME [--label TEXT]]',
  options: PROPOSE_OPTIONS,
  run(db, values, json, io) {
    const req = proposeRequest(values);
    let learning: LineLearning;
    let p: Proposed = { proposed: null, refused: null };
    if (req) {
      const r = proposeLineParameters(db, req.who, req.label ?? undefined);
      learning = r.learning;
      p = proposedOf(r.outcome);
    } else learning = learnLine(db);
    if (json) io.out(`${JSON.stringify({ ...learning, ...p })}\n`);
    else io.out(renderLineLearning(learning) + (req ? proposedText(p, req.who) : ''));
    return p.refused ? EXIT.rejected : EXIT.ok;
  },
};
