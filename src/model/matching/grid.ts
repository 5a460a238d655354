/**
 * A uniform grid index of points in the plane: "which points lie within r of (x, y)" in time
 * proportional to the points near (x, y), not to all of them.
 *
 * Cells are squares of side `cellM` (for matching, the match radius r_m: a query of radius ≤ r_m then
 * reads at most 3 × 3 cells). The cells are not stored as a dense array — a 300 mm wafer with 30 µm
 * cells would need 10⁸ of them — but hashed into a table of about two slots per point (spatial
 * hashing, as in Teschner et al. 2003, "Optimized spatial hashing for collision detection of
 * deformable objects", VMV 2003; here the hash is the cell's row-major index modulo the table size,
 * which keeps neighbouring cells in neighbouring memory). Points are laid out slot by slot by a
 * counting sort, so building is linear in the number of points and memory is a few numbers per
 * point. Each point keeps its cell coordinates, so two cells that share a slot never mix in a
 * query's answer. `order` lists the points in that layout: querying in that order reads memory
 * nearly in sequence.
 */
import { ModelInputError, requireNumber, requirePositive } from '../errors.ts';

/** Largest number of points a grid accepts (Int32 indices). */
export const POINT_GRID_MAX_POINTS = 100_000_000;

/**
 * The slot of a cell: its row-major index over the points' bounding box of cells, modulo the table
 * size (a power of two; Math.imul wraps modulo 2³², of which the mask keeps the low bits). Cells
 * next to each other in x share neighbouring slots, so a query's 3 × 3 cells read nearby memory.
 */
function slotOf(cx: number, cy: number, x0: number, y0: number, width: number, mask: number): number {
  return (Math.imul(cy - y0, width) + (cx - x0)) & mask;
}

/**
 * A grid index over `count` points (x, y) with square cells of side `cellM`.
 *
 * Build: O(n). Query of radius r: O(points in the (2⌈r/cell⌉ + 1)² cells around the query point).
 * The index copies the coordinates in cell order (a query reads neighbours from consecutive memory).
 *
 * @example
 *   const g = new PointGrid(Float64Array.of(0, 1e-5, 1), Float64Array.of(0, 0, 0), 3, 2e-5);
 *   g.within(0, 0, 2e-5) // [0, 1]
 */
export class PointGrid {
  readonly count: number;
  readonly cellM: number;
  readonly xM: Float64Array;
  readonly yM: Float64Array;
  private readonly mask: number;
  private readonly x0: number;
  private readonly y0: number;
  private readonly width: number;
  /** Start of each slot's run in `order` (slot s: order[start[s] … start[s + 1])). */
  private readonly start: Int32Array;
  /** Point indices, slot by slot (neighbouring cells close together). */
  readonly order: Int32Array;
  /** Cell coordinates and positions in the same slot-by-slot order (a query reads them in sequence). */
  private readonly sCellX: Int32Array;
  private readonly sCellY: Int32Array;
  private readonly sX: Float64Array;
  private readonly sY: Float64Array;

  /**
   * @param xM x of each point, m
   * @param yM y of each point, m
   * @param count number of points used (the first `count` entries), integer ≤ both lengths
   * @param cellM cell side, m, > 0; every |x|/cell and |y|/cell must stay below 2³⁰
   * @throws ModelInputError for bad arrays, count, cell size, or a coordinate that is not finite
   *   or too far out for the cell size
   */
  constructor(xM: Float64Array, yM: Float64Array, count: number, cellM: number) {
    const fn = 'PointGrid';
    if (!(xM instanceof Float64Array)) throw new ModelInputError(fn, 'xM', 'm', 'a Float64Array', xM);
    if (!(yM instanceof Float64Array)) throw new ModelInputError(fn, 'yM', 'm', 'a Float64Array', yM);
    requireNumber(fn, 'count', count, '', {
      min: 0,
      max: Math.min(xM.length, yM.length, POINT_GRID_MAX_POINTS),
      integer: true,
    });
    requirePositive(fn, 'cellM', cellM, 'm');
    this.count = count;
    this.cellM = cellM;
    this.xM = xM;
    this.yM = yM;
    let size = 16;
    while (size < 2 * count) size *= 2;
    this.mask = size - 1;
    const cellX = new Int32Array(count);
    const cellY = new Int32Array(count);
    this.start = new Int32Array(size + 1);
    this.order = new Int32Array(count);
    const inv = 1 / cellM;
    const limit = 2 ** 30;
    let x0 = 0;
    let y0 = 0;
    let x1 = 0;
    for (let i = 0; i < count; i++) {
      const fx = Math.floor(xM[i]! * inv);
      const fy = Math.floor(yM[i]! * inv);
      if (!(Math.abs(fx) < limit))
        throw new ModelInputError(fn, `xM[${i}]`, 'm', `a finite coordinate within 2³⁰ cells of 0`, xM[i]);
      if (!(Math.abs(fy) < limit))
        throw new ModelInputError(fn, `yM[${i}]`, 'm', `a finite coordinate within 2³⁰ cells of 0`, yM[i]);
      cellX[i] = fx;
      cellY[i] = fy;
      if (i === 0 || fx < x0) x0 = fx;
      if (i === 0 || fx > x1) x1 = fx;
      if (i === 0 || fy < y0) y0 = fy;
    }
    this.x0 = x0;
    this.y0 = y0;
    this.width = x1 - x0 + 1;
    const slots = new Int32Array(count);
    for (let i = 0; i < count; i++) {
      const s = slotOf(cellX[i]!, cellY[i]!, x0, y0, this.width, this.mask);
      slots[i] = s;
      this.start[s + 1]!++;
    }
    for (let s = 0; s < size; s++) this.start[s + 1]! += this.start[s]!;
    const fill = this.start.slice(0, size);
    for (let i = 0; i < count; i++) this.order[fill[slots[i]!]!++] = i;
    this.sCellX = new Int32Array(count);
    this.sCellY = new Int32Array(count);
    this.sX = new Float64Array(count);
    this.sY = new Float64Array(count);
    for (let k = 0; k < count; k++) {
      const i = this.order[k]!;
      this.sCellX[k] = cellX[i]!;
      this.sCellY[k] = cellY[i]!;
      this.sX[k] = xM[i]!;
      this.sY[k] = yM[i]!;
    }
  }

  /**
   * Calls `visit(index, distanceSquared)` for every point within `radiusM` of (x, y) (distance ≤ r),
   * in no particular order. Returns the number of points visited.
   *
   * @param xM query x, m (finite)
   * @param yM query y, m (finite)
   * @param radiusM r, m, ≥ 0
   */
  forEachWithin(
    xM: number,
    yM: number,
    radiusM: number,
    visit: (index: number, distanceSquaredM2: number) => void,
  ): number {
    const inv = 1 / this.cellM;
    const x0 = Math.floor((xM - radiusM) * inv);
    const x1 = Math.floor((xM + radiusM) * inv);
    const y0 = Math.floor((yM - radiusM) * inv);
    const y1 = Math.floor((yM + radiusM) * inv);
    const r2 = radiusM * radiusM;
    let found = 0;
    for (let cy = y0; cy <= y1; cy++)
      for (let cx = x0; cx <= x1; cx++) {
        const s = slotOf(cx, cy, this.x0, this.y0, this.width, this.mask);
        const end = this.start[s + 1]!;
        for (let k = this.start[s]!; k < end; k++) {
          if (this.sCellX[k] !== cx || this.sCellY[k] !== cy) continue;
          const dx = this.sX[k]! - xM;
          const dy = this.sY[k]! - yM;
          const d2 = dx * dx + dy * dy;
          if (d2 <= r2) {
            visit(this.order[k]!, d2);
            found++;
          }
        }
      }
    return found;
  }

  /**
   * The indices of the points within `radiusM` of (x, y), nearest first (ties by index).
   *
   * @param xM query x, m
   * @param yM query y, m
   * @param radiusM r, m, finite and ≥ 0
   * @throws ModelInputError for a non-finite query or a negative radius
   */
  within(xM: number, yM: number, radiusM: number): number[] {
    requireNumber('PointGrid.within', 'xM', xM, 'm');
    requireNumber('PointGrid.within', 'yM', yM, 'm');
    requireNumber('PointGrid.within', 'radiusM', radiusM, 'm', { min: 0 });
    const hits: { i: number; d2: number }[] = [];
    this.forEachWithin(xM, yM, radiusM, (i, d2) => {
      hits.push({ i, d2 });
    });
    hits.sort((a, b) => a.d2 - b.d2 || a.i - b.i);
    return hits.map((h) => h.i);
  }

  /**
   * The nearest point within `radiusM` of (x, y) whose entry in `taken` is 0 (all points when
   * `taken` is omitted); ties by the smaller index. −1 when there is none.
   */
  nearestWithin(xM: number, yM: number, radiusM: number, taken?: Uint8Array): number {
    const inv = 1 / this.cellM;
    const x0 = Math.floor((xM - radiusM) * inv);
    const x1 = Math.floor((xM + radiusM) * inv);
    const y0 = Math.floor((yM - radiusM) * inv);
    const y1 = Math.floor((yM + radiusM) * inv);
    let best = -1;
    let bestD2 = radiusM * radiusM;
    for (let cy = y0; cy <= y1; cy++)
      for (let cx = x0; cx <= x1; cx++) {
        const s = slotOf(cx, cy, this.x0, this.y0, this.width, this.mask);
        const end = this.start[s + 1]!;
        for (let k = this.start[s]!; k < end; k++) {
          if (this.sCellX[k] !== cx || this.sCellY[k] !== cy) continue;
          const i = this.order[k]!;
          if (taken?.[i]) continue;
          const dx = this.sX[k]! - xM;
          const dy = this.sY[k]! - yM;
          const d2 = dx * dx + dy * dy;
          if (d2 < bestD2 || (d2 === bestD2 && (best === -1 || i < best))) {
            best = i;
            bestD2 = d2;
          }
        }
      }
    return best;
  }
}
