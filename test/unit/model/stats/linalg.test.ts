/**
 * invertSymmetricMatrix: Gauss–Jordan inverse of a small symmetric positive-definite matrix.
 * Expected values by hand computation (2 × 2: [[a, b], [b, d]]⁻¹ = [[d, −b], [−b, a]] / (ad − b²)).
 */
import { describe, expect, it } from 'vitest';
import { ModelInputError } from '../../../../src/model/errors.ts';
import { invertSymmetricMatrix } from '../../../../src/model/stats/linalg.ts';

describe('invertSymmetricMatrix', () => {
  it('inverts the doc example: [[4, 2], [2, 3]]⁻¹ = [[3, −2], [−2, 4]] / 8 (hand computation; 1e-15 rounding)', () => {
    const inv = invertSymmetricMatrix([
      [4, 2],
      [2, 3],
    ])!;
    expect(inv[0]![0]).toBeCloseTo(0.375, 15);
    expect(inv[0]![1]).toBeCloseTo(-0.25, 15);
    expect(inv[1]![0]).toBeCloseTo(-0.25, 15);
    expect(inv[1]![1]).toBeCloseTo(0.5, 15);
  });

  it('returns null for a singular matrix and for an inverse that overflows a double', () => {
    expect(
      invertSymmetricMatrix([
        [1, 1],
        [1, 1],
      ]),
    ).toBeNull();
    // 1 / 5e-324 is Infinity: numerically singular.
    expect(invertSymmetricMatrix([[5e-324]])).toBeNull();
  });

  it('refuses what is not a square matrix of finite numbers, naming the entry', () => {
    expect(() => invertSymmetricMatrix(Number.NaN as unknown as number[][])).toThrow(
      /invertSymmetricMatrix: a = NaN is out of range; allowed an array of rows/,
    );
    expect(() => invertSymmetricMatrix([[1, 2]])).toThrow(/a\[0\] = \[1,2\] is out of range/);
    expect(() =>
      invertSymmetricMatrix([
        [1, Number.NaN],
        [Number.NaN, 1],
      ]),
    ).toThrow(/invertSymmetricMatrix: a\[0\]\[1\] = NaN/);
    expect(() => invertSymmetricMatrix([['1'] as unknown as number[]])).toThrow(ModelInputError);
  });
});
