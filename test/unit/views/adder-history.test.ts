import { describe, expect, it } from 'vitest';
import { adderHistory } from '../../../views/charts/adder-history.tsx';
import { byClass, byName, svgOf, textOf } from './svg-query.ts';

const t0 = Date.UTC(2026, 9, 12, 8, 0);
const passes = [0, 1, 2, 3].map((i) => ({
  timeMs: t0 + i * 600_000,
  adders: [3, 5, 2, 6][i]!,
  waferId: `W${i}`,
}));

describe('adderHistory', () => {
  it('draws one point per pass, left to right in time, higher for more adders', () => {
    const svg = svgOf(
      adderHistory({ title: 'LACT-1/B', passes, mean: { value: 4, low: 2.8, high: 5.5 }, typed: 5 }),
    );
    const pts = byClass(svg, 'vc-pass');
    expect(pts).toHaveLength(4);
    const xs = pts.map((p) => Number(p.attrs.cx));
    expect([...xs].sort((a, b) => a - b)).toEqual(xs);
    const ys = pts.map((p) => Number(p.attrs.cy));
    // SVG y grows downward: 6 adders (pass 3) is highest, 2 adders (pass 2) lowest.
    expect(ys[3]!).toBeLessThan(ys[1]!);
    expect(ys[2]!).toBeGreaterThan(ys[0]!);
    expect(textOf(byName(pts[1]!, 'title')[0]!)).toBe('2026-10-12T08:10 UTC, W1: 5 adders');
    expect(byClass(svg, 'vc-mean-band')).toHaveLength(1);
    expect(byClass(svg, 'vc-typed')).toHaveLength(1);
    // The mean line sits inside its band.
    const band = byClass(svg, 'vc-mean-band')[0]!;
    const meanY = Number(byName(byClass(svg, 'vc-mean')[0]!, 'line')[0]!.attrs.y1);
    expect(meanY).toBeGreaterThanOrEqual(Number(band.attrs.y));
    expect(meanY).toBeLessThanOrEqual(Number(band.attrs.y) + Number(band.attrs.height));
  });

  it('says there is no pass when there is none, and escapes the title', () => {
    const out = String(adderHistory({ title: '<tool & "x">', passes: [] }));
    expect(out).not.toContain('<tool');
    expect(textOf(byClass(svgOf(out), 'vc-nodata')[0]!)).toBe('no pass');
  });

  it('lists in its legend only what it draws (no fitted mean or typed entry without them)', () => {
    const bare = String(adderHistory({ title: 'LRIN-1', passes }));
    expect(bare).toContain('one pass');
    expect(bare).not.toContain('fitted mean');
    expect(bare).not.toContain('>typed<');
    const full = String(
      adderHistory({ title: 'LRIN-1', passes, mean: { value: 4, low: 3, high: 5 }, typed: 5 }),
    );
    expect(full).toContain('fitted mean, 95 %');
    expect(full).toContain('>typed<');
  });
});
