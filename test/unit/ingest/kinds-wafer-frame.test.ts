/**
 * Coordinate conventions of scan and void-inspection files → the internal wafer frame (origin at the
 * centre, x right, y up, notch down, seen from the front). Checks are hand computations of the three
 * steps in src/ingest/kinds/wafer-frame.ts and invariants (distance from the centre kept, the notch
 * always lands at 270°, the internal convention is the identity).
 */
import { describe, expect, it } from 'vitest';
import {
  conventionText,
  type FrameConvention,
  frameTransform,
  INTERNAL_CONVENTION,
  parseCoordinates,
} from '../../../src/ingest/kinds/wafer-frame.ts';

const R = 0.15;
const map = (c: FrameConvention, x: number, y: number) => {
  const out = [0, 0];
  frameTransform(c, R).apply(x, y, out);
  return out;
};
const conv = (p: Partial<FrameConvention>): FrameConvention => ({ ...INTERNAL_CONVENTION, ...p });

describe('parseCoordinates', () => {
  it('reads the four words in any order and case, with spaces, commas or semicolons', () => {
    expect(parseCoordinates('view=back; Y=down, x=left origin=lower-left')).toEqual({
      origin: 'lower-left',
      x: 'left',
      y: 'down',
      view: 'back',
    });
  });

  it.each([
    [
      'origin=centre x=east y=up view=front',
      'unknown coordinate convention: x=east (allowed: x=right, x=left)',
    ],
    [
      'origin=middle x=right y=up view=front',
      'unknown coordinate convention: origin=middle (allowed: origin=centre, origin=lower-left)',
    ],
    [
      'origin=centre x=right y=up',
      'coordinates must state origin=centre|lower-left x=right|left y=up|down view=front|back, e.g. "origin=centre x=right y=up view=front"; "view" is missing',
    ],
    [
      'origin=centre x=right x=left y=up view=front',
      'coordinates must state origin=centre|lower-left x=right|left y=up|down view=front|back, e.g. "origin=centre x=right y=up view=front"; "x" is given twice',
    ],
    [
      'origin=centre x=right y=up view=front z=out',
      'coordinates must state origin=centre|lower-left x=right|left y=up|down view=front|back, e.g. "origin=centre x=right y=up view=front"; "z" is not one of origin, x, y, view',
    ],
    [
      'centre right up front',
      'coordinates must state origin=centre|lower-left x=right|left y=up|down view=front|back, e.g. "origin=centre x=right y=up view=front"; "centre" is not a word=value pair',
    ],
  ])('refuses %s', (text, rule) => {
    expect(parseCoordinates(text)).toEqual({ rule });
  });
});

describe('frameTransform', () => {
  it('is the identity for the internal convention', () => {
    expect(map(INTERNAL_CONVENTION, 0.0125, -0.0402)).toEqual([0.0125, -0.0402]);
  });

  it('mirrors y for y=down with the notch written at +y (which then points down)', () => {
    expect(map(conv({ y: 'down', notchDeg: 90 }), 0.01, 0.02)).toEqual([0.01, -0.02]);
  });

  it('mirrors x for a back view with the notch at 270°', () => {
    expect(map(conv({ view: 'back' }), 0.01, 0.02)).toEqual([-0.01, 0.02]);
  });

  it('x=left seen from the back is x=right seen from the front', () => {
    expect(map(conv({ x: 'left', view: 'back' }), 0.03, -0.04)).toEqual([0.03, -0.04]);
  });

  it('turns a notch at 0° (the file’s +x) down: a quarter turn clockwise', () => {
    // δ = −90° − 0° = −90°: (x, y) → (y, −x); the notch direction (1, 0) → (0, −1).
    expect(map(conv({ notchDeg: 0 }), 1e-2, 0)).toEqual([0, -1e-2]);
    expect(map(conv({ notchDeg: 0 }), 0, 2e-2)).toEqual([2e-2, 0]);
  });

  it('shifts a lower-left origin by the radius', () => {
    expect(map(conv({ origin: 'lower-left' }), R, R)).toEqual([0, 0]);
    expect(map(conv({ origin: 'lower-left' }), 0, R)).toEqual([-R, 0]);
  });

  it('keeps the distance from the centre and sends the notch to 270° for any convention (invariant)', () => {
    let seed = 7;
    const rnd = () => {
      seed = (seed * 1103515245 + 12345) % 2147483648;
      return seed / 2147483648;
    };
    for (const x of ['right', 'left'] as const)
      for (const y of ['up', 'down'] as const)
        for (const view of ['front', 'back'] as const)
          for (const notchDeg of [0, 37.5, 90, 180, 270, 359]) {
            const c: FrameConvention = { origin: 'centre', x, y, view, notchDeg };
            const t = (notchDeg * Math.PI) / 180;
            const n = map(c, R * Math.cos(t), R * Math.sin(t));
            expect(n[0]).toBeCloseTo(0, 12);
            expect(n[1]).toBeCloseTo(-R, 12);
            for (let k = 0; k < 20; k++) {
              const px = (rnd() - 0.5) * 0.2;
              const py = (rnd() - 0.5) * 0.2;
              const q = map(c, px, py);
              // 1e-15 m: a few units in the last place of a 0.1 m value.
              expect(Math.abs(Math.hypot(q[0]!, q[1]!) - Math.hypot(px, py))).toBeLessThan(1e-15);
            }
          }
  });

  it('writes the convention in canonical words', () => {
    expect(conventionText(conv({ y: 'down', notchDeg: 90 }))).toBe(
      'origin=centre x=right y=down view=front notch=90',
    );
  });
});
