import { describe, expect, it } from 'vitest';
import { COLOUR_CLASSES, classColour, killColourScale, voidMap } from '../../../views/charts/void-map.tsx';
import { byClass, byName, danglingRefs, hasClass, svgOf, textOf } from './svg-query.ts';

const base = { title: 'Pair P1 voids', diameterMm: 300, edgeExclusionMm: 3 };
const dies = [
  { xMm: 0, yMm: 0, wMm: 10, hMm: 10, killed: true, pKill: 0.9 },
  { xMm: -10, yMm: 0, wMm: 10, hMm: 10, killed: false, pKill: 0.05 },
  { xMm: 0, yMm: -10, wMm: 10, hMm: 10, killed: false },
];

/** Pixels per mm: the outline arc's radius over the wafer radius. */
function pxPerMm(svg: ReturnType<typeof svgOf>): number {
  const d = byClass(svg, 'vc-wafer-outline')[0]!.attrs.d!;
  return Number(/A([\d.]+),/.exec(d)![1]) / 150;
}

describe('voidMap', () => {
  it('draws each void as a disc to scale: radius in px = radius in mm × the wafer scale', () => {
    const svg = svgOf(
      voidMap({
        ...base,
        dies,
        voids: [
          { xMm: 5, yMm: 5, radiusMm: 3.5, survival: 1 },
          { xMm: -50, yMm: 20, radiusMm: 7, survival: 0.4 },
        ],
      }),
    );
    const k = pxPerMm(svg);
    const discs = byClass(svg, 'vc-void').map((g) => byName(g, 'circle')[0]!);
    expect(discs).toHaveLength(2);
    const radii = discs.map((c) => Number(c.attrs.r)).sort((a, b) => a - b);
    // 0.1 px rounding of coordinates → 0.06 px tolerance on each radius.
    expect(Math.abs(radii[0]! - 3.5 * k)).toBeLessThan(0.06);
    expect(Math.abs(radii[1]! - 7 * k)).toBeLessThan(0.06);
    expect(danglingRefs(svg)).toEqual([]);
  });

  it('shades each disc by its survival probability and keeps its outline visible at 0', () => {
    const svg = svgOf(
      voidMap({
        ...base,
        dies: [],
        voids: [0, 0.25, 0.5, 1].map((s, i) => ({ xMm: i * 20, yMm: 0, radiusMm: 2, survival: s })),
      }),
    );
    const discs = byClass(svg, 'vc-void')
      .map((g) => ({ s: Number(g.attrs['data-survival']), c: byName(g, 'circle')[0]! }))
      .sort((a, b) => a.s - b.s);
    const op = discs.map((d) => Number(d.c.attrs['fill-opacity']));
    expect(op[0]).toBe(0);
    for (let i = 1; i < op.length; i++) expect(op[i]!).toBeGreaterThan(op[i - 1]!);
    for (const d of discs) expect(Number(d.c.attrs['stroke-opacity'])).toBeGreaterThanOrEqual(0.45);
    // The description states the expected count Σ s = 1.75.
    expect(textOf(byName(svg, 'desc')[0]!)).toContain('expected 1.75');
  });

  it('marks killed dies with a hatch over their colour and a heavy outline, not by colour alone', () => {
    const svg = svgOf(voidMap({ ...base, dies, voids: [] }));
    // the killed die is drawn on its own; the two others share the paths of their colour classes
    expect(byClass(svg, 'vc-die-grid')[0]!.attrs['data-dies']).toBe('3');
    const cells = byClass(svg, 'vc-die');
    expect(cells).toHaveLength(1);
    expect(byClass(svg, 'vc-die-fill')).toHaveLength(2);
    const killed = cells.filter((c) => hasClass(c, 'vc-die-killed'));
    expect(killed).toHaveLength(1);
    const [fill, hatch] = byName(killed[0]!, 'rect');
    expect(fill!.attrs.fill).toMatch(/^rgb\(/); // its kill-probability colour stays
    expect(Number(fill!.attrs['stroke-width'])).toBeGreaterThan(1);
    expect(hatch!.attrs.fill).toMatch(/^url\(#.+-kill\)$/);
    const pattern = byName(svg, 'pattern').find((p) => hatch!.attrs.fill === `url(#${p.attrs.id})`);
    expect(pattern && byName(pattern, 'line').length).toBe(1);
    expect(textOf(svg)).toContain('killed, P ≥ 50 % (1)');
    expect(textOf(fill!)).toContain('P(kill) 90 %');
    expect(danglingRefs(svg)).toEqual([]);
  });

  it('colours every die by its kill probability on one ordered scale, and draws the scale with ticks in %', () => {
    const ps = [0, 0.01, 0.05, 0.1, 0.2, 0.3];
    const svg = svgOf(
      voidMap({
        ...base,
        voids: [],
        dies: ps.map((p, i) => ({ xMm: i * 10, yMm: 0, wMm: 10, hMm: 10, killed: false, pKill: p })),
      }),
    );
    // one path per colour class (none of these dies is reached or killed), in the order of the dies
    const paths = byClass(svg, 'vc-die-fill');
    expect(paths.map((x) => Number(x.attrs['data-p-kill']))).toEqual(ps);
    const fills = paths.map((x) => x.attrs['data-colour']!);
    // lightness (sum of RGB) falls as the probability rises: a sequential scale, light = safe
    const light = fills.map((f) => {
      const [r, g, b] = /rgb\((\d+), (\d+), (\d+)\)/.exec(f)!.slice(1).map(Number);
      return r! + g! + b!;
    });
    for (let i = 1; i < light.length; i++) expect(light[i]!).toBeLessThan(light[i - 1]!);
    // the scale's top end holds the largest probability (30 % → 50 %); its ticks say %
    const scale = byClass(svg, 'vc-colour-scale')[0]!;
    expect(textOf(scale)).toContain('Die kill probability, all sources');
    const ticks = byClass(scale, 'vc-tick').map((t) => textOf(t));
    expect(ticks).toEqual(['0 %', '5 %', '20 %', '50 %']);
    // the legend bar's gradient is the dies' colour scale: its ends are the colours of 0 and of the top
    const stops = byName(svg, 'stop');
    expect(stops[0]!.attrs['stop-color']).toBe(fills[0]);
    expect(stops.at(-1)!.attrs['stop-color']).toBe(killColourScale(0.3).colour(0.5));
  });

  it('outlines the dies a detected particle’s void reaches, and says how many in the legend', () => {
    const svg = svgOf(
      voidMap({
        ...base,
        voids: [],
        dies: [
          { xMm: 0, yMm: 0, wMm: 10, hMm: 10, killed: false, pKill: 0.3, pDetected: 0.25 },
          { xMm: 10, yMm: 0, wMm: 10, hMm: 10, killed: false, pKill: 0.06, pDetected: 0 },
        ],
      }),
    );
    const cells = byClass(svg, 'vc-die');
    expect(cells).toHaveLength(1); // the reached die alone; the other is in its colour class's path
    expect(hasClass(cells[0]!, 'vc-die-detected')).toBe(true);
    expect(byClass(svg, 'vc-die-fill')[0]!.attrs['data-p-kill']).toBe('0.0600');
    expect(byName(cells[0]!, 'rect')[0]!.attrs.stroke).toBe('#b3261e');
    expect(textOf(svg)).toContain('reached by a detected void (1)');
    expect(textOf(byName(cells[0]!, 'rect')[0]!)).toContain('from detected particles 25 %');
  });

  it('states the sum of the probabilities as the expected die loss it equals', () => {
    const svg = svgOf(
      voidMap({ ...base, dies, voids: [], dieLoss: { value: 0.95, form: 'negative binomial' } }),
    );
    expect(textOf(byClass(svg, 'vc-void-summary')[0]!)).toContain('Sum over the dies: 0.95');
    expect(textOf(byName(svg, 'desc')[0]!)).toContain('their sum, 0.95, is the expected die loss');
  });

  it('outlines the pad region inside every die drawn large enough, else names it in the legend', () => {
    // 20 mm dies (about 20 px on a 300 mm wafer at 320 px) with an 8 × 6 mm pad
    const pad = { xMm: 1, yMm: 1, wMm: 8, hMm: 6 };
    const big = dies.map((d) => ({ ...d, xMm: d.xMm * 2, yMm: d.yMm * 2, wMm: 20, hMm: 20 }));
    const svg = svgOf(voidMap({ ...base, dies: big, voids: [], pad }));
    const pads = byClass(svg, 'vc-pad');
    expect(pads).toHaveLength(3);
    expect(pads[0]!.attrs.fill).toBe('none'); // the die's colour shows through
    const k = pxPerMm(svg);
    expect(Math.abs(Number(pads[0]!.attrs.width) - 8 * k)).toBeLessThan(0.11);
    expect(Math.abs(Number(pads[0]!.attrs.height) - 6 * k)).toBeLessThan(0.11);
    expect(textOf(svg)).toContain('pad region');
    expect(byClass(svgOf(voidMap({ ...base, dies: big, voids: [] })), 'vc-pad')).toHaveLength(0);
    // 2 mm dies are about 2 px wide on a 300 mm wafer: no pad outlines, the legend gives the pad's size
    const small = dies.map((d) => ({ ...d, wMm: 2, hMm: 2 }));
    const tiny = svgOf(
      voidMap({ ...base, dies: small, voids: [], pad: { xMm: 0.5, yMm: 0.5, wMm: 1, hMm: 0.8 } }),
    );
    expect(byClass(tiny, 'vc-pad')).toHaveLength(0);
    expect(textOf(tiny)).toContain('kill area: pad 1 × 0.8 mm');
  });

  it('escapes source labels and the frame note', () => {
    const out = String(
      voidMap({
        ...base,
        title: '<P1> & "Q"',
        frameNote: 'frame <i>',
        dies: [],
        voids: [{ xMm: 0, yMm: 0, radiusMm: 1, survival: 1, label: '<script>x</script>' }],
      }),
    );
    expect(out).not.toMatch(/<script>|<i>|<P1>/);
    const svg = svgOf(out);
    expect(textOf(byClass(svg, 'vc-frame-note')[0]!)).toBe('frame <i>');
    expect(textOf(byClass(svg, 'vc-void')[0]!)).toContain('<script>x</script>');
  });

  it('puts the dies of one colour class in one path, its colour within half a class of the exact one', () => {
    // 400 dies with probabilities spread over 0…0.3: at most COLOUR_CLASSES + 1 paths
    const many = Array.from({ length: 400 }, (_, i) => ({
      xMm: (i % 20) * 5 - 50,
      yMm: Math.floor(i / 20) * 5 - 50,
      wMm: 5,
      hMm: 5,
      killed: false,
      pKill: (0.3 * i) / 399,
    }));
    const svg = svgOf(voidMap({ ...base, dies: many, voids: [] }));
    const paths = byClass(svg, 'vc-die-fill');
    expect(paths.length).toBeLessThanOrEqual(COLOUR_CLASSES + 1);
    const listed = paths.flatMap((x) => x.attrs['data-p-kill']!.split(' ').map(Number));
    expect(listed).toHaveLength(400);
    // on this regular grid each class's path is its row runs, filled with a one-die pattern
    for (const x of paths) expect(x.attrs.fill).toMatch(/^url\(#.+-class-\d+\)$/);
    expect(danglingRefs(svg)).toEqual([]);
    // the class colour is the scale's colour at a stretched value within 1/(2·COLOUR_CLASSES) of the die's own
    const scale = killColourScale(0.3);
    for (const p of [0, 0.001, 0.05, 0.2999]) {
      const t = Math.sqrt(p / scale.top);
      const lo = scale.colour(Math.max(0, t - 0.5 / COLOUR_CLASSES) ** 2 * scale.top);
      const hi = scale.colour(Math.min(1, t + 0.5 / COLOUR_CLASSES) ** 2 * scale.top);
      const sum = (c: string) =>
        /rgb\((\d+), (\d+), (\d+)\)/
          .exec(c)!
          .slice(1)
          .map(Number)
          .reduce((a, b) => a + b, 0);
      const c = sum(classColour(scale, p));
      expect(c).toBeLessThanOrEqual(Math.max(sum(lo), sum(hi)) + 1);
      expect(c).toBeGreaterThanOrEqual(Math.min(sum(lo), sum(hi)) - 1);
    }
  });
});
