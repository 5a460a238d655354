import { describe, expect, it } from 'vitest';
import { voidMap } from '../../../views/charts/void-map.tsx';
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

  it('marks killed dies with a hatch pattern and a heavy outline, not by colour alone', () => {
    const svg = svgOf(voidMap({ ...base, dies, voids: [] }));
    const cells = byClass(svg, 'vc-die');
    expect(cells).toHaveLength(3);
    const killed = cells.filter((c) => hasClass(c, 'vc-die-killed'));
    expect(killed).toHaveLength(1);
    const rect = byName(killed[0]!, 'rect')[0]!;
    expect(rect.attrs.fill).toMatch(/^url\(#.+-kill\)$/);
    expect(Number(rect.attrs['stroke-width'])).toBeGreaterThan(1);
    const pattern = byName(svg, 'pattern').find((p) => rect.attrs.fill === `url(#${p.attrs.id})`);
    expect(pattern && byName(pattern, 'line').length).toBe(1);
    expect(textOf(svg)).toContain('killed (1)');
    expect(textOf(svg)).toContain('good (2)');
    expect(textOf(rect)).toContain('P(kill) 90 %');
  });

  it('shades good dies by kill probability and leaves dies without one white', () => {
    const svg = svgOf(
      voidMap({
        ...base,
        voids: [],
        dies: [
          { xMm: 0, yMm: 0, wMm: 10, hMm: 10, killed: false, pKill: 0.4 },
          { xMm: 10, yMm: 0, wMm: 10, hMm: 10, killed: false, pKill: 0.01 },
          { xMm: 20, yMm: 0, wMm: 10, hMm: 10, killed: false },
        ],
      }),
    );
    const rects = byClass(svg, 'vc-die').map((g) => byName(g, 'rect')[0]!);
    expect(rects.map((r) => r.attrs['fill-opacity'])).toEqual(['0.36', undefined, undefined]);
    expect(rects[1]!.attrs.fill).toBe('#ffffff');
  });

  it('draws the pad region inside every die when the product has one', () => {
    const pad = { xMm: 1, yMm: 1, wMm: 8, hMm: 6 };
    const svg = svgOf(voidMap({ ...base, dies, voids: [], pad }));
    const pads = byClass(svg, 'vc-pad');
    expect(pads).toHaveLength(3);
    const k = pxPerMm(svg);
    expect(Math.abs(Number(pads[0]!.attrs.width) - 8 * k)).toBeLessThan(0.11);
    expect(Math.abs(Number(pads[0]!.attrs.height) - 6 * k)).toBeLessThan(0.11);
    expect(textOf(svg)).toContain('pad region');
    expect(byClass(svgOf(voidMap({ ...base, dies, voids: [] })), 'vc-pad')).toHaveLength(0);
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
});
