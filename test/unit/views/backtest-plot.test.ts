import { describe, expect, it } from 'vitest';
import { backtestPlot } from '../../../views/charts/backtest-plot.tsx';
import { byClass, byName, danglingRefs, svgOf, textOf } from './svg-query.ts';

const before = [
  { label: 'P1', observed: 4, predicted: 1, low: 0, high: 3 },
  { label: 'P2', observed: 2, predicted: 1.5, low: 0, high: 4 },
];
const after = [
  { label: 'P1', observed: 4, predicted: 3.5, low: 1, high: 7 },
  { label: 'P2', observed: 2, predicted: 3, low: 0, high: 6 },
];

describe('backtestPlot', () => {
  it('draws before as hollow circles and after as filled diamonds, each with its interval whisker', () => {
    const svg = svgOf(backtestPlot({ title: 'voids', quantity: 'voids', before, after }));
    const b = byClass(svg, 'vc-backtest-before');
    const a = byClass(svg, 'vc-backtest-after');
    expect(b).toHaveLength(2);
    expect(a).toHaveLength(2);
    expect(byName(b[0]!, 'circle')[0]!.attrs.fill).toBe('#ffffff');
    expect(byName(a[0]!, 'path')[0]!.attrs.d).toMatch(/^M.*L.*L.*L.*Z$/);
    expect(byName(b[0]!, 'line').length).toBeGreaterThanOrEqual(3); // whisker and its two end ticks
    expect(danglingRefs(svg)).toEqual([]);
  });

  it('marks which observed values fall inside the predicted interval', () => {
    const svg = svgOf(backtestPlot({ title: 'voids', quantity: 'voids', before, after }));
    // P1 before: 4 outside [0, 3]; P2 before: 2 inside [0, 4]; both after inside.
    expect(byClass(svg, 'vc-backtest-before').map((g) => g.attrs['data-inside'])).toEqual(['false', 'true']);
    expect(byClass(svg, 'vc-backtest-after').map((g) => g.attrs['data-inside'])).toEqual(['true', 'true']);
  });

  it('draws the 1:1 line from the origin, predicted = observed along it (read back through the axis ticks)', () => {
    const svg = svgOf(backtestPlot({ title: 'voids', quantity: 'voids', before, after }));
    const l = byClass(svg, 'vc-one-to-one')[0]!;
    const [x1, y1, x2, y2] = ['x1', 'y1', 'x2', 'y2'].map((k) => Number(l.attrs[k])) as [
      number,
      number,
      number,
      number,
    ];
    /** Value at a pixel position, from two labelled ticks of an axis. */
    const axis = (cls: string, coord: 'x1' | 'y1') => {
      const ticks = byClass(byClass(svg, cls)[0]!, 'vc-tick')
        .map((t) => ({ v: Number(textOf(t)), px: Number(byName(t, 'line')[0]!.attrs[coord]) }))
        .filter((t) => Number.isFinite(t.v));
      const [a, b] = [ticks[0]!, ticks[ticks.length - 1]!];
      return (px: number) => a.v + ((px - a.px) * (b.v - a.v)) / (b.px - a.px);
    };
    const xv = axis('vc-axis-x', 'x1');
    const yv = axis('vc-axis-y', 'y1');
    // 0.1 px rounding over ~250 px of axis: 0.01 of a unit.
    expect(xv(x1)).toBeCloseTo(0, 1);
    expect(yv(y1)).toBeCloseTo(0, 1);
    expect(Math.abs(xv(x2) - yv(y2))).toBeLessThan(0.01);
  });

  it('ends a whisker beyond the axis in an arrow, and says when nothing is there', () => {
    const svg = svgOf(
      backtestPlot({
        title: 'area',
        quantity: 'area',
        before: [{ label: 'P', observed: 1, predicted: 1, low: 0, high: 100 }],
        after: [],
      }),
    );
    // the axis ends near twice the largest point (1): the whisker to 100 is capped with an arrow
    expect(byName(byClass(svg, 'vc-backtest-before')[0]!, 'path')).toHaveLength(1);
    const empty = svgOf(backtestPlot({ title: 'x', quantity: 'x', before: [], after: [] }));
    expect(textOf(byClass(empty, 'vc-nodata')[0]!)).toBe('No inspected pairs to compare');
  });
});
