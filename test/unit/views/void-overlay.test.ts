import { describe, expect, it } from 'vitest';
import { voidOverlay } from '../../../views/charts/void-overlay.tsx';
import { byClass, byName, danglingRefs, svgOf, textOf } from './svg-query.ts';

const base = { title: 'Pair P1: observed over predicted', diameterMm: 300, edgeExclusionMm: 3 };

/** Pixels per mm: the outline arc's radius over the wafer radius. */
function pxPerMm(svg: ReturnType<typeof svgOf>): number {
  const d = byClass(svg, 'vc-wafer-outline')[0]!.attrs.d!;
  return Number(/A([\d.]+),/.exec(d)![1]) / 150;
}

const input = {
  ...base,
  discs: [
    { xMm: 10, yMm: 20, radiusMm: 1.5, survival: 0.3, reportable: true, matched: true },
    { xMm: -40, yMm: 5, radiusMm: 0.4, survival: 0.8, reportable: true, matched: false },
    { xMm: 60, yMm: -60, radiusMm: 0.01, survival: 1, reportable: false, matched: false },
  ],
  voids: [
    { xMm: 10.1, yMm: 20, diameterMm: 4, match: 'explained' as const, particle: { xMm: 10, yMm: 20 } },
    { xMm: -90, yMm: -30, diameterMm: 0.3, match: 'unexplained' as const },
    { xMm: 147.5, yMm: 0, diameterMm: 0.6, match: 'edge-exclusion' as const },
  ],
};

describe('voidOverlay', () => {
  it('tells the classes apart by shape: circle explained, square unexplained, triangle edge, × not seen', () => {
    const svg = svgOf(voidOverlay(input));
    const explained = byClass(svg, 'vc-void-explained');
    const unexplained = byClass(svg, 'vc-void-unexplained');
    const edge = byClass(svg, 'vc-void-edge');
    const notSeen = byClass(svg, 'vc-void-not-seen');
    expect([explained.length, unexplained.length, edge.length, notSeen.length]).toEqual([1, 1, 1, 1]);
    expect(byName(explained[0]!, 'circle')).toHaveLength(1);
    expect(byName(explained[0]!, 'line')).toHaveLength(1); // to its particle
    expect(byName(unexplained[0]!, 'rect')).toHaveLength(1);
    expect(byName(edge[0]!, 'path')[0]!.attrs.d).toMatch(/^M.*L.*L.*Z$/); // a triangle
    expect(byName(notSeen[0]!, 'path')[0]!.attrs.d).toMatch(/l5,5 M.*l5,-5/); // the ×
    // only the reportable, unmatched disc is "not seen"; every disc is drawn as predicted
    expect(byClass(svg, 'vc-predicted')).toHaveLength(3);
    expect(danglingRefs(svg)).toEqual([]);
  });

  it('draws voids and discs to scale, voids never under 3 px across', () => {
    const svg = svgOf(voidOverlay(input));
    const k = pxPerMm(svg);
    const c = byName(byClass(svg, 'vc-void-explained')[0]!, 'circle')[0]!;
    // 0.1 px rounding of coordinates → 0.06 px tolerance.
    expect(Math.abs(Number(c.attrs.r) - 2 * k)).toBeLessThan(0.06);
    const sq = byName(byClass(svg, 'vc-void-unexplained')[0]!, 'rect')[0]!;
    expect(0.3 * k).toBeLessThan(3); // a 0.3 mm void would be under 3 px on this scale
    expect(Number(sq.attrs.width)).toBeCloseTo(3, 1);
    const disc = byClass(svg, 'vc-predicted').find((e) => e.attrs['data-reportable'] === 'true')!;
    expect(Math.abs(Number(disc.attrs.r) - 1.5 * k)).toBeLessThan(0.06);
  });

  it('says the counts in the legend and the description', () => {
    const svg = svgOf(voidOverlay(input));
    const legend = byClass(svg, 'vc-legend').map(textOf).join(' ');
    expect(legend).toContain('explained (1)');
    expect(legend).toContain('unexplained (1)');
    expect(legend).toContain('edge exclusion, not counted (1)');
    expect(legend).toContain('reportable, not seen (1)');
    const desc = textOf(byName(svg, 'desc')[0]!);
    expect(desc).toContain(
      '3 observed voids: 1 explained by a scanned particle (circles), 1 unexplained (squares), 1 in the edge exclusion (triangles)',
    );
  });

  it('escapes labels (rendered by hono/jsx) and leaves out positions that are not numbers', () => {
    const svg = svgOf(
      voidOverlay({
        ...base,
        discs: [],
        voids: [
          { xMm: 0, yMm: 0, diameterMm: 1, match: 'unexplained', label: '<script>x</script>' },
          { xMm: Number.NaN, yMm: 0, diameterMm: 1, match: 'unexplained' },
        ],
      }),
    );
    expect(byClass(svg, 'vc-void-unexplained')).toHaveLength(1);
    expect(textOf(byClass(svg, 'vc-void-unexplained')[0]!)).toContain('<script>x</script>');
  });
});
