import { describe, expect, it } from 'vitest';
import { buildDieGrid, buildDieHits, mirrorInto, type Placement } from '../../../src/engine/geometry.ts';
import type { DieLayoutInput } from '../../../src/engine/types.ts';
import { createRng } from '../../../src/model/rng.ts';

/** The engine's mirror into new arrays. */
function mirrorIntoBondFrame(xM: Float64Array, yM: Float64Array, p: Placement) {
  const out = { xM: new Float64Array(xM.length), yM: new Float64Array(xM.length) };
  mirrorInto(xM, yM, p, out.xM, out.yM, 0);
  return out;
}

const layout = (over: Partial<DieLayoutInput> = {}): DieLayoutInput => ({
  widthM: 10e-3,
  heightM: 5e-3,
  pitchXM: 10e-3,
  pitchYM: 5e-3,
  originXM: 0,
  originYM: 0,
  pad: null,
  ...over,
});

function hits(g: ReturnType<typeof buildDieGrid>, x: number, y: number, r: number): number[] {
  const h = buildDieHits(g, Float64Array.of(x), Float64Array.of(y), Float64Array.of(r));
  expect(h.hitStart[1]).toBe(h.hitDie.length);
  return Array.from(h.hitDie).sort((a, b) => a - b);
}

/** Brute force: distance from a point to every die's critical rectangle (hand-written geometry). */
function bruteHits(g: ReturnType<typeof buildDieGrid>, x: number, y: number, r: number): number[] {
  const out: number[] = [];
  for (let k = 0; k < g.count; k++) {
    const x0 = g.critX0[k]!;
    const y0 = g.critY0[k]!;
    const dx = Math.max(x0 - x, 0, x - (x0 + g.critW));
    const dy = Math.max(y0 - y, 0, y - (y0 + g.critH));
    if (Math.hypot(dx, dy) <= r) out.push(k);
  }
  return out;
}

describe('mirrorIntoBondFrame', () => {
  it('flips about the y axis as (x, y) → (−x, y) and about the x axis as (x, y) → (x, −y) (definition of a mirror)', () => {
    const x = Float64Array.of(0.01, -0.02);
    const y = Float64Array.of(0.03, 0.04);
    const a = mirrorIntoBondFrame(x, y, { flipAxis: 'y', rotationRad: 0, offsetXM: 0, offsetYM: 0 });
    expect(Array.from(a.xM)).toEqual([-0.01, 0.02]);
    expect(Array.from(a.yM)).toEqual([0.03, 0.04]);
    const b = mirrorIntoBondFrame(x, y, { flipAxis: 'x', rotationRad: 0, offsetXM: 0, offsetYM: 0 });
    expect(Array.from(b.xM)).toEqual([0.01, -0.02]);
    expect(Array.from(b.yM)).toEqual([-0.03, -0.04]);
  });

  it('is an involution without rotation and preserves the distance from the centre with any rotation (isometry)', () => {
    const rng = createRng(7);
    const n = 200;
    const x = Float64Array.from({ length: n }, () => (rng.uniform() - 0.5) * 0.3);
    const y = Float64Array.from({ length: n }, () => (rng.uniform() - 0.5) * 0.3);
    for (const flipAxis of ['x', 'y'] as const) {
      const once = mirrorIntoBondFrame(x, y, { flipAxis, rotationRad: 0, offsetXM: 0, offsetYM: 0 });
      const twice = mirrorIntoBondFrame(once.xM, once.yM, {
        flipAxis,
        rotationRad: 0,
        offsetXM: 0,
        offsetYM: 0,
      });
      for (let i = 0; i < n; i++) {
        expect(twice.xM[i]).toBe(x[i]);
        expect(twice.yM[i]).toBe(y[i]);
      }
      const rot = mirrorIntoBondFrame(x, y, { flipAxis, rotationRad: 0.7, offsetXM: 0, offsetYM: 0 });
      // tolerance: a few ulps of a 0.2 m radius after one rotation
      for (let i = 0; i < n; i++)
        expect(Math.hypot(rot.xM[i]!, rot.yM[i]!)).toBeCloseTo(Math.hypot(x[i]!, y[i]!), 14);
    }
  });

  it('applies rotation after the flip and the offset last (a quarter turn of (1, 0) flipped about y lands at (0, −1))', () => {
    const r = mirrorIntoBondFrame(Float64Array.of(1), Float64Array.of(0), {
      flipAxis: 'y',
      rotationRad: Math.PI / 2,
      offsetXM: 0.5,
      offsetYM: 0.25,
    });
    // hand computation: flip → (−1, 0); rotate +90° → (0, −1); offset → (0.5, −0.75)
    expect(r.xM[0]).toBeCloseTo(0.5, 15);
    expect(r.yM[0]).toBeCloseTo(-0.75, 15);
  });
});

describe('buildDieGrid', () => {
  it('keeps only dies whose four corners lie inside the usable radius', () => {
    const g = buildDieGrid(layout(), 0.147);
    for (let k = 0; k < g.count; k++) {
      const x0 = g.critX0[k]!;
      const y0 = g.critY0[k]!;
      for (const [cx, cy] of [
        [x0, y0],
        [x0 + 10e-3, y0],
        [x0, y0 + 5e-3],
        [x0 + 10e-3, y0 + 5e-3],
      ])
        expect(Math.hypot(cx!, cy!)).toBeLessThanOrEqual(0.147);
    }
    // A 10 × 5 mm grid on a 294 mm usable disc holds roughly area / die area minus the edge loss:
    // π·0.147² / 50e-6 = 1357.6 is the upper bound; whole dies are fewer (hand computation of the bound).
    expect(g.count).toBeLessThan(1358);
    expect(g.count).toBeGreaterThan(1200);
  });

  it('uses the pad rectangle as the critical area when the layout has one', () => {
    const g = buildDieGrid(layout({ pad: { xM: 2e-3, yM: 1e-3, widthM: 6e-3, heightM: 3e-3 } }), 0.05);
    expect(g.critW).toBe(6e-3);
    expect(g.critH).toBe(3e-3);
    const k = 0;
    expect(g.critX0[k]).toBeCloseTo(g.dieCol[k]! * 10e-3 + 2e-3, 15);
  });
});

describe('buildDieHits', () => {
  it('counts a particle exactly on a die edge as hitting that die (touching counts)', () => {
    const g = buildDieGrid(layout({ pitchXM: 12e-3, pitchYM: 7e-3 }), 0.1);
    const die = g.cell[0 - g.colMin + (0 - g.rowMin) * g.cols]!;
    expect(die).toBeGreaterThanOrEqual(0);
    // die (0, 0) spans x ∈ [0, 10 mm], y ∈ [0, 5 mm]; streets of 2 mm on both axes
    expect(hits(g, 10e-3, 2e-3, 1e-9)).toEqual([die]); // on the right edge
    expect(hits(g, 5e-3, 0, 1e-9)).toEqual([die]); // on the bottom edge
    expect(hits(g, 10e-3 + 1e-6, 2e-3, 0.5e-6)).toEqual([]); // 1 µm into the street with a 0.5 µm disc
  });

  it('counts a particle on the shared edge of two abutting dies (no street) against both', () => {
    const g = buildDieGrid(layout(), 0.1);
    const a = g.cell[0 - g.colMin + (0 - g.rowMin) * g.cols]!;
    const b = g.cell[1 - g.colMin + (0 - g.rowMin) * g.cols]!;
    expect(hits(g, 10e-3, 2.5e-3, 1e-9)).toEqual([a, b].sort((p, q) => p - q));
    // exactly on a corner shared by four dies
    expect(hits(g, 10e-3, 5e-3, 1e-9)).toHaveLength(4);
  });

  it('agrees with a brute-force distance test over all dies for random discs', () => {
    const rng = createRng(11);
    for (const pad of [null, { xM: 1e-3, yM: 0.5e-3, widthM: 7e-3, heightM: 3.5e-3 }]) {
      const g = buildDieGrid(
        layout({ pitchXM: 10.2e-3, pitchYM: 5.1e-3, originXM: -3e-3, originYM: 1e-3, pad }),
        0.147,
      );
      for (let t = 0; t < 2000; t++) {
        const x = (rng.uniform() - 0.5) * 0.32;
        const y = (rng.uniform() - 0.5) * 0.32;
        const r = rng.uniform() < 0.5 ? rng.uniform() * 1e-3 : rng.uniform() * 12e-3;
        expect(hits(g, x, y, r)).toEqual(bruteHits(g, x, y, r));
      }
    }
  });

  it('keeps one row per disc when many discs are built at once (the rows the engine reads)', () => {
    const rng = createRng(12);
    const g = buildDieGrid(layout({ pitchXM: 10.2e-3, pitchYM: 5.1e-3 }), 0.147);
    const n = 3000;
    const x = Float64Array.from({ length: n }, () => (rng.uniform() - 0.5) * 0.3);
    const y = Float64Array.from({ length: n }, () => (rng.uniform() - 0.5) * 0.3);
    const r = Float64Array.from({ length: n }, () => rng.uniform() * 8e-3);
    const h = buildDieHits(g, x, y, r);
    expect(h.hitStart[0]).toBe(0);
    expect(h.hitStart[n]).toBe(h.hitDie.length);
    for (let j = 0; j < n; j++) {
      const row = Array.from(h.hitDie.subarray(h.hitStart[j]!, h.hitStart[j + 1]!)).sort((a, b) => a - b);
      expect(row).toEqual(bruteHits(g, x[j]!, y[j]!, r[j]!));
    }
  });
});
