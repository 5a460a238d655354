import { describe, expect, it } from 'vitest';
import { LABEL_PX_PER_CHAR, pareto, paretoBars } from '../../../views/charts/pareto.tsx';
import { byClass, byName, danglingRefs, svgOf, textOf } from './svg-query.ts';

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

  it('gives cumulative shares of the stated total and adds what the items leave of it as the rest', () => {
    // hand computation: items 3, 2, 1 of a total of 100 → 3 %, 5 %, 6 %, then the rest 94 → 100 %
    const bars = paretoBars(
      [
        { label: 'a', value: 1 },
        { label: 'b', value: 3 },
        { label: 'c', value: 2 },
      ],
      10,
      100,
      'other sources',
    );
    expect(bars.map((b) => b.label)).toEqual(['b', 'c', 'a', 'other sources']);
    expect(bars.map((b) => b.cumulative)).toEqual([0.03, 0.05, 0.06, 1]);
    expect(bars.at(-1)).toMatchObject({ rest: true, value: 94 });
    // a total equal to the items' sum (or below it, or not finite) adds no rest
    expect(paretoBars([{ label: 'a', value: 2 }], 10, 2).map((b) => b.rest)).toEqual([false]);
    expect(paretoBars([{ label: 'a', value: 2 }], 10, 1).map((b) => b.cumulative)).toEqual([1]);
    expect(paretoBars([{ label: 'a', value: 2 }], 10, Number.NaN)).toHaveLength(1);
    // no items: no bars at all, not a lone rest
    expect(paretoBars([], 10, 5)).toEqual([]);
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
    expect(textOf(right)).toContain('cumulative share of total');
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

  it('draws the cumulative line at the shares of the total, the 80 % line at 80 % of it, and the rest as a hatched, broken bar', () => {
    const svg = svgOf(
      pareto({
        title: 'Lot Pareto by tool',
        items,
        valueLabel: 'expected voids',
        total: 150,
        restLabel: 'other sources',
      }),
    );
    // the right axis: the pixel rows of its 0 % and 100 % ticks map pixels back to shares
    const right = svg.children.find((c) => c.attrs['data-axis'] === 'y2')!;
    const tickAt = (label: string) =>
      Number(byName(byClass(right, 'vc-tick').find((t) => textOf(t) === label)!, 'line')[0]!.attrs.y1);
    const y0 = tickAt('0 %');
    const y100 = tickAt('100 %');
    const shareAt = (y: number) => (y0 - y) / (y0 - y100);
    const points = byClass(svg, 'vc-cumulative-point').map((p) => shareAt(Number(p.attrs.y) + 3));
    // hand computation: 3, 2, 1 of 150 → 2 %, 3.33 %, 4 %, then 100 % with the rest (144);
    // 0.1 px rounding of the coordinates over a 180 px axis: 0.1 %
    const want = [0.02, 5 / 150, 0.04, 1];
    for (let i = 0; i < want.length; i++) expect(Math.abs(points[i]! - want[i]!)).toBeLessThan(0.001);
    const guide = byClass(svg, 'vc-guide')[0]!;
    expect(Math.abs(shareAt(Number(guide.attrs.y1)) - 0.8)).toBeLessThan(0.001);
    const rest = byClass(svg, 'vc-bar-rest');
    expect(rest).toHaveLength(1);
    expect(rest[0]!.attrs['data-label']).toBe('other sources');
    expect(byName(rest[0]!, 'rect')[0]!.attrs.fill).toMatch(/^url\(#.+-rest\)$/);
    expect(byClass(rest[0]!, 'vc-bar-break')).toHaveLength(1); // 144 against items of 3: off their scale
    expect(textOf(byClass(svg, 'vc-pareto-note')[0]!)).toBe(
      'The bars hold 4 % of all expected voids; other sources: 96 %.',
    );
    expect(danglingRefs(svg)).toEqual([]);
    // a rest of the items' own size joins their scale unbroken
    const even = svgOf(pareto({ title: 't', items, valueLabel: 'v', total: 8 }));
    expect(byClass(even, 'vc-bar-break')).toHaveLength(0);
    expect(byClass(even, 'vc-bar-rest')).toHaveLength(1);
  });

  it('keeps every bar label inside the chart and apart from its neighbours', () => {
    const long = 'Waiting at Boreas bay 2 (buffer carts and spare load ports)';
    const many = Array.from({ length: 12 }, (_, i) => ({ label: `${long} ${i}`, value: 12 - i }));
    const svg = svgOf(pareto({ title: 't', items: many, valueLabel: 'v', width: 560, height: 340 }));
    const labels = byClass(svg, 'vc-bar-label');
    expect(labels).toHaveLength(10); // 9 items and "others (3)"
    for (const l of labels) {
      // rotated −90° about its anchor, end-anchored: it runs down from y by its length
      expect(l.attrs.transform).toBe(`rotate(-90 ${l.attrs.x} ${l.attrs.y})`);
      expect(Number(l.attrs.y) + LABEL_PX_PER_CHAR * Array.from(textOf(l)).length).toBeLessThanOrEqual(340);
    }
    // one 11 px line each (about 13 px across): columns at least that far apart
    const xs = labels.map((l) => Number(l.attrs.x));
    for (let i = 1; i < xs.length; i++) expect(xs[i]! - xs[i - 1]!).toBeGreaterThan(14);
  });

  it('says there is nothing to attribute when every value is zero', () => {
    const svg = svgOf(pareto({ title: 't', items: [{ label: 'x', value: 0 }], valueLabel: 'v' }));
    expect(byClass(svg, 'vc-bar')).toHaveLength(0);
    expect(textOf(byClass(svg, 'vc-nodata')[0]!)).toBe('nothing to attribute');
  });
});
