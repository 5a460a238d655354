/**
 * The k largest of n weighted items without sorting all n: a bounded binary min-heap holds the
 * best k seen so far (its root the weakest of them), so picking costs O(n log k) time and O(k)
 * memory instead of the O(n log n) of a full sort — the void map keeps its few hundred largest
 * discs out of up to millions of detected particles.
 *
 * Order: by weight descending, ties by index ascending — exactly what a stable full sort by
 * weight descending followed by `slice(0, k)` gives (test/unit/engine/top-k.test.ts checks the
 * two agree on generated inputs).
 */

/** Indices i in [0, n) with include(i), the k with the largest weight(i), best first. */
export function topKIndices(
  n: number,
  k: number,
  weight: (i: number) => number,
  include: (i: number) => boolean = () => true,
): number[] {
  if (k <= 0 || n <= 0) return [];
  const heap: number[] = []; // indices; heap[0] is the weakest kept
  const hw: number[] = []; // their weights, alongside
  // a is weaker than b: smaller weight, or the same weight and a later index
  const weaker = (wa: number, ia: number, wb: number, ib: number) => wa < wb || (wa === wb && ia > ib);
  const swap = (a: number, b: number) => {
    const ti = heap[a]!;
    heap[a] = heap[b]!;
    heap[b] = ti;
    const tw = hw[a]!;
    hw[a] = hw[b]!;
    hw[b] = tw;
  };
  const down = (at: number) => {
    const m = heap.length;
    for (;;) {
      const l = 2 * at + 1;
      const r = l + 1;
      let min = at;
      if (l < m && weaker(hw[l]!, heap[l]!, hw[min]!, heap[min]!)) min = l;
      if (r < m && weaker(hw[r]!, heap[r]!, hw[min]!, heap[min]!)) min = r;
      if (min === at) return;
      swap(at, min);
      at = min;
    }
  };
  for (let i = 0; i < n; i++) {
    if (!include(i)) continue;
    const w = weight(i);
    if (heap.length < k) {
      heap.push(i);
      hw.push(w);
      let at = heap.length - 1;
      while (at > 0) {
        const up = (at - 1) >> 1;
        if (!weaker(hw[at]!, heap[at]!, hw[up]!, heap[up]!)) break;
        swap(at, up);
        at = up;
      }
    } else if (weaker(hw[0]!, heap[0]!, w, i)) {
      heap[0] = i;
      hw[0] = w;
      down(0);
    }
  }
  const out = heap.map((i, j) => ({ i, w: hw[j]! }));
  out.sort((a, b) => b.w - a.w || a.i - b.i);
  return out.map((x) => x.i);
}

/** How many indices in [0, n) satisfy include(i) (for the count of items left out). */
export function countIncluded(n: number, include: (i: number) => boolean): number {
  let c = 0;
  for (let i = 0; i < n; i++) if (include(i)) c++;
  return c;
}
