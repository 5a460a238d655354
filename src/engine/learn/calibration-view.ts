/**
 * The calibration as its page shows it: every inspected pair assessed, matched and fitted, the
 * backtest, and the wafer's size for the maps; or the reason the inspected pairs cannot be assessed.
 */
import type { Db } from '../../store/db.ts';
import { EngineInputError } from '../pair.ts';
import { calibrateWithBacktest } from './backtest.ts';
import type { BacktestReport, CalibrationReport } from './calibration-types.ts';
import { loadInspectedLots } from './loader.ts';

export interface CalibrationView {
  calibration: CalibrationReport;
  backtest: BacktestReport;
  waferDiameterM: number;
  edgeExclusionM: number;
}

export function calibrationViewFromDb(db: Db): CalibrationView | { problem: string } {
  try {
    const { lots } = loadInspectedLots(db);
    const r = calibrateWithBacktest(lots);
    const product = lots[0] ? Object.values(lots[0].line.products)[0] : undefined;
    return {
      ...r,
      waferDiameterM: product?.waferDiameterM ?? 0.3,
      edgeExclusionM: product?.edgeExclusionM ?? 0,
    };
  } catch (e) {
    if (e instanceof EngineInputError) return { problem: e.message };
    throw e;
  }
}
