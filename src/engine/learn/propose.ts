/**
 * Learning the whole line at once and proposing what it learned as ONE parameter set (docs/engine.md
 * "Proposing what the line taught"): the adders per pass of every tool and chamber, the removal curve
 * of every clean, and the calibration from the void inspections (effective interface energy and the
 * rate of voids no source explains, per product). Every value with enough data goes into the set;
 * every fit that proposed nothing leaves its too-little-data reason in the set's notes.
 *
 * Order and coupling — Choice: the scans' fits come first and are independent of each other (an
 * adder fit counts new defects, a removal fit follows the particles already there). The calibration
 * then assesses the inspected pairs with the scans' fitted adders and removal curves applied
 * (applyParameterValues, as an adopted set applies them), so that its predicted discs carry the fitted
 * survival and the unexplained-void rate is the excess over the unscanned sources as the proposed set
 * itself models them — adopting the set then counts no source twice. `voidcast learn calibration` and
 * the Calibration page, run alone, measure against the typed values instead.
 *
 * Nothing is adopted by proposing: the set waits for a person (parameter-sets.ts).
 */
import type { Db } from '../../store/db.ts';
import type { FittedAdders, FittedRemoval, ParameterValues } from '../parameter-set-types.ts';
import { type ProposeOutcome, proposeParameterSet } from '../parameter-sets.ts';
import { applyParameterValues, emptyParameterValues } from '../parameters.ts';
import { learnAddersFrom } from './adders.ts';
import { calibrate } from './calibration.ts';
import type { CalibrationOptions, CalibrationReport } from './calibration-types.ts';
import { learnDataFrom, loadInspectedLots } from './loader.ts';
import { learnRemovalFrom } from './removal.ts';
import type { AddersReport, RemovalReport } from './types.ts';

/** What the scans' fits of one kind propose, and the reasons of those that propose nothing. */
export interface FitProposals<T> {
  values: Record<string, T>;
  notes: string[];
}

/** The adders report's proposals by tool key, and "Adders of KEY: too little data: …" for the rest. */
export function adderProposals(rep: AddersReport): FitProposals<FittedAdders> {
  const values: Record<string, FittedAdders> = {};
  const notes: string[] = [];
  for (const r of rep.results) {
    if (r.proposal) values[r.toolKey] = r.proposal;
    else notes.push(`Adders of ${r.toolKey}: ${r.tooLittle ?? 'nothing proposed'}.`);
  }
  return { values, notes };
}

/** The removal report's proposals by clean id, and "Removal of ID: …" for the rest. */
export function removalProposals(rep: RemovalReport): FitProposals<FittedRemoval> {
  const values: Record<string, FittedRemoval> = {};
  const notes: string[] = [];
  for (const r of rep.results) {
    if (r.proposal) values[r.cleanId] = r.proposal;
    else notes.push(`Removal of ${r.cleanId}: ${r.tooLittle ?? 'nothing proposed'}.`);
  }
  return { values, notes };
}

export interface LineLearning {
  fittedAtMs: number;
  adders: AddersReport;
  removal: RemovalReport;
  /** The calibration with the scans' fits applied; null when no bonded lot has a void inspection. */
  calibration: CalibrationReport | null;
  /** Every value with enough data: what a proposed set holds. */
  values: ParameterValues;
  /** The reasons of every fit that proposed nothing, and the calibration's notes. */
  notes: string[];
  /** How the fits were ordered and coupled, in words (for the CLI and the pages). */
  method: string[];
}

export const LINE_LEARNING_METHOD: readonly string[] = [
  'Adders per wafer pass of every tool and chamber and the removal curve of every clean, from wafers scanned before and after them (matched defect by defect).',
  'Then the calibration from the void inspections, with those fitted adders and removal curves applied: the predicted discs carry the fitted survival, and the unexplained-void rate is the excess over the unscanned sources as the proposed set models them (no source counted twice once it is adopted).',
  'A fit on too little data proposes nothing; its reason is kept in the set’s notes.',
];

/** Fits everything the line's scans and void inspections can teach (see the module comment). */
export function learnLine(
  db: Db,
  opts: { nowMs?: number; calibration?: CalibrationOptions } = {},
): LineLearning {
  const fittedAtMs = opts.nowMs ?? Date.now();
  const data = learnDataFrom(db);
  const adders = learnAddersFrom(data, { nowMs: fittedAtMs });
  const removal = learnRemovalFrom(data, { nowMs: fittedAtMs });
  const a = adderProposals(adders);
  const r = removalProposals(removal);
  const scanValues: ParameterValues = { ...emptyParameterValues(), adders: a.values, removal: r.values };
  const { lots } = loadInspectedLots(db);
  const calibration = lots.length
    ? calibrate(
        lots.map((l) => ({ ...l, line: applyParameterValues(l.line, scanValues) })),
        { ...opts.calibration, nowMs: fittedAtMs },
      )
    : null;
  const notes = [...a.notes, ...r.notes];
  if (calibration) notes.push(...calibration.notes.map((n) => `Calibration: ${n}`));
  else notes.push('Calibration: no bonded lot has a void inspection; nothing to calibrate.');
  return {
    fittedAtMs,
    adders,
    removal,
    calibration,
    values: {
      adders: a.values,
      removal: r.values,
      voidSize: { ...(calibration?.values.voidSize ?? {}) },
      unexplainedVoids: { ...(calibration?.values.unexplainedVoids ?? {}) },
    },
    notes,
    method: [...LINE_LEARNING_METHOD],
  };
}

/** The label a whole-line proposal takes when its proposer gives none (lots: the calibrated ones). */
export function lineLabel(lots: readonly string[]): string {
  return lots.length
    ? `fits of the line’s scans and of the void inspections of ${lots.join(', ')}`
    : 'fits of the line’s scans';
}

/**
 * Learns the whole line and proposes it as one parameter set (nothing adopted). Refused as
 * proposeParameterSet refuses: no value with enough data ('empty', the notes handed back) or a
 * missing label or name ('invalid').
 */
export function proposeLineParameters(
  db: Db,
  createdBy: string,
  label?: string,
  opts: { nowMs?: number; calibration?: CalibrationOptions } = {},
): { learning: LineLearning; outcome: ProposeOutcome } {
  const learning = learnLine(db, opts);
  const outcome = proposeParameterSet(
    db,
    learning.values,
    learning.notes,
    label?.trim() ? label.trim() : lineLabel(learning.calibration?.lots ?? []),
    createdBy,
    opts.nowMs,
  );
  return { learning, outcome };
}
