/**
 * The compact die grid (views/charts/die-grid.tsx): the path of many rectangles reads back as the
 * same rectangles, and a stepping grid's row runs cover exactly its dies — checked against the
 * plain one-element-per-die drawing on generated grids (fast-check). Expected values: hand
 * computation (the path grammar of SVG 1.1 §8.3: `m` is relative to the start of the previous
 * closed subpath); tolerance 0.05 px + 1e-9, the rounding of coordinates to tenths of a pixel.
 */
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { latticeRuns, type RectPx, rectsPathD } from '../../../views/charts/die-grid.tsx';

/** Reads `M x y h w v h h −w z (m dx dy h w v h h −w z)*` back into rectangles. */
function readRects(d: string): RectPx[] {
  const out: RectPx[] = [];
  const re = /([Mm])(-?[\d.]+) (-?[\d.]+)h(-?[\d.]+)v(-?[\d.]+)h(-?[\d.]+)z/g;
  let x = 0;
  let y = 0;
  let consumed = 0;
  for (let m = re.exec(d); m; m = re.exec(d)) {
    consumed += m[0].length;
    const [, cmd, a, b, w, h, back] = m;
    x = cmd === 'M' ? Number(a) : x + Number(a);
    y = cmd === 'M' ? Number(b) : y + Number(b);
    expect(Number(back) + Number(w)).toBe(0);
    out.push({ x, y, w: Number(w), h: Number(h) });
  }
  expect(consumed).toBe(d.length);
  return out;
}

describe('rectsPathD', () => {
  it('writes one subpath per rectangle, relative moves, that read back as the rectangles (hand computation)', () => {
    const d = rectsPathD([
      { x: 10, y: 20, w: 7.5, h: 7.5 },
      { x: 17.54, y: 20, w: 7.5, h: 7.5 },
      { x: 10, y: 12.5, w: 7.5, h: 7.5 },
    ]);
    expect(d).toBe('M10 20h7.5v7.5h-7.5zm7.5 0h7.5v7.5h-7.5zm-7.5 -7.5h7.5v7.5h-7.5z');
  });

  it('reads back any rectangles within the 0.05 px rounding', () => {
    const rect = fc.record({
      x: fc.double({ min: -500, max: 500, noNaN: true }),
      y: fc.double({ min: -500, max: 500, noNaN: true }),
      w: fc.double({ min: 0, max: 50, noNaN: true }),
      h: fc.double({ min: 0, max: 50, noNaN: true }),
    });
    fc.assert(
      fc.property(fc.array(rect, { minLength: 1, maxLength: 60 }), (rects) => {
        const back = readRects(rectsPathD(rects));
        expect(back).toHaveLength(rects.length);
        // corners accumulate exactly (integer tenths); sizes are rounded once
        back.forEach((b, i) => {
          for (const k of ['x', 'y', 'w', 'h'] as const)
            expect(Math.abs(b[k] - rects[i]![k])).toBeLessThan(0.05 + 1e-6);
        });
      }),
      { seed: 17_201, numRuns: 300 },
    );
  });
});

describe('latticeRuns', () => {
  /** The cells covered by the runs, stepped by the pitch: the dies the pattern draws. */
  /** A coordinate to 0.001 px, −0 read as 0 (a corner computed two ways may land either side of 0). */
  const key = (v: number) => (Math.round(v * 1000) / 1000 + 0).toFixed(3);
  function cellsOf(l: NonNullable<ReturnType<typeof latticeRuns>>): string[] {
    const out: string[] = [];
    for (const r of l.runs) {
      const n = Math.round((r.w - l.cell.w) / l.cell.pitchX) + 1;
      for (let i = 0; i < n; i++) out.push(`${key(r.x + i * l.cell.pitchX)},${key(r.y)}`);
    }
    return out.sort();
  }

  it('covers exactly the dies of any subset of a stepping grid (plain twin: one rectangle per die)', () => {
    fc.assert(
      fc.property(
        fc.record({
          w: fc.double({ min: 1, max: 20, noNaN: true }),
          h: fc.double({ min: 1, max: 20, noNaN: true }),
          gapX: fc.double({ min: 0, max: 3, noNaN: true }),
          gapY: fc.double({ min: 0, max: 3, noNaN: true }),
          x0: fc.double({ min: -200, max: 200, noNaN: true }),
          y0: fc.double({ min: -200, max: 200, noNaN: true }),
          // which cells of a 12 × 12 grid hold a die; at least two
          cells: fc.uniqueArray(fc.integer({ min: 0, max: 143 }), { minLength: 2, maxLength: 144 }),
        }),
        ({ w, h, gapX, gapY, x0, y0, cells }) => {
          const px = w + gapX;
          const py = h + gapY;
          const rects = cells.map((c) => ({ x: x0 + (c % 12) * px, y: y0 + Math.floor(c / 12) * py, w, h }));
          const l = latticeRuns(rects);
          // a subset may not show the smallest pitch (e.g. only every other column): then the
          // lattice found is coarser, still exact, or none; never a die more or less
          if (l === null) return;
          expect(cellsOf(l)).toEqual(rects.map((r) => `${key(r.x)},${key(r.y)}`).sort());
          for (const r of l.runs) expect(r.h).toBe(h);
        },
      ),
      { seed: 17_202, numRuns: 300 },
    );
  });

  it('finds the lattice of a full grid, and refuses dies of two sizes or off the lattice', () => {
    const grid: RectPx[] = [];
    for (let j = 0; j < 5; j++) for (let i = 0; i < 5; i++) grid.push({ x: i * 8, y: j * 8, w: 7, h: 7 });
    const l = latticeRuns(grid)!;
    expect(l.cell).toEqual({ x: 0, y: 0, pitchX: 8, pitchY: 8, w: 7, h: 7 });
    expect(l.runs).toHaveLength(5); // one run per row
    expect(latticeRuns([...grid, { x: 100, y: 0, w: 6, h: 7 }])).toBeNull();
    expect(latticeRuns([...grid, { x: 3, y: 0, w: 7, h: 7 }])).toBeNull();
  });
});
