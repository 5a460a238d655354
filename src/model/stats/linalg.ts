/**
 * Small dense linear algebra for the fits of the model library (information matrices of 2–3
 * parameters): inversion and solving by Gauss–Jordan elimination.
 */
import { ModelInputError } from '../errors.ts';

/**
 * Inverse of a small symmetric positive-definite matrix by Gauss–Jordan elimination without
 * pivoting (a positive-definite matrix needs none; Golub & Van Loan, *Matrix Computations*, 4th ed.
 * 2013, §4.2). Returns null when a pivot is not > 0 (singular, or not positive definite) — for an
 * information matrix: a parameter the data do not determine.
 *
 * An inverse with an entry that overflows a double is numerically singular too: null as well.
 *
 * @param a n × n matrix as rows of finite numbers (n ≤ 10 in use); not changed
 * @returns the inverse as rows, or null
 * @throws ModelInputError when `a` is not an array of n arrays of n finite numbers
 * @example invertSymmetricMatrix([[4, 2], [2, 3]]) // [[0.375, −0.25], [−0.25, 0.5]]
 */
export function invertSymmetricMatrix(a: readonly (readonly number[])[]): number[][] | null {
  const fn = 'invertSymmetricMatrix';
  if (!Array.isArray(a)) throw new ModelInputError(fn, 'a', '', 'an array of rows', a);
  const n = a.length;
  for (let r = 0; r < n; r++) {
    const row = a[r];
    if (!Array.isArray(row) || row.length !== n)
      throw new ModelInputError(fn, `a[${r}]`, '', `an array of ${n} numbers (a square matrix)`, row);
    for (let c = 0; c < n; c++)
      if (typeof row[c] !== 'number' || !Number.isFinite(row[c]))
        throw new ModelInputError(fn, `a[${r}][${c}]`, '', 'a finite number', row[c]);
  }
  const m = a.map((row, i) => [...row, ...Array.from({ length: n }, (_, j) => (i === j ? 1 : 0))]);
  for (let c = 0; c < n; c++) {
    const pivot = m[c]![c]!;
    if (!(pivot > 0) || !Number.isFinite(pivot)) return null;
    for (let j = 0; j < 2 * n; j++) m[c]![j]! /= pivot;
    for (let r = 0; r < n; r++) {
      if (r === c) continue;
      const f = m[r]![c]!;
      for (let j = 0; j < 2 * n; j++) m[r]![j]! -= f * m[c]![j]!;
    }
  }
  const inv = m.map((row) => row.slice(n));
  for (const row of inv) for (const v of row) if (!Number.isFinite(v)) return null;
  return inv;
}
