import { describe, expect, it } from 'vitest';
import { type ControlChartPoint, controlChart } from '../../../views/charts/control-chart.tsx';
import { byClass, byName, danglingRefs, svgOf, textOf } from './svg-query.ts';

const T0 = Date.UTC(2026, 9, 12, 0, 0);
const HOUR = 3_600_000;

const RULES = [
  { code: 'action-point', mark: 'A', label: 'one point above action' },
  { code: 'alert-run', mark: 'R', label: '2 of 3 above alert' },
  { code: 'limit', mark: 'L', label: 'beyond a control limit' },
];

/**
 * A u chart with unequal sample volumes (NIST/SEMATECH e-Handbook §6.3.3.2: limits ū ± 3√(ū/nᵢ)):
 * ū = 2 particles per litre, volumes 10, 40 and 90 L, so the upper limits are 2 + 3√(2/10) = 3.342,
 * 2 + 3√(2/40) = 2.671 and 2 + 3√(2/90) = 2.447 (hand computation).
 */
const UBAR = 2;
const VOLUMES = [10, 40, 90, 10, 40, 90];
const VALUES = [1.5, 2.2, 1.9, 5.1, 2.0, 2.3];
function uPoints(flags: string[][] = []): ControlChartPoint[] {
  return VOLUMES.map((n, i) => ({
    tMs: T0 + i * HOUR,
    value: VALUES[i]!,
    ucl: UBAR + 3 * Math.sqrt(UBAR / n),
    lcl: Math.max(0, UBAR - 3 * Math.sqrt(UBAR / n)),
    flags: flags[i] ?? [],
  }));
}

/** The horizontal segments of a step path "M x,y L x,y …" as [xLeft, xRight, y]. */
function steps(d: string): [number, number, number][] {
  const nums = [...d.matchAll(/[ML](-?[\d.]+),(-?[\d.]+)/g)].map((m) => [Number(m[1]), Number(m[2])]);
  const out: [number, number, number][] = [];
  for (let i = 0; i + 1 < nums.length; i += 2) out.push([nums[i]![0]!, nums[i + 1]![0]!, nums[i]![1]!]);
  return out;
}

describe('controlChart', () => {
  it('draws one point per subgroup and a step limit that follows each subgroup’s volume', () => {
    const svg = svgOf(
      controlChart({
        title: 'BOR-B2 ≥ 0.5 µm',
        kind: 'u',
        yLabel: 'particles per L',
        centre: UBAR,
        points: uPoints(),
        rules: RULES,
      }),
    );
    expect(danglingRefs(svg)).toEqual([]);
    expect(byClass(svg, 'vc-point')).toHaveLength(6);
    const ucl = steps(byClass(svg, 'vc-ucl')[0]!.attrs.d!);
    expect(ucl).toHaveLength(6);
    const yc = Number(byClass(svg, 'vc-centre')[0]!.attrs.y1);
    // Linear axis: a limit's height above the centre line is proportional to 3√(ū/nᵢ), so the
    // ratios of heights are √(n_j/n_i) (hand computation: √4 = 2 for 10 L vs 40 L, √9 = 3 for 10 L
    // vs 90 L). Tolerance 2 %: coordinates are rounded to 0.1 px on heights of ≈ 20–50 px.
    const h = ucl.map((s) => yc - s[2]);
    expect(h[0]! / h[1]!).toBeCloseTo(2, 1);
    expect(Math.abs(h[0]! / h[1]! - 2) / 2).toBeLessThan(0.02);
    expect(Math.abs(h[0]! / h[2]! - 3) / 3).toBeLessThan(0.02);
    // Each step covers its own point: from halfway before to halfway after.
    const xs = byClass(svg, 'vc-point').map((p) => Number(p.attrs.cx));
    ucl.forEach(([a, b], i) => {
      expect(a).toBeLessThanOrEqual(xs[i]! + 0.05);
      expect(b).toBeGreaterThanOrEqual(xs[i]! - 0.05);
    });
    // Every lower limit is above zero here (2 − 3√(2/10) = 0.658, hand computation): six steps.
    expect(steps(byClass(svg, 'vc-lcl')[0]!.attrs.d!)).toHaveLength(6);
  });

  it('marks a flagged point with its rule’s shape and mark, names the rule in its title and the legend', () => {
    const svg = svgOf(
      controlChart({
        title: 'BOR-B2 ≥ 0.5 µm',
        kind: 'u-prime',
        yLabel: 'particles per L',
        centre: UBAR,
        alert: 3,
        action: 4.5,
        points: uPoints([[], [], [], ['action-point', 'limit'], [], []]),
        rules: RULES,
      }),
    );
    const flags = byClass(svg, 'vc-flag');
    expect(flags).toHaveLength(1);
    // The first rule is drawn as a triangle (a closed path of three corners).
    expect(flags[0]!.name).toBe('path');
    expect(flags[0]!.attrs.d).toMatch(/^M[\d.]+,[\d.]+ l[\d.]+,[\d.]+ h-[\d.]+ z$/);
    expect(textOf(byName(flags[0]!, 'title')[0]!)).toContain(
      'one point above action; beyond a control limit',
    );
    expect(byClass(svg, 'vc-point')).toHaveLength(5);
    expect(byClass(svg, 'vc-flag-mark').map(textOf)).toEqual(['A L']);
    const legend = byClass(svg, 'vc-legend-entry').map((e) => textOf(byName(e, 'text')[0]!));
    expect(legend).toEqual(
      expect.arrayContaining([
        'A: one point above action',
        'R: 2 of 3 above alert',
        'L: beyond a control limit',
        'alert level',
        'action level',
      ]),
    );
    expect(byClass(svg, 'vc-flag-swatch')).toHaveLength(3);
    // The levels are labelled at the right end of their lines.
    const labels = byClass(svg, 'vc-level-label').map((t) => t.attrs['data-level']);
    expect(labels).toEqual(expect.arrayContaining(['action', 'alert', 'centre']));
    expect(textOf(byName(svg, 'desc')[0]!)).toContain('Laney u′ chart');
  });

  it('keeps the mark of a point whose neighbour’s mark would overlap it off, and keeps every mark inside the plot', () => {
    const pts: ControlChartPoint[] = Array.from({ length: 200 }, (_, i) => ({
      tMs: T0 + i * 60_000,
      value: 10,
      ucl: 8,
      lcl: 0,
      flags: ['limit'],
    }));
    const svg = svgOf(
      controlChart({ title: 'x', kind: 'c', yLabel: 'count', centre: 4, points: pts, rules: RULES }),
    );
    expect(byClass(svg, 'vc-flag')).toHaveLength(200);
    const marks = byClass(svg, 'vc-flag-mark').map((m) => Number(m.attrs.x));
    expect(marks.length).toBeGreaterThan(0);
    expect(marks.length).toBeLessThan(200);
    for (let i = 1; i < marks.length; i++) expect(marks[i]! - marks[i - 1]!).toBeGreaterThan(7);
  });

  it('says there is no subgroup, draws no mark, and escapes its title', () => {
    const out = String(
      controlChart({
        title: '<zone & "x">',
        kind: 'c',
        yLabel: 'count',
        centre: null,
        points: [],
        rules: RULES,
        emptyText: 'no samples in this period',
      }),
    );
    expect(out).not.toContain('<zone');
    const svg = svgOf(out);
    expect(textOf(byClass(svg, 'vc-nodata')[0]!)).toBe('no samples in this period');
    expect(byClass(svg, 'vc-point')).toHaveLength(0);
    expect(byClass(svg, 'vc-series')).toHaveLength(0);
  });

  it('breaks the line at a subgroup without a usable value', () => {
    const pts = uPoints().map((p, i) => (i === 2 ? { ...p, value: null } : p));
    const svg = svgOf(
      controlChart({ title: 'x', kind: 'u', yLabel: 'per L', centre: UBAR, points: pts, rules: RULES }),
    );
    const d = byClass(svg, 'vc-series')[0]!.attrs.d!;
    expect(d.match(/M/g)).toHaveLength(2);
    expect(byClass(svg, 'vc-point')).toHaveLength(5);
  });
});
