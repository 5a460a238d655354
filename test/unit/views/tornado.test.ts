/**
 * The tornado chart: rows ordered by swing, segments proportional to the change from the as-is
 * figure, the as-is line at zero, the spec limit and the flip point where they fall, labels escaped,
 * and a well-formed SVG whose every url(#…) resolves. Expected values are hand computations from
 * the inputs below (the chart's x scale is linear, so widths are proportional to changes).
 */
import { describe, expect, it } from 'vitest';
import { swing, type TornadoInput, tornado, tornadoOrder } from '../../../views/charts/tornado.tsx';
import { byClass, byName, danglingRefs, svgOf, textOf } from './svg-query.ts';

const input: TornadoInput = {
  title: 'Sensitivity of TR2653',
  panels: [
    { name: 'expected voids', asIs: 4, limit: { value: 5, label: 'spec limit' } },
    { name: 'dies lost', asIs: 2 },
  ],
  rows: [
    {
      key: 'adders',
      label: 'tool adders',
      rangeLabel: '×/÷ 2',
      flipLabel: null,
      values: [
        { low: 3.5, high: 4.5, flipAt: null },
        { low: 1.8, high: 2.2, flipAt: null },
      ],
    },
    {
      key: 'energy',
      label: 'interface energy <γ> & "W"',
      rangeLabel: '0.6 – 1.8 J/m²',
      flipLabel: 'call changes at 0.74 J/m²',
      values: [
        { low: 6, high: 3, flipAt: 5 },
        { low: 3, high: 1.5, flipAt: 2.6 },
      ],
    },
    {
      key: 'slope',
      label: 'tail slope',
      rangeLabel: '1.5 – 2.5',
      flipLabel: null,
      values: [
        { low: 4.2, high: 3.9, flipAt: null },
        { low: 2.1, high: 1.95, flipAt: null },
      ],
    },
  ],
};

describe('tornadoOrder and swing', () => {
  it('puts the widest swing of the first panel on top', () => {
    // hand computation: swings 0.5 (adders), 2 (energy), 0.2 (slope)
    expect(swing({ low: 6, high: 3, flipAt: null }, 4)).toBe(2);
    expect(tornadoOrder(input.rows, input.panels).map((r) => r.key)).toEqual(['energy', 'adders', 'slope']);
  });
  it('takes a non-finite end as no swing, so such a row goes last instead of breaking the order', () => {
    expect(swing({ low: Number.NaN, high: 4, flipAt: null }, 4)).toBe(0);
  });
});

describe('tornado', () => {
  const svg = svgOf(tornado(input));

  it('is well-formed, a tornado chart, with a title, a description and resolving references', () => {
    expect(svg.attrs['data-chart']).toBe('tornado');
    expect(textOf(byName(svg, 'title')[0]!)).toBe('Sensitivity of TR2653');
    expect(danglingRefs(svg)).toEqual([]);
    const desc = textOf(byName(svg, 'desc')[0]!);
    expect(desc).toContain('interface energy');
    expect(desc).toContain('+2 at the low end');
    expect(desc).toContain('call changes at 0.74 J/m²');
  });

  it('draws two segments per row and panel, with widths in proportion to the change from as is', () => {
    const bars = byClass(svg, 'vc-tornado-bar');
    expect(bars).toHaveLength(3 * 2 * 2);
    const voidsPanel = byClass(svg, 'vc-tornado-panel')[0]!;
    const w = (key: string, end: string) =>
      Number(
        byClass(voidsPanel, 'vc-tornado-bar').find(
          (b) => b.attrs['data-key'] === key && b.attrs['data-end'] === end,
        )!.attrs.width,
      );
    // hand computation: energy low +2, energy high −1, adders high +0.5 → widths 2 : 1 : 0.5
    expect(w('energy', 'high') / w('energy', 'low')).toBeCloseTo(0.5, 1);
    expect(w('adders', 'high') / w('energy', 'low')).toBeCloseTo(0.25, 1);
    // the low and high ends lie on opposite sides of the as-is line for energy
    const asIs = Number(byClass(voidsPanel, 'vc-tornado-asis-line')[0]!.attrs.x1);
    const energyLow = byClass(voidsPanel, 'vc-tornado-bar').find(
      (b) => b.attrs['data-key'] === 'energy' && b.attrs['data-end'] === 'low',
    )!;
    const energyHigh = byClass(voidsPanel, 'vc-tornado-bar').find(
      (b) => b.attrs['data-key'] === 'energy' && b.attrs['data-end'] === 'high',
    )!;
    expect(Number(energyLow.attrs.x)).toBeCloseTo(asIs, 0);
    expect(Number(energyHigh.attrs.x) + Number(energyHigh.attrs.width)).toBeCloseTo(asIs, 0);
  });

  it('marks the flip point only where it lies on the axis, and the spec limit on the voids panel', () => {
    const flips = byClass(svg, 'vc-tornado-flip');
    expect(flips.map((f) => f.attrs['data-key'])).toEqual(['energy', 'energy']);
    const voidsPanel = byClass(svg, 'vc-tornado-panel')[0]!;
    const limit = byClass(voidsPanel, 'vc-tornado-limit')[0]!;
    const flipX = Number(byClass(voidsPanel, 'vc-tornado-flip')[0]!.attrs.points!.split(',')[0]);
    // hand computation: the voids flip is at 5, which is the spec limit's value
    expect(flipX).toBeCloseTo(Number(limit.attrs.x1), 0);
    expect(byClass(byClass(svg, 'vc-tornado-panel')[1]!, 'vc-tornado-limit')).toHaveLength(0);
    expect(textOf(voidsPanel)).toContain('as is: 4 expected voids');
    expect(textOf(voidsPanel)).toContain('spec limit: 5');
  });

  it('labels the axes with what they measure and the legend with every mark', () => {
    const axes = byClass(svg, 'vc-axis-x');
    expect(axes.map((a) => textOf(byClass(a, 'vc-axis-label')[0]!))).toEqual([
      'change in expected voids',
      'change in dies lost',
    ]);
    const legend = textOf(byClass(svg, 'vc-legend')[0]!);
    for (const w of ['low end', 'high end', 'as is', 'spec limit', 'flip point']) expect(legend).toContain(w);
    // signed tick labels with a true minus sign
    expect(textOf(axes[0]!)).toMatch(/−1/);
    expect(textOf(axes[0]!)).toMatch(/\+2/);
  });

  it('escapes labels from the data and says when a flip lies outside the range', () => {
    const text = textOf(svg);
    expect(text).toContain('interface energy <γ> & "W"');
    expect(text).toContain('call unchanged inside the range');
  });

  it('says so when there is nothing to vary, and keeps its axes', () => {
    const empty = svgOf(tornado({ ...input, rows: [] }));
    expect(textOf(empty)).toContain('no inputs');
    expect(byClass(empty, 'vc-axis-x')).toHaveLength(2);
    expect(textOf(byName(empty, 'desc')[0]!)).toBe('No uncertain input to vary.');
  });

  it('names a far-off limit above the plot instead of squashing the bars to reach it', () => {
    const far = svgOf(
      tornado({ ...input, panels: [{ ...input.panels[0]!, limit: { value: 400, label: 'spec limit' } }] }),
    );
    expect(byClass(far, 'vc-tornado-limit')).toHaveLength(0);
    expect(textOf(far)).toContain('spec limit 400: off this axis');
  });
});
