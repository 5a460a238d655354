/**
 * Pair geometry: mapping the flipped top wafer into the bond frame, and the die grid.
 *
 * The bond frame is the bottom wafer's own frame (origin at the centre, x right, y up, notch down,
 * seen from its device side). The top wafer is turned face-down onto it: flipping about its own y
 * axis maps (x, y) → (−x, y), about its x axis (x, y) → (x, −y); then the pair's rotation
 * (counter-clockwise, radians) and offset apply. A flip is a mirror, so a point and its image have
 * the same distance from the centre and a second flip about the same axis returns it.
 */
import { criticalAreaOnWafer, criticalAreaRectangle } from '../model/yield.ts';
import type { DieLayoutInput } from './types.ts';

export interface Placement {
  flipAxis: 'x' | 'y';
  rotationRad: number;
  offsetXM: number;
  offsetYM: number;
}

/** Maps top-wafer coordinates (its own frame) into the bond frame, written into outX/outY from `offset` on. */
export function mirrorInto(
  xM: Float64Array,
  yM: Float64Array,
  p: Placement,
  outX: Float64Array,
  outY: Float64Array,
  offset: number,
): void {
  const n = xM.length;
  const c = Math.cos(p.rotationRad);
  const s = Math.sin(p.rotationRad);
  const fx = p.flipAxis === 'y' ? -1 : 1;
  const fy = p.flipAxis === 'x' ? -1 : 1;
  for (let i = 0; i < n; i++) {
    const x = fx * xM[i]!;
    const y = fy * yM[i]!;
    outX[offset + i] = c * x - s * y + p.offsetXM;
    outY[offset + i] = s * x + c * y + p.offsetYM;
  }
}

/** The whole dies of a layout inside the usable radius (wafer radius − edge exclusion). */
export interface DieGridIndex {
  layout: DieLayoutInput;
  /** Column and row range of the grid that can hold a die. */
  colMin: number;
  rowMin: number;
  cols: number;
  rows: number;
  /** Die index in `dies` per (col − colMin) + (row − rowMin)·cols cell, −1 where no whole die fits. */
  cell: Int32Array;
  /** Per die: grid column, row and the lower-left corner of its critical rectangle (pad or die), m. */
  dieCol: Int32Array;
  dieRow: Int32Array;
  critX0: Float64Array;
  critY0: Float64Array;
  /** Critical rectangle width and height, m (the pad array or the whole die). */
  critW: number;
  critH: number;
  count: number;
}

/**
 * Builds the die grid: a die is on the wafer when all four of its corners lie within
 * usableRadiusM of the centre (common practice for "whole dies inside the edge exclusion").
 */
export function buildDieGrid(layout: DieLayoutInput, usableRadiusM: number): DieGridIndex {
  const { widthM: w, heightM: h, pitchXM: px, pitchYM: py, originXM: x0, originYM: y0 } = layout;
  const colMin = Math.floor((-usableRadiusM - x0) / px) - 1;
  const colMax = Math.ceil((usableRadiusM - x0) / px) + 1;
  const rowMin = Math.floor((-usableRadiusM - y0) / py) - 1;
  const rowMax = Math.ceil((usableRadiusM - y0) / py) + 1;
  const cols = colMax - colMin + 1;
  const rows = rowMax - rowMin + 1;
  const cell = new Int32Array(cols * rows).fill(-1);
  const dc: number[] = [];
  const dr: number[] = [];
  const r2 = usableRadiusM * usableRadiusM;
  const inside = (x: number, y: number) => x * x + y * y <= r2;
  for (let j = rowMin; j <= rowMax; j++)
    for (let i = colMin; i <= colMax; i++) {
      const lx = x0 + i * px;
      const ly = y0 + j * py;
      if (inside(lx, ly) && inside(lx + w, ly) && inside(lx, ly + h) && inside(lx + w, ly + h)) {
        cell[i - colMin + (j - rowMin) * cols] = dc.length;
        dc.push(i);
        dr.push(j);
      }
    }
  const pad = layout.pad;
  const count = dc.length;
  const critX0 = new Float64Array(count);
  const critY0 = new Float64Array(count);
  for (let k = 0; k < count; k++) {
    critX0[k] = x0 + dc[k]! * px + (pad ? pad.xM : 0);
    critY0[k] = y0 + dr[k]! * py + (pad ? pad.yM : 0);
  }
  return {
    layout,
    colMin,
    rowMin,
    cols,
    rows,
    cell,
    dieCol: Int32Array.from(dc),
    dieRow: Int32Array.from(dr),
    critX0,
    critY0,
    critW: pad ? pad.widthM : w,
    critH: pad ? pad.heightM : h,
    count,
  };
}

/** Slack of the candidate cell range, in cells. */
const RANGE_SLACK = 1e-9;

/**
 * The dies each disc reaches, for many discs at once, as compressed rows: the dies of disc j are
 * hitDie[hitStart[j] … hitStart[j+1] − 1]. A disc reaches a die when the distance from its centre
 * to the die's critical rectangle (pad or die) is ≤ r: touching counts, so a particle exactly on a
 * die edge hits that die. Only the grid cells whose rectangles can meet the disc are examined: die
 * (i, j) has its rectangle at [x0 + i·px + offX, … + critW], which meets [x − r, x + r] only for i
 * in [(x − r − x0 − offX − critW)/px, (x + r − x0 − offX)/px] (likewise in y); the range is widened
 * by RANGE_SLACK of a cell each side so that rounding at an exact edge cannot drop a die, and the
 * distance test decides. Direct index ranges: no search over all dies.
 */
export function buildDieHits(
  g: DieGridIndex,
  xM: Float64Array,
  yM: Float64Array,
  rM: Float64Array,
  /** Arrays to fill instead of new ones: hitStart with room for n + 1, hitDie any size (grown when full). */
  into?: { hitStart: Int32Array; hitDie: Int32Array },
): { hitStart: Int32Array; hitDie: Int32Array } {
  const { pitchXM: px, pitchYM: py, originXM: x0, originYM: y0, pad } = g.layout;
  const ax = x0 + (pad ? pad.xM : 0);
  const ay = y0 + (pad ? pad.yM : 0);
  const { colMin, rowMin, cols, critW, critH, cell, critX0, critY0 } = g;
  const colMax = colMin + cols - 1;
  const rowMax = rowMin + g.rows - 1;
  const n = xM.length;
  const hitStart = into && into.hitStart.length >= n + 1 ? into.hitStart : new Int32Array(n + 1);
  let buf = into && into.hitDie.length >= 16 ? into.hitDie : new Int32Array(Math.max(16, 2 * n));
  let m = 0;
  for (let p = 0; p < n; p++) {
    hitStart[p] = m;
    const x = xM[p]!;
    const y = yM[p]!;
    const r = rM[p]!;
    const iLo = Math.max(colMin, Math.ceil((x - r - ax - critW) / px - RANGE_SLACK));
    const iHi = Math.min(colMax, Math.floor((x + r - ax) / px + RANGE_SLACK));
    const jLo = Math.max(rowMin, Math.ceil((y - r - ay - critH) / py - RANGE_SLACK));
    const jHi = Math.min(rowMax, Math.floor((y + r - ay) / py + RANGE_SLACK));
    const r2 = r * r;
    for (let j = jLo; j <= jHi; j++)
      for (let i = iLo; i <= iHi; i++) {
        const k = cell[i - colMin + (j - rowMin) * cols]!;
        if (k < 0) continue;
        const rx = critX0[k]!;
        const ry = critY0[k]!;
        const dx = x < rx ? rx - x : x > rx + critW ? x - rx - critW : 0;
        const dy = y < ry ? ry - y : y > ry + critH ? y - ry - critH : 0;
        if (dx * dx + dy * dy > r2) continue;
        if (m === buf.length) {
          const b = new Int32Array(2 * buf.length);
          b.set(buf);
          buf = b;
        }
        buf[m++] = k;
      }
  }
  hitStart[n] = m;
  return { hitStart: hitStart.subarray(0, n + 1), hitDie: buf.subarray(0, m) };
}

/**
 * Where the wafer edge cuts the critical regions of the die grid, per size bin. Random particles
 * lie uniformly over the wafer face (the edge-exclusion ring included: scans do not report it, but
 * particles sit there all the same) and nowhere beyond its edge, so a die whose critical region —
 * its pad (or die) rectangle grown by the void radius R — reaches past the edge is exposed to fewer
 * of them: its critical area is area{p : |p| ≤ R_w, dist(p, rect) ≤ R} (the model library's
 * criticalAreaOnWafer) instead of the plane value WH + 2R(W + H) + πR² (criticalAreaRectangle).
 *
 * Only the (die, bin) pairs that lose area are listed: bin k's are rows start[k] … start[k+1] − 1
 * of `die` and `lossM2` (the plane value minus the clipped one, m²). A region lies wholly on the
 * wafer when its farthest corner is within R_w − R of the centre (the grown rectangle's farthest
 * point is a corner pushed out by R), so most pairs are settled by that test alone.
 */
export interface EdgeClip {
  start: Int32Array;
  die: Int32Array;
  lossM2: Float64Array;
  /** Per bin: Σ over the dies of the clipped critical area, m². */
  totalAreaM2: Float64Array;
}

export function buildEdgeClip(g: DieGridIndex, radiiM: Float64Array, waferRadiusM: number): EdgeClip {
  const nBins = radiiM.length;
  const { count, critX0, critY0, critW, critH } = g;
  const far = new Float64Array(count);
  for (let d = 0; d < count; d++) {
    const x0 = critX0[d]!;
    const y0 = critY0[d]!;
    far[d] = Math.hypot(
      Math.max(Math.abs(x0), Math.abs(x0 + critW)),
      Math.max(Math.abs(y0), Math.abs(y0 + critH)),
    );
  }
  const start = new Int32Array(nBins + 1);
  const die: number[] = [];
  const loss: number[] = [];
  const totalAreaM2 = new Float64Array(nBins);
  for (let k = 0; k < nBins; k++) {
    start[k] = die.length;
    const r = radiiM[k]!;
    const plane = criticalAreaRectangle(critW, critH, r);
    let lost = 0;
    for (let d = 0; d < count; d++) {
      if (far[d]! + r <= waferRadiusM) continue;
      const x0 = critX0[d]!;
      const y0 = critY0[d]!;
      const onWafer = criticalAreaOnWafer(
        { xMinM: x0, yMinM: y0, xMaxM: x0 + critW, yMaxM: y0 + critH },
        r,
        waferRadiusM,
      );
      const l = plane - onWafer;
      if (!(l > 0)) continue;
      die.push(d);
      loss.push(l);
      lost += l;
    }
    totalAreaM2[k] = count * plane - lost;
  }
  start[nBins] = die.length;
  return { start, die: Int32Array.from(die), lossM2: Float64Array.from(loss), totalAreaM2 };
}
