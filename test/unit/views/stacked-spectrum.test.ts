import { describe, expect, it } from 'vitest';
import {
  powerLawSpectrum,
  SPECTRUM_BIN_COUNT,
  spectrumTotal,
  zeroSpectrum,
} from '../../../src/model/spectrum.ts';
import { stackedSpectrum, stackSpectrum } from '../../../views/charts/stacked-spectrum.tsx';
import { byClass, byName, danglingRefs, svgOf, textOf } from './svg-query.ts';

const scan = powerLawSpectrum({ countAbove: 8, atDiameterM: 45e-9, slope: 1.2, fromM: 45e-9, toM: 10e-6 });
const adders = powerLawSpectrum({ countAbove: 2, atDiameterM: 45e-9, slope: 2, fromM: 30e-9, toM: 10e-6 });

describe('stackSpectrum', () => {
  it('stacks per-bin counts so that the top of the stack is the bin-wise sum', () => {
    const { stacked } = stackSpectrum(
      [
        { source: 'a', counts: scan },
        { source: 'b', counts: adders },
      ],
      'per-bin',
      SPECTRUM_BIN_COUNT,
    );
    for (let i = 0; i < SPECTRUM_BIN_COUNT; i++) {
      expect(stacked[0]![i]![0]).toBe(0);
      expect(stacked[1]![i]![0]).toBeCloseTo(scan[i]!, 12);
      expect(stacked[1]![i]![1]).toBeCloseTo(scan[i]! + adders[i]!, 12);
    }
  });

  it('gives N(≥ edge) in cumulative mode: the total at the first edge, 0 at the last, never rising', () => {
    const { perSource } = stackSpectrum([{ source: 'a', counts: scan }], 'cumulative', SPECTRUM_BIN_COUNT);
    const cum = perSource[0]!;
    expect(cum).toHaveLength(SPECTRUM_BIN_COUNT + 1);
    expect(cum[0]).toBeCloseTo(spectrumTotal(scan), 10);
    // powerLawSpectrum puts N(≥ 45 nm) = 8 above its lower bound, less what lies above 10 µm
    // (8·(10 µm / 45 nm)^−1.2 = 0.0118): the cumulative at the grid's first edge is that total.
    expect(cum[0]).toBeCloseTo(8 - 8 * (10e-6 / 45e-9) ** -1.2, 6);
    expect(cum.at(-1)).toBe(0);
    for (let i = 1; i < cum.length; i++) expect(cum[i]!).toBeLessThanOrEqual(cum[i - 1]!);
  });

  it('treats negative and non-finite bins as empty', () => {
    const bad = zeroSpectrum();
    bad[3] = -1;
    const odd = Array.from({ length: SPECTRUM_BIN_COUNT }, (_, i) =>
      i === 4 ? Number.NaN : i === 5 ? 2 : 0,
    );
    const { perSource } = stackSpectrum(
      [
        { source: 'a', counts: bad },
        { source: 'b', counts: odd },
      ],
      'per-bin',
      SPECTRUM_BIN_COUNT,
    );
    expect(perSource[0]!.every((v) => v === 0)).toBe(true);
    expect(perSource[1]![4]).toBe(0);
    expect(perSource[1]![5]).toBe(2);
  });
});

describe('stackedSpectrum', () => {
  const series = [
    { source: 'scan W01 (detected)', counts: scan },
    { source: 'bonder <adders> & "co"', counts: adders },
  ];

  it('draws one layer per source, log axes labelled in nm/µm and powers of ten, and a legend with totals', () => {
    const svg = svgOf(
      stackedSpectrum({
        title: 'Interface spectrum',
        series,
        markers: [{ atM: 45e-9, label: 'scan threshold' }],
      }),
    );
    const layers = byClass(svg, 'vc-layer');
    expect(layers.map((l) => l.attrs['data-source'])).toEqual(series.map((s) => s.source));
    for (const l of layers) expect(l.attrs.d!.length).toBeGreaterThan(20);
    // Each layer has its own pattern or solid fill, so print keeps them apart.
    expect(new Set(layers.map((l) => l.attrs.fill)).size).toBe(2);
    const x = svg.children.find((c) => c.attrs['data-axis'] === 'x')!;
    const xl = byClass(x, 'vc-tick').map(textOf).filter(Boolean);
    expect(xl).toContain('100 nm');
    expect(xl).toContain('1 µm');
    expect(textOf(x)).toContain('particle diameter d (log)');
    const y = svg.children.find((c) => c.attrs['data-axis'] === 'y')!;
    expect(textOf(y)).toContain('particles per wafer per size bin');
    const legend = byClass(svg, 'vc-legend-entry').map(textOf);
    expect(legend).toHaveLength(2);
    expect(legend[1]).toBe(`bonder <adders> & "co" — ${Number(spectrumTotal(adders).toPrecision(3))}`);
    expect(byClass(svg, 'vc-marker').map(textOf)).toEqual(['scan threshold']);
    expect(danglingRefs(svg)).toEqual([]);
  });

  it('labels the cumulative mode as N(≥ d)', () => {
    const svg = svgOf(
      stackedSpectrum({ title: 't', series, mode: 'cumulative', basis: 'particles per pair' }),
    );
    const y = svg.children.find((c) => c.attrs['data-axis'] === 'y')!;
    expect(textOf(y)).toContain('particles per pair ≥ d');
  });

  it('shows the axes and says so when no source carries particles', () => {
    const svg = svgOf(stackedSpectrum({ title: 't', series: [{ source: 'none', counts: zeroSpectrum() }] }));
    expect(byClass(svg, 'vc-layer')).toHaveLength(0);
    expect(byClass(svg, 'vc-axis')).toHaveLength(2);
    expect(textOf(byClass(svg, 'vc-nodata')[0]!)).toBe('no particles from any source');
  });

  it('neither stacks nor lists a source with nothing in any bin', () => {
    const svg = svgOf(
      stackedSpectrum({
        title: 't',
        series: [...series, { source: 'idle stocker', counts: zeroSpectrum() }],
      }),
    );
    expect(byClass(svg, 'vc-layer').map((l) => l.attrs['data-source'])).toEqual(series.map((s) => s.source));
    expect(byClass(svg, 'vc-legend-entry').map(textOf).join('|')).not.toContain('idle stocker');
  });

  it('tells the same source on the two wafers apart by outline and by the wafer named first in the legend', () => {
    const svg = svgOf(
      stackedSpectrum({
        title: 't',
        width: 560,
        series: [
          {
            source: 'Wait at a very long location name that does not fit on one legend line at all',
            counts: scan,
            wafer: 'top',
            waferId: 'W-01',
          },
          {
            source: 'Wait at a very long location name that does not fit on one legend line at all',
            counts: scan,
            wafer: 'bottom',
            waferId: 'W-02',
          },
          { source: '3 other sources', counts: adders },
        ],
      }),
    );
    const layers = byClass(svg, 'vc-layer');
    expect(layers.map((l) => l.attrs['data-wafer'] ?? null)).toEqual(['top', 'bottom', null]);
    // Outlines: dashed top, solid bottom, dotted pooled — three different strokes.
    const dashes = layers.map((l) => l.attrs['stroke-dasharray'] ?? 'solid');
    expect(new Set(dashes).size).toBe(3);
    expect(dashes[1]).toBe('solid');
    // The legend swatch carries the same outline as its layer.
    const swatches = byClass(svg, 'vc-legend-swatch');
    expect(swatches.map((s) => s.attrs['stroke-dasharray'] ?? 'solid')).toEqual(dashes);
    const legend = byClass(svg, 'vc-legend-entry').map(textOf);
    expect(legend[0]!.startsWith('top W-01 · Wait at')).toBe(true);
    expect(legend[1]!.startsWith('bottom W-02 · Wait at')).toBe(true);
    expect(legend[0]).not.toBe(legend[1]);
    // Shortened to fit the plot's width, the total kept at the end.
    expect(legend[0]).toContain('…');
    expect(legend[0]!.endsWith(` — ${Number(spectrumTotal(scan).toPrecision(3))}`)).toBe(true);
    expect(textOf(byClass(svg, 'vc-legend-heading')[0]!)).toBe(
      'Outline: solid bottom wafer · dashed top wafer · dotted both or pooled',
    );
  });

  it('escapes source names in layers, tooltips and legend', () => {
    const out = String(stackedSpectrum({ title: '<t>', series }));
    expect(out).not.toContain('<adders>');
    expect(out).not.toContain('<t>');
    expect(textOf(byName(svgOf(out), 'title')[0]!)).toBe('<t>');
  });
});
