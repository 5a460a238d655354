import { describe, expect, it } from 'vitest';
import { layoutDies } from '../../../views/charts/wafer-frame.tsx';
import { DEFAULT_CLASS_EDGES_M, waferMap } from '../../../views/charts/wafer-map.tsx';
import { byClass, byName, danglingRefs, svgOf, textOf } from './svg-query.ts';

const base = { title: 'Wafer W01', diameterMm: 300, edgeExclusionMm: 3 };

/** Centre of the drawn wafer: the centre cross starts at (cx − 4, cy). */
function centreOf(svg: ReturnType<typeof svgOf>): [number, number] {
  const d = byClass(svg, 'vc-wafer-centre')[0]!.attrs.d!;
  const m = /^M([\d.]+),([\d.]+)/.exec(d)!;
  return [Number(m[1]) + 4, Number(m[2])];
}

describe('waferMap', () => {
  it('draws one mark per particle on the wafer and leaves out (and reports) those outside it', () => {
    const svg = svgOf(
      waferMap({
        ...base,
        particles: [
          { xMm: 0, yMm: 0, diameterM: 60e-9 },
          { xMm: 100, yMm: 50, diameterM: 2e-6 },
          { xMm: 149.9, yMm: 0, diameterM: 1e-7 },
          { xMm: 160, yMm: 0, diameterM: 1e-7 }, // outside a 150 mm radius
        ],
      }),
    );
    expect(byClass(svg, 'vc-particle')).toHaveLength(3);
    expect(textOf(byName(svg, 'desc')[0]!)).toContain('3 detected particles');
    expect(textOf(byName(svg, 'desc')[0]!)).toContain('1 outside the wafer outline');
    expect(svg.attrs.role).toBe('img');
    expect(danglingRefs(svg)).toEqual([]);
  });

  it('sizes and shades marks by log size class, an edge belonging to the class above', () => {
    const diam = [20e-9, 50e-9, 99e-9, 300e-9, 1.5e-6, 3e-6, 40e-6];
    const svg = svgOf(
      waferMap({ ...base, particles: diam.map((d, i) => ({ xMm: i * 10, yMm: 0, diameterM: d })) }),
    );
    const marks = byClass(svg, 'vc-particle');
    const cls = new Map(marks.map((m) => [Number(m.attrs.cx), Number(m.attrs['data-size-class'])]));
    const sortedByX = [...cls.entries()].sort((a, b) => a[0] - b[0]).map((e) => e[1]);
    expect(sortedByX).toEqual([0, 1, 1, 3, 4, 5, 5]);
    // Radius grows strictly with class.
    const rOf = new Map(marks.map((m) => [Number(m.attrs['data-size-class']), Number(m.attrs.r)]));
    const radii = [...rOf.entries()].sort((a, b) => a[0] - b[0]).map((e) => e[1]);
    for (let i = 1; i < radii.length; i++) expect(radii[i]!).toBeGreaterThan(radii[i - 1]!);
    // The legend names every class that has marks, with its count; 100–300 nm has none here
    // (classes by hand from the diameters above), so it has no entry.
    const entries = byClass(svg, 'vc-legend-entry').map(textOf);
    expect(entries).toHaveLength(DEFAULT_CLASS_EDGES_M.length);
    expect(entries[0]).toBe('< 50 nm  (1)');
    expect(entries[1]).toBe('50 nm – 100 nm  (2)');
    expect(entries[2]).toBe('300 nm – 1 µm  (1)');
    expect(entries.at(-1)).toBe('≥ 3 µm  (2)');
  });

  it('puts +x to the right and +y up, and mirrors x when shown from the interface (and says so)', () => {
    const p = [{ xMm: 100, yMm: 60, diameterM: 1e-6 }];
    const plain = svgOf(waferMap({ ...base, particles: p }));
    const [cx, cy] = centreOf(plain);
    const m = byClass(plain, 'vc-particle')[0]!;
    expect(Number(m.attrs.cx)).toBeGreaterThan(cx);
    expect(Number(m.attrs.cy)).toBeLessThan(cy);
    expect(byClass(plain, 'vc-mirror-note')).toHaveLength(0);

    const mir = svgOf(waferMap({ ...base, particles: p, mirror: 'y' }));
    const [mx, my] = centreOf(mir);
    const mm = byClass(mir, 'vc-particle')[0]!;
    // Same distance from the centre, other side (0.1 px rounding).
    expect(Number(mm.attrs.cx) - mx).toBeCloseTo(-(Number(m.attrs.cx) - cx), 0);
    expect(Number(mm.attrs.cy) - my).toBeCloseTo(Number(m.attrs.cy) - cy, 0);
    expect(textOf(byClass(mir, 'vc-mirror-note')[0]!)).toContain(
      'Seen from the bond interface: mirrored (x → −x)',
    );
  });

  it('draws the notch where the notch angle says, mirrored with the wafer', () => {
    const tipY = (mirror: 'none' | 'x') => {
      const svg = svgOf(waferMap({ ...base, particles: [], notchAngleDeg: 270, mirror }));
      const d = byClass(svg, 'vc-wafer-outline')[0]!.attrs.d!;
      const tip = /L([\d.]+),([\d.]+) Z$/.exec(d)!;
      return Number(tip[2]) - centreOf(svg)[1];
    };
    expect(tipY('none')).toBeGreaterThan(100); // notch at the bottom (screen y grows downward)
    expect(tipY('x')).toBeLessThan(-100); // flipped about x: the notch is at the top
  });

  it('shades the edge-exclusion ring only when there is one, and draws the die grid', () => {
    const dies = layoutDies({ diameterMm: 300, edgeExclusionMm: 3, dieWidthMm: 20, dieHeightMm: 20 });
    const svg = svgOf(waferMap({ ...base, particles: [], dies }));
    expect(byClass(svg, 'vc-edge-exclusion')[0]!.attrs['data-edge-exclusion-mm']).toBe('3');
    // the grid is one pattern of a die cell over the rows of dies, however many dies there are
    expect(byClass(svg, 'vc-die-grid')[0]!.attrs['data-dies']).toBe(String(dies.length));
    expect(byClass(svg, 'vc-die-cells')).toHaveLength(1);
    expect(byName(svg, 'pattern').length).toBeGreaterThan(0);
    const none = svgOf(waferMap({ ...base, edgeExclusionMm: 0, particles: [] }));
    expect(byClass(none, 'vc-edge-exclusion')).toHaveLength(0);
    expect(byClass(none, 'vc-die-grid')).toHaveLength(0);
  });

  it('escapes a title and defect classes taken from files', () => {
    const title = 'W<script>alert("x")</script> & \'co\'';
    const out = String(
      waferMap({ ...base, title, particles: [{ xMm: 1, yMm: 1, diameterM: 1e-7, kind: '<b>res</b>' }] }),
    );
    expect(out).not.toContain('<script>');
    expect(out).not.toContain('<b>');
    const svg = svgOf(out);
    expect(textOf(byName(svg, 'title')[0]!)).toBe(title);
    expect(textOf(byClass(svg, 'vc-particle')[0]!)).toContain('<b>res</b>');
  });
});

describe('layoutDies', () => {
  it('keeps only dies wholly inside the usable disc', () => {
    const dies = layoutDies({ diameterMm: 300, edgeExclusionMm: 3, dieWidthMm: 10, dieHeightMm: 10 });
    for (const d of dies)
      for (const [x, y] of [
        [d.xMm, d.yMm],
        [d.xMm + d.wMm, d.yMm],
        [d.xMm, d.yMm + d.hMm],
        [d.xMm + d.wMm, d.yMm + d.hMm],
      ])
        expect(Math.hypot(x!, y!)).toBeLessThanOrEqual(147 + 1e-9);
    // No two dies overlap: distinct lower-left corners on the pitch lattice.
    expect(new Set(dies.map((d) => `${d.xMm},${d.yMm}`)).size).toBe(dies.length);
  });

  it('matches the usual gross-die-per-wafer estimate within 2 % for small dies', () => {
    // Gross die per wafer, DPW ≈ π d²/(4S) − π d/√(2S) with d the usable diameter and S the die
    // area (the common approximation compared in de Vries, IEEE Trans. Semicond. Manuf. 18 (2005)
    // 136 [from memory]). The estimate ignores where the grid sits, which matters more as dies
    // grow (≈ 8 % for 20 mm dies), so only dies ≤ 10 mm are compared, at 2 %.
    for (const side of [5, 10]) {
      const n = layoutDies({
        diameterMm: 300,
        edgeExclusionMm: 3,
        dieWidthMm: side,
        dieHeightMm: side,
      }).length;
      const d = 294;
      const S = side * side;
      const est = (Math.PI * d * d) / (4 * S) - (Math.PI * d) / Math.sqrt(2 * S);
      expect(Math.abs(n - est) / est).toBeLessThan(0.02);
    }
  });

  it('returns no dies for a non-positive size', () => {
    expect(layoutDies({ diameterMm: 300, edgeExclusionMm: 3, dieWidthMm: 0, dieHeightMm: 10 })).toEqual([]);
  });
});
