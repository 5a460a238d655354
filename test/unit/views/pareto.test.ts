import { describe, expect, it } from 'vitest';
import { pareto, paretoBars } from '../../../views/charts/pareto.tsx';
import { byClass, byName, svgOf, textOf } from './svg-query.ts';

describe('paretoBars', () => {
  it('sorts descending, drops zero, negative and non-finite items, and ends the cumulative at 1', () => {
    const bars = paretoBars([
      { label: 'a', value: 1 },
      { label: 'b', value: 3 },
      { label: 'z', value: 0 },
      { label: 'n', value: Number.NaN },
      { label: 'neg', value: -2 },
      { label: 'c', value: 2 },
    ]);
    expect(bars.map((b) => b.label)).toEqual(['b', 'c', 'a']);
    expect(bars.map((b) => b.cumulative)).toEqual([0.5, 5 / 6, 1]);
  });

  it('pools the tail beyond maxBars into one bar and keeps the total', () => {
    const items = Array.from({ length: 12 }, (_, i) => ({ label: `t${i}`, value: 12 - i }));
    const bars = paretoBars(items, 5);
    expect(bars).toHaveLength(5);
    expect(bars.at(-1)!.label).toBe('others (8)');
    expect(bars.at(-1)!.value).toBe(8 + 7 + 6 + 5 + 4 + 3 + 2 + 1);
    expect(bars.reduce((a, b) => a + b.value, 0)).toBe(78); // 1 + … + 12
    expect(bars.at(-1)!.cumulative).toBe(1);
  });
});

describe('pareto', () => {
  const items = [
    { label: 'BOND-01', value: 3 },
    { label: 'Q-time <Stocker 2> & "B"', value: 1 },
    { label: 'post-CMP clean', value: 2 },
  ];

  it('draws bars in descending order with heights in proportion, and a cumulative line to 100 %', () => {
    const svg = svgOf(pareto({ title: 'Lot Pareto', items, valueLabel: 'expected voids' }));
    const bars = byClass(svg, 'vc-bar');
    expect(bars.map((b) => b.attrs['data-label'])).toEqual([
      'BOND-01',
      'post-CMP clean',
      'Q-time <Stocker 2> & "B"',
    ]);
    const rects = bars.map((b) => byName(b, 'rect')[0]!);
    const h = rects.map((r) => Number(r.attrs.height));
    expect(h[1]! / h[0]!).toBeCloseTo(2 / 3, 2);
    expect(h[2]! / h[0]!).toBeCloseTo(1 / 3, 2);
    const xs = rects.map((r) => Number(r.attrs.x));
    expect(xs[0]!).toBeLessThan(xs[1]!);
    expect(byClass(svg, 'vc-cumulative-point')).toHaveLength(3);
    const right = svg.children.find((c) => c.attrs['data-axis'] === 'y2')!;
    expect(textOf(right)).toContain('100 %');
    expect(textOf(right)).toContain('cumulative share');
    expect(textOf(svg.children.find((c) => c.attrs['data-axis'] === 'y')!)).toContain('expected voids');
  });

  it('escapes labels and shortens long ones on the axis, whole in the tooltip', () => {
    const long = 'Wait at <Bay 3 west> during the "night shift" & more words';
    const out = String(pareto({ title: 't', items: [{ label: long, value: 1 }, ...items], valueLabel: 'v' }));
    expect(out).not.toContain('<Bay');
    expect(out).not.toContain('<Stocker');
    const svg = svgOf(out);
    const bar = byClass(svg, 'vc-bar').find((b) => b.attrs['data-label'] === long)!;
    const axisLabel = textOf(byClass(bar, 'vc-bar-label')[0]!);
    expect(axisLabel.endsWith('…')).toBe(true);
    expect(long.startsWith(axisLabel.slice(0, -1))).toBe(true);
    expect(textOf(byName(bar, 'title')[0]!)).toContain(long);
  });

  it('says there is nothing to attribute when every value is zero', () => {
    const svg = svgOf(pareto({ title: 't', items: [{ label: 'x', value: 0 }], valueLabel: 'v' }));
    expect(byClass(svg, 'vc-bar')).toHaveLength(0);
    expect(textOf(byClass(svg, 'vc-nodata')[0]!)).toBe('nothing to attribute');
  });
});
