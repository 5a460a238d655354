/**
 * topKIndices (src/engine/top-k.ts) against its plain twin — a stable full sort by weight
 * descending and slice(0, k), as the void map picked its discs before — on generated inputs
 * (fast-check): the same indices in the same order, ties included. Expected values: the twin, and
 * a hand computation for the small case.
 */
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { countIncluded, topKIndices } from '../../../src/engine/top-k.ts';

/** The plain version: every included index, sorted (stable) by weight descending, the first k. */
function topKBySort(n: number, k: number, weight: (i: number) => number, include: (i: number) => boolean) {
  const order = Array.from({ length: n }, (_, i) => i).filter(include);
  order.sort((a, b) => weight(b) - weight(a));
  return order.slice(0, Math.max(0, k));
}

describe('topKIndices', () => {
  it('picks the largest, best first, ties by index (hand computation)', () => {
    const w = [3, 9, 1, 9, 5, 0];
    expect(topKIndices(w.length, 3, (i) => w[i]!)).toEqual([1, 3, 4]);
    expect(
      topKIndices(
        w.length,
        3,
        (i) => w[i]!,
        (i) => i !== 1,
      ),
    ).toEqual([3, 4, 0]);
    expect(topKIndices(w.length, 0, (i) => w[i]!)).toEqual([]);
    expect(topKIndices(w.length, 10, (i) => w[i]!)).toEqual([1, 3, 4, 0, 2, 5]);
    expect(countIncluded(w.length, (i) => w[i]! > 2)).toBe(4);
  });

  it('agrees with the full sort on random weights, filters and k (many ties)', () => {
    fc.assert(
      fc.property(
        fc.array(fc.oneof(fc.integer({ min: 0, max: 6 }), fc.double({ min: 0, max: 1e-6, noNaN: true })), {
          maxLength: 400,
        }),
        fc.integer({ min: 0, max: 450 }),
        fc.integer({ min: 1, max: 5 }),
        (w, k, mod) => {
          const include = (i: number) => i % mod !== 0 || mod === 1;
          expect(topKIndices(w.length, k, (i) => w[i]!, include)).toEqual(
            topKBySort(w.length, k, (i) => w[i]!, include),
          );
        },
      ),
      { seed: 17_301, numRuns: 500 },
    );
  });
});
