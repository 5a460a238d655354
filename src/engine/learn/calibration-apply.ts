/**
 * Applying fitted values to the line's typed ones, in one call, for the calibration's own
 * reassessments and the backtest.
 */
import type { ParameterValues } from '../parameter-set-types.ts';
import type { LineData, ProductInput } from '../types.ts';

/** The line with the fitted interface energies in place of the products' typed ones. */
export function applyCalibrationValues(line: LineData, values: ParameterValues): LineData {
  const products: Record<string, ProductInput> = { ...line.products };
  for (const f of Object.values(values.voidSize)) {
    const p = products[f.productId];
    if (!p) continue;
    products[f.productId] = { ...p, surfacePrep: { ...p.surfacePrep, energyJm2: f.energyJm2 } };
  }
  return { ...line, products };
}
