import { describe, expect, it } from 'vitest';
import { removalCurve } from '../../../views/charts/removal-curve.tsx';
import { byClass, byName, svgOf, textOf } from './svg-query.ts';

const curve = [20e-9, 50e-9, 100e-9, 300e-9, 1e-6].map((d) => ({
  diameterM: d,
  efficiency: d >= 300e-9 ? 0.99 : d / 300e-9,
}));

describe('removalCurve', () => {
  it('draws the model curve and a measured point per band at the band’s geometric centre', () => {
    const svg = svgOf(
      removalCurve({
        title: 'Post-CMP clean',
        curve,
        measured: [
          { fromM: 45e-9, toM: 90e-9, efficiency: 0.6, lo: 0.5, hi: 0.7, n: 40 },
          { fromM: 90e-9, toM: 180e-9, efficiency: 0.9 },
        ],
      }),
    );
    expect(byClass(svg, 'vc-curve')).toHaveLength(1);
    const bands = byClass(svg, 'vc-band');
    expect(bands).toHaveLength(2);
    // On a log axis the geometric centre √(a·b) sits halfway between a and b.
    const b0 = bands[0]!;
    const bar = byName(b0, 'line')[0]!;
    const sq = byName(b0, 'rect')[0]!;
    const mid = (Number(bar.attrs.x1) + Number(bar.attrs.x2)) / 2;
    expect(Math.abs(Number(sq.attrs.x) + 3.5 - mid)).toBeLessThan(0.2);
    // An interval draws a vertical bar; a band without one has only the horizontal bar.
    expect(byName(b0, 'line')).toHaveLength(2);
    expect(byName(bands[1]!, 'line')).toHaveLength(1);
    expect(textOf(b0)).toContain('interval 50 %–70 %');
    expect(textOf(b0)).toContain('40 particles before');
  });

  it('puts 100 % at the top of a linear efficiency axis and labels the log diameter axis', () => {
    const svg = svgOf(removalCurve({ title: 't', curve }));
    const y = svg.children.find((c) => c.attrs['data-axis'] === 'y')!;
    const ticks = byClass(y, 'vc-tick');
    expect(ticks.map(textOf)).toEqual(['0 %', '20 %', '40 %', '60 %', '80 %', '100 %']);
    const ty = ticks.map((t) => Number(byName(t, 'line').at(-1)!.attrs.y1));
    expect(ty[5]!).toBeLessThan(ty[0]!);
    const x = svg.children.find((c) => c.attrs['data-axis'] === 'x')!;
    expect(byClass(x, 'vc-tick').map(textOf).filter(Boolean)).toEqual(['10 nm', '100 nm', '1 µm', '10 µm']);
    expect(textOf(byClass(svg, 'vc-legend')[0]!)).toContain('measured per size band');
  });

  it('says there is no data when neither curve nor bands are given, and escapes the title', () => {
    const out = String(removalCurve({ title: '<clean & "co">', curve: [] }));
    expect(out).not.toContain('<clean');
    const svg = svgOf(out);
    expect(textOf(byClass(svg, 'vc-nodata')[0]!)).toBe('no removal data');
    expect(textOf(byName(svg, 'title')[0]!)).toBe('<clean & "co">');
  });

  it('draws a confidence band as a closed area between its limits, and a typed curve dashed beside', () => {
    // Hand-built band: upper 0.9 and lower 0.5 at 100 nm; the area's points must include both.
    const band = [50e-9, 100e-9, 200e-9].map((d) => ({ diameterM: d, lower: 0.5, upper: 0.9 }));
    const typed = curve.map((p) => ({ diameterM: p.diameterM, efficiency: p.efficiency * 0.9 }));
    const svg = svgOf(removalCurve({ title: 't', curve, band, typed, curveLabel: 'fitted PRE(d)' }));
    const area = byClass(svg, 'vc-curve-band');
    expect(area).toHaveLength(1);
    const d = area[0]!.attrs.d!;
    expect(d.startsWith('M')).toBe(true);
    expect(d.endsWith('Z')).toBe(true);
    // 3 upper + 3 lower points; the two y values (0.9 and 0.5) on a 0–1 axis.
    const ys = new Set(
      d
        .slice(1, -1)
        .split('L')
        .map((p) => p.split(',')[1]),
    );
    expect(d.slice(1, -1).split('L')).toHaveLength(6);
    expect(ys.size).toBe(2);
    const typedPath = byClass(svg, 'vc-typed');
    expect(typedPath).toHaveLength(1);
    expect(typedPath[0]!.attrs['stroke-dasharray']).toBe('6 4');
    const legend = textOf(byClass(svg, 'vc-legend')[0]!);
    expect(legend).toContain('fitted PRE(d)');
    expect(legend).toContain('its 95 % band');
    expect(legend).toContain('typed PRE(d)');
  });
});
