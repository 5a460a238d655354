/**
 * Small dense linear algebra for the fits of the model library (information matrices of 2–3
 * parameters): inversion and solving by Gauss–Jordan elimination.
 */

/**
 * Inverse of a small symmetric positive-definite matrix by Gauss–Jordan elimination without
 * pivoting (a positive-definite matrix needs none; Golub & Van Loan, *Matrix Computations*, 4th ed.
 * 2013, §4.2). Returns null when a pivot is not > 0 (singular, or not positive definite) — for an
 * information matrix: a parameter the data do not determine.
 *
 * @param a n × n matrix as rows (n ≤ 10 in use); not changed
 * @returns the inverse as rows, or null
 * @example invertSymmetricMatrix([[4, 2], [2, 3]]) // [[0.375, −0.25], [−0.25, 0.5]]
 */
export function invertSymmetricMatrix(a: readonly (readonly number[])[]): number[][] | null {
  const n = a.length;
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
  return m.map((row) => row.slice(n));
}
