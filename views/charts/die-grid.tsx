/**
 * Die grids drawn compactly: a wafer holds a thousand dies and more, and one SVG element per die
 * made a pair's page weigh most of a megabyte. Two forms, both pure functions of the dies:
 *
 * - `rectsPathD`: any set of rectangles as the data of ONE path (one subpath per rectangle, moves
 *   relative to the previous rectangle, coordinates in tenths of a pixel) — the dies of one colour
 *   class of the void map;
 * - `DieGridOutline`: the outlines of a regular stepping grid (every die the same size, on one
 *   lattice: what a product's die layout is) as a pattern of one die cell filled over the dies'
 *   row runs — a few hundred bytes whatever the number of dies; any other set of dies falls back
 *   to one path of rectangles.
 */
import { type DieRect, dieToPx, type FramePx } from './wafer-frame.tsx';

export interface RectPx {
  x: number;
  y: number;
  w: number;
  h: number;
}

const tenths = (v: number) => Math.round(v * 10);
const fmt = (t: number) => String(t / 10);

/**
 * One path's data for many rectangles: `M x y h w v h h −w z` for the first, then `m dx dy …` from
 * the previous rectangle's corner (where `z` leaves the pen). Corners and sizes in tenths of a px.
 */
export function rectsPathD(rects: readonly RectPx[]): string {
  let d = '';
  let px = 0;
  let py = 0;
  let first = true;
  for (const r of rects) {
    const x = tenths(r.x);
    const y = tenths(r.y);
    const w = tenths(r.w);
    const h = tenths(r.h);
    d += first ? `M${fmt(x)} ${fmt(y)}` : `m${fmt(x - px)} ${fmt(y - py)}`;
    d += `h${fmt(w)}v${fmt(h)}h${fmt(-w)}z`;
    px = x;
    py = y;
    first = false;
  }
  return d;
}

/**
 * The dies as a lattice: die size and pitch in px, the lattice origin, and the runs of adjacent
 * dies per row (each a rectangle covering whole pitch cells). Null when the dies are not all the
 * same size on one lattice (then they are drawn one by one).
 */
export interface LatticeCell {
  x: number;
  y: number;
  pitchX: number;
  pitchY: number;
  w: number;
  h: number;
}

export function latticeRuns(
  rects: readonly RectPx[],
  given?: LatticeCell,
): {
  cell: LatticeCell;
  runs: RectPx[];
} | null {
  if (given) return runsOn(rects, given);
  if (rects.length < 2) return null;
  const { w, h } = rects[0]!;
  const eps = 1e-6 * Math.max(1, w, h);
  if (rects.some((r) => Math.abs(r.w - w) > eps || Math.abs(r.h - h) > eps)) return null;
  const xs = [...new Set(rects.map((r) => r.x))].sort((a, b) => a - b);
  const ys = [...new Set(rects.map((r) => r.y))].sort((a, b) => a - b);
  const step = (v: number[]) => {
    let s = Number.POSITIVE_INFINITY;
    for (let i = 1; i < v.length; i++) if (v[i]! - v[i - 1]! > eps) s = Math.min(s, v[i]! - v[i - 1]!);
    return s;
  };
  const pitchX = xs.length > 1 ? step(xs) : w;
  const pitchY = ys.length > 1 ? step(ys) : h;
  if (!(Number.isFinite(pitchX) && Number.isFinite(pitchY)) || pitchX < w - eps || pitchY < h - eps)
    return null;
  return runsOn(rects, { x: xs[0]!, y: ys[0]!, pitchX, pitchY, w, h });
}

/** The row runs of `rects` on a given lattice; null when a rectangle is off it or of another size. */
function runsOn(rects: readonly RectPx[], cell: LatticeCell): { cell: LatticeCell; runs: RectPx[] } | null {
  const { x: x0, y: y0, pitchX, pitchY, w, h } = cell;
  const eps = 1e-6 * Math.max(1, w, h);
  const tol = 1e-3;
  const rows = new Map<number, number[]>();
  for (const r of rects) {
    if (Math.abs(r.w - w) > eps || Math.abs(r.h - h) > eps) return null;
    const i = (r.x - x0) / pitchX;
    const j = (r.y - y0) / pitchY;
    if (Math.abs(i - Math.round(i)) > tol || Math.abs(j - Math.round(j)) > tol) return null;
    const row = rows.get(Math.round(j)) ?? [];
    row.push(Math.round(i));
    rows.set(Math.round(j), row);
  }
  const runs: RectPx[] = [];
  for (const [j, cols] of [...rows].sort((a, b) => a[0] - b[0])) {
    cols.sort((a, b) => a - b);
    let start = cols[0]!;
    for (let k = 1; k <= cols.length; k++) {
      const c = cols[k];
      if (c === cols[k - 1]! + 1) continue;
      if (c === cols[k - 1]) return null; // two dies in one cell: not a lattice
      const end = cols[k - 1]!;
      runs.push({ x: x0 + start * pitchX, y: y0 + j * pitchY, w: (end - start) * pitchX + w, h });
      if (c !== undefined) start = c;
    }
  }
  return { cell, runs };
}

/**
 * The outlines of the dies (no fill), as a wafer map draws them under its particle marks. The
 * group says how many dies it holds (`data-dies`).
 */
export function DieGridOutline(props: {
  f: FramePx;
  dies: readonly DieRect[];
  idPrefix: string;
  clipId: string;
  stroke?: string;
  strokeWidth?: number;
}) {
  const stroke = props.stroke ?? '#c4c9d2';
  const sw = props.strokeWidth ?? 0.6;
  const rects = props.dies.map((d) => dieToPx(props.f, d));
  const lattice = latticeRuns(rects);
  const patternId = `${props.idPrefix}-die-cell`;
  const q = (v: number) => Math.round(v * 1000) / 1000;
  return (
    <g class="vc-die-grid" clip-path={`url(#${props.clipId})`} data-dies={rects.length}>
      {lattice ? (
        <>
          <defs>
            <pattern
              id={patternId}
              patternUnits="userSpaceOnUse"
              x={q(lattice.cell.x)}
              y={q(lattice.cell.y)}
              width={q(lattice.cell.pitchX)}
              height={q(lattice.cell.pitchY)}
            >
              <rect
                x={sw / 2}
                y={sw / 2}
                width={q(Math.max(0, lattice.cell.w - sw))}
                height={q(Math.max(0, lattice.cell.h - sw))}
                fill="none"
                stroke={stroke}
                stroke-width={sw}
              />
            </pattern>
          </defs>
          <path class="vc-die-cells" d={rectsPathD(lattice.runs)} fill={`url(#${patternId})`} />
        </>
      ) : (
        <path class="vc-die-cells" d={rectsPathD(rects)} fill="none" stroke={stroke} stroke-width={sw} />
      )}
    </g>
  );
}
