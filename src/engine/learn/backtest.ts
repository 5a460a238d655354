/**
 * Backtest of the calibration, leave one lot out (methods.md §4: a calibration is judged on data it
 * was not fitted to). For every bonded lot with inspections:
 *  - before: the assessment with the typed values, at the inspection's smallest reportable void;
 *  - after: the values fitted on the other lots (calibration.ts fitPairs) applied to the line
 *    (calibration-apply.ts, one call) and the lot's pairs assessed again.
 * Per pair, predicted against observed: reportable voids, unbonded area and die kills (dies whose
 * critical area an observed void touches, calibration-match.ts observedFigures). Coverage: the
 * fraction of observed values inside the predicted 95 % interval, before and after.
 */
import { assessPairInSession, createSession } from '../pair.ts';
import type { AssessConfig, LineData } from '../types.ts';
import {
  calibrationMethod,
  calibrationReport,
  fitPairs,
  type PreparedPair,
  pairSeed,
  preparePairs,
} from './calibration.ts';
import { applyCalibrationValues } from './calibration-apply.ts';
import type {
  BacktestLot,
  BacktestPair,
  BacktestReport,
  CalibrationLotInput,
  CalibrationOptions,
  CalibrationReport,
  Coverage,
  ObservedFigures,
  PredictedFigures,
} from './calibration-types.ts';
import { visibleFigures } from './calibration-visible.ts';

function emptyCoverage(): Coverage {
  return { voids: { inside: 0, n: 0 }, unbondedArea: { inside: 0, n: 0 }, dieKills: { inside: 0, n: 0 } };
}

function addCoverage(c: Coverage, obs: ObservedFigures, pred: PredictedFigures): void {
  const within = (v: number, e: { low: number; high: number }) => v >= e.low && v <= e.high;
  c.voids.n++;
  if (within(obs.voids, pred.voids)) c.voids.inside++;
  c.unbondedArea.n++;
  if (within(obs.unbondedAreaM2, pred.unbondedAreaM2)) c.unbondedArea.inside++;
  if (obs.dieKills !== null && pred.dieKills) {
    c.dieKills.n++;
    if (within(obs.dieKills, pred.dieKills)) c.dieKills.inside++;
  }
}

/** Coverage as a fraction (null when nothing was judged). */
export function coverageFraction(x: { inside: number; n: number }): number | null {
  return x.n > 0 ? x.inside / x.n : null;
}

/** Runs the leave-one-lot-out backtest over the given lots. */
export function backtest(
  lots: readonly CalibrationLotInput[],
  opts: CalibrationOptions = {},
): BacktestReport {
  const fittedAtMs = opts.nowMs ?? Date.now();
  const prepared = preparePairs(lots, opts);
  return backtestPrepared(prepared.pairs, opts, fittedAtMs, prepared.notes);
}

/** The backtest over pairs already assessed and matched (preparePairs). */
export function backtestPrepared(
  prepared: readonly PreparedPair[],
  opts: CalibrationOptions,
  fittedAtMs: number,
  notes: string[] = [],
): BacktestReport {
  const lotIds = [...new Set(prepared.map((p) => p.calibration.lotId))].sort();
  const config: Partial<AssessConfig> = opts.draws ? { draws: opts.draws } : {};
  const outLots: BacktestLot[] = [];
  const outPairs: BacktestPair[] = [];
  const before = emptyCoverage();
  const after = emptyCoverage();
  const allNotes = [...notes];
  if (lotIds.length < 2)
    allNotes.push(
      `${lotIds.length} bonded lot${lotIds.length === 1 ? '' : 's'} with inspections: leaving one out needs at least two; no after-calibration figures.`,
    );
  for (const lotId of lotIds) {
    const mine = prepared.filter((p) => p.calibration.lotId === lotId);
    const others = prepared.filter((p) => p.calibration.lotId !== lotId);
    const fit = others.length > 0 ? fitPairs(others, opts, fittedAtMs) : null;
    const values = fit?.values ?? { adders: {}, removal: {}, voidSize: {}, unexplainedVoids: {} };
    const fittedSomething =
      Object.keys(values.voidSize).length > 0 || Object.keys(values.unexplainedVoids).length > 0;
    const lotNotes = fit ? fit.notes.map((n) => `Fitted without ${lotId}: ${n}`) : [];
    if (fit && !fittedSomething)
      lotNotes.push(`Nothing could be fitted without ${lotId}: its after figures are not shown.`);
    const sessions = new Map<LineData, ReturnType<typeof createSession>>();
    let sumObs = 0;
    let sumBefore = 0;
    let sumAfter = 0;
    for (const p of mine) {
      const c = p.calibration;
      let predicted: PredictedFigures | null = null;
      if (fittedSomething) {
        let s = sessions.get(p.line);
        if (!s) {
          s = createSession(applyCalibrationValues(p.line, values, `fitted without lot ${lotId}`), config);
          sessions.set(p.line, s);
        }
        const a = assessPairInSession(p.pair, s, { asOfMs: p.asOfMs, detail: 'full' });
        const unexplained = values.unexplainedVoids[c.productId];
        predicted = visibleFigures(
          a,
          p.dieGrid,
          p.bondedRadiusM,
          pairSeed(c.pairId),
          unexplained ? Math.sqrt(unexplained.meanAreaM2 / Math.PI) : null,
        );
        addCoverage(after, c.observed, predicted);
        sumAfter += predicted.voids.value;
      }
      addCoverage(before, c.observed, c.predicted);
      sumObs += c.observed.voids;
      sumBefore += c.predicted.voids.value;
      outPairs.push({ pairId: c.pairId, lotId, observed: c.observed, before: c.predicted, after: predicted });
    }
    outLots.push({
      lotId,
      fittedOn: [...new Set(others.map((p) => p.calibration.lotId))].sort(),
      values,
      notes: lotNotes,
      observedVoids: sumObs,
      predictedVoidsBefore: sumBefore,
      predictedVoidsAfter: fittedSomething ? sumAfter : null,
    });
    allNotes.push(...lotNotes);
  }
  return {
    lots: outLots,
    pairs: outPairs,
    coverageBefore: before,
    coverageAfter: after,
    notes: allNotes,
    method: [
      'Leave one lot out: each bonded lot is predicted with the values fitted on the other lots only.',
      'Before: the typed values. After: the fitted interface energy and rate of unexplained voids applied.',
      'Observed inside the bonded area: reportable voids, their area (from each void’s equivalent diameter), and die kills (dies whose pad array — or the whole die — a void touches).',
      'Coverage: the fraction of observed values inside the predicted 95 % interval (near 95 % when calibrated).',
      ...calibrationMethod(opts),
    ],
  };
}

/**
 * The calibration and its backtest from one assessment of every inspected pair (what the Calibration
 * page shows): the same figures as calibrate() and backtest() run apart.
 */
export function calibrateWithBacktest(
  lots: readonly CalibrationLotInput[],
  opts: CalibrationOptions = {},
): { calibration: CalibrationReport; backtest: BacktestReport } {
  const fittedAtMs = opts.nowMs ?? Date.now();
  const prepared = preparePairs(lots, opts);
  return {
    calibration: calibrationReport(prepared, opts, fittedAtMs),
    backtest: backtestPrepared(prepared.pairs, opts, fittedAtMs, prepared.notes),
  };
}
