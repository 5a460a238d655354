/**
 * Wafer coordinate conventions: parsing what a file declares, and mapping its positions into the
 * one internal frame.
 *
 * The internal frame (docs/architecture.md, src/engine/types.ts): origin at the wafer centre, x to
 * the right, y up, the notch down (at 270°), seen from the front (device) side; metres.
 *
 * A file declares its own convention in two metadata entries:
 *
 *   # coordinates: origin=centre x=right y=up view=front
 *   # notch_deg: 270
 *
 * - `origin` — `centre` (the wafer centre) or `lower-left` (the lower-left corner, in the file's own
 *   axes, of the square that circumscribes the wafer: a point's centre coordinates are then x − R, y − R);
 * - `x` — `right` or `left`: where the file's +x axis points in the drawing the file describes;
 * - `y` — `up` or `down`: where its +y axis points;
 * - `view` — `front` or `back`: which side of the wafer that drawing is seen from (seen from the back,
 *   left and right swap);
 * - `notch_deg` — the angle of the notch (or flat centre) in the file's own axes, degrees
 *   counter-clockwise from its +x axis towards its +y axis (0 ≤ angle < 360).
 *
 * The mapping is, with R the wafer radius and all lengths already in metres:
 *   1. origin: lower-left → (x − R, y − R);
 *   2. axes: x₁ = s_x·x, y₁ = s_y·y with s_x = (x=right ? 1 : −1)·(view=front ? 1 : −1), s_y = (y=up ? 1 : −1);
 *   3. notch: the notch direction (cos θ, sin θ) becomes φ = atan2(s_y sin θ, s_x cos θ) after step 2; the
 *      frame is turned by δ = −90° − φ so that the notch points down: (x₂, y₂) = R(δ)(x₁, y₁).
 * Steps 1–3 are rigid motions or mirrors, so the distance from the centre is kept (test: invariant).
 *
 * Scanners, bonders and void inspection tools use different XY conventions and one wafer of a pair is
 * flipped (a common source of wrong overlays, common practice, no source): nothing here is guessed;
 * a file that does not state all four words is refused.
 */

export type Origin = 'centre' | 'lower-left';

export interface FrameConvention {
  origin: Origin;
  x: 'right' | 'left';
  y: 'up' | 'down';
  view: 'front' | 'back';
  /** Notch angle in the file's own axes, degrees, counter-clockwise from +x towards +y. */
  notchDeg: number;
}

/** The internal convention, as a file would declare it. */
export const INTERNAL_CONVENTION: FrameConvention = Object.freeze({
  origin: 'centre',
  x: 'right',
  y: 'up',
  view: 'front',
  notchDeg: 270,
});

const WORDS: Record<string, readonly string[]> = {
  origin: ['centre', 'lower-left'],
  x: ['right', 'left'],
  y: ['up', 'down'],
  view: ['front', 'back'],
};

/** The rule text for a `coordinates` entry that cannot be read (shared by every kind that uses it). */
export const COORDINATES_RULE =
  'coordinates must state origin=centre|lower-left x=right|left y=up|down view=front|back, e.g. "origin=centre x=right y=up view=front"';

/**
 * Parses a `coordinates` metadata value (the four `word=value` pairs, any order, separated by spaces,
 * commas or semicolons). Returns the convention without the notch, or the rule it breaks.
 */
export function parseCoordinates(text: string): Omit<FrameConvention, 'notchDeg'> | { rule: string } {
  const out: Record<string, string> = {};
  const parts = text
    .trim()
    .split(/[\s,;]+/)
    .filter(Boolean);
  for (const p of parts) {
    const m = /^([a-z]+)=([a-z-]+)$/i.exec(p);
    if (!m) return { rule: `${COORDINATES_RULE}; "${p}" is not a word=value pair` };
    const key = m[1]!.toLowerCase();
    const value = m[2]!.toLowerCase();
    const allowed = WORDS[key];
    if (!allowed) return { rule: `${COORDINATES_RULE}; "${m[1]}" is not one of origin, x, y, view` };
    if (key in out) return { rule: `${COORDINATES_RULE}; "${key}" is given twice` };
    if (!allowed.includes(value))
      return {
        rule: `unknown coordinate convention: ${key}=${m[2]} (allowed: ${allowed.map((a) => `${key}=${a}`).join(', ')})`,
      };
    out[key] = value;
  }
  for (const key of Object.keys(WORDS))
    if (!(key in out)) return { rule: `${COORDINATES_RULE}; "${key}" is missing` };
  return {
    origin: out.origin as Origin,
    x: out.x as 'right' | 'left',
    y: out.y as 'up' | 'down',
    view: out.view as 'front' | 'back',
  };
}

/** The canonical text of a convention (stored with the data for the audit trail). */
export function conventionText(c: FrameConvention): string {
  return `origin=${c.origin} x=${c.x} y=${c.y} view=${c.view} notch=${c.notchDeg}`;
}

/** A mapping of file coordinates (metres, file axes) into the internal frame (metres). */
export interface FrameTransform {
  /** Writes the internal-frame position of (x, y) into out[0], out[1]. */
  apply: (xM: number, yM: number, out: Float64Array | number[]) => void;
  /** Matrix entries of the linear part (x₂ = a·x + b·y + c, y₂ = d·x + e·y + f). */
  readonly a: number;
  readonly b: number;
  readonly c: number;
  readonly d: number;
  readonly e: number;
  readonly f: number;
}

/**
 * cos and sin of an angle in degrees, exact (0, ±1) at whole multiples of 90° so that quarter-turn
 * conventions map grid values without rounding noise.
 */
function cosSinDeg(deg: number): [number, number] {
  const q = ((deg % 360) + 360) % 360;
  if (q === 0) return [1, 0];
  if (q === 90) return [0, 1];
  if (q === 180) return [-1, 0];
  if (q === 270) return [0, -1];
  const r = (q * Math.PI) / 180;
  return [Math.cos(r), Math.sin(r)];
}

/**
 * Builds the mapping of a declared convention into the internal frame for a wafer of radius `radiusM`.
 * @example frameTransform({ origin: 'centre', x: 'right', y: 'down', view: 'front', notchDeg: 90 }, 0.15)
 *          maps (0.01, 0.02) → (0.01, −0.02)
 */
export function frameTransform(conv: FrameConvention, radiusM: number): FrameTransform {
  const sx = (conv.x === 'right' ? 1 : -1) * (conv.view === 'front' ? 1 : -1);
  const sy = conv.y === 'up' ? 1 : -1;
  // Notch direction after the axis step, in whole degrees where possible (φ in degrees).
  const [ct, st] = cosSinDeg(conv.notchDeg);
  const phiDeg = (Math.atan2(sy * st, sx * ct) * 180) / Math.PI;
  // Round φ to the nearest 1e-9° so that 90°-multiples stay exact after atan2.
  const phiRounded = Math.round(phiDeg * 1e9) / 1e9;
  const [cd, sd] = cosSinDeg(-90 - phiRounded);
  // Linear part: R(δ)·diag(sx, sy); translation from the origin shift applied before it.
  const a = cd * sx;
  const b = -sd * sy;
  const d = sd * sx;
  const e = cd * sy;
  const shift = conv.origin === 'lower-left' ? radiusM : 0;
  const c = -(a + b) * shift;
  const f = -(d + e) * shift;
  return {
    a,
    b,
    c,
    d,
    e,
    f,
    apply: (xM, yM, out) => {
      out[0] = a * xM + b * yM + c;
      out[1] = d * xM + e * yM + f;
    },
  };
}
