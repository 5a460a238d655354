/**
 * Applying fitted values to the line's typed ones, in one call, for the calibration's own
 * reassessments and the backtest: the engine's own application (parameters.ts applyParameterValues:
 * the interface energy replaces the product's typed one) and, for a rate of voids no scanned particle
 * explains, the source of its own the assessment adds (pair.ts), named as an unstored fit.
 */
import type { ParameterValues } from '../parameter-set-types.ts';
import { applyParameterValues, parameterValuesHash } from '../parameters.ts';
import type { LineData } from '../types.ts';

/** The line with `values` applied as an adopted set's would be (label: what the values are). */
export function applyCalibrationValues(
  line: LineData,
  values: ParameterValues,
  label = 'calibration fit (not stored)',
): LineData {
  const applied = applyParameterValues(line, values);
  if (Object.keys(values.unexplainedVoids).length === 0) return applied;
  return {
    ...applied,
    parameters: {
      ref: { id: null, version: null, label, valuesHash: parameterValuesHash(values) },
      unexplainedVoids: { ...values.unexplainedVoids },
    },
  };
}
