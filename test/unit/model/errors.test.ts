/**
 * plainModelError: a model's range error in words a person reads (no function or parameter
 * identifiers). Expected strings are hand-written from the rule in src/model/errors.ts.
 */
import { describe, expect, it } from 'vitest';
import { ModelInputError, plainModelError, requireNumber } from '../../../src/model/errors.ts';

function caught(f: () => unknown): ModelInputError {
  try {
    f();
  } catch (e) {
    if (e instanceof ModelInputError) return e;
  }
  throw new Error('expected a ModelInputError');
}

describe('plainModelError', () => {
  it('drops the function name and the unit suffix, splits the identifier into words', () => {
    const e = caught(() =>
      requireNumber('poissonYield', 'expectedDefects', 2e6, 'defects per die', { min: 0, max: 1e6 }),
    );
    expect(e.message).toBe(
      'poissonYield: expectedDefects = 2000000 defects per die is out of range; allowed ≥ 0 defects per die and ≤ 1000000 defects per die',
    );
    expect(plainModelError(e)).toBe(
      'expected defects = 2000000 defects per die is out of range; allowed ≥ 0 defects per die and ≤ 1000000 defects per die',
    );
    expect(plainModelError(new ModelInputError('voidRadius', 'heightM', 'm', '> 0 m', -1))).toBe(
      'height = -1 m is out of range; allowed > 0 m',
    );
    expect(plainModelError(new ModelInputError('voidRadius', 'top.thicknessM', 'm', '≤ 0.01 m', 1))).toBe(
      'thickness = 1 m is out of range; allowed ≤ 0.01 m',
    );
    expect(plainModelError(new ModelInputError('f', 'detected[3].radiusM', 'm', '≥ 0 m', Number.NaN))).toBe(
      'radius = NaN m is out of range; allowed ≥ 0 m',
    );
  });
});
