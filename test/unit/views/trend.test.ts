import { describe, expect, it } from 'vitest';
import { LINE_BOX_PX, textWidth } from '../../../views/charts/svg.tsx';
import { bucketTrend, segmentTrend, spreadBaselines, trend } from '../../../views/charts/trend.tsx';
import { byClass, svgOf, textOf } from './svg-query.ts';

const T0 = Date.UTC(2025, 2, 3, 0, 0);
const MIN = 60_000;
/** Samples every 15 min, with values v(i); indices in `skip` are missing. */
function series(n: number, v: (i: number) => number | null, skip: number[] = []) {
  return Array.from({ length: n }, (_, i) => i)
    .filter((i) => !skip.includes(i))
    .map((i) => ({ tMs: T0 + i * 15 * MIN, value: v(i) }));
}

describe('segmentTrend', () => {
  it('breaks the line where samples are more than 3 × the median interval apart', () => {
    const s = segmentTrend(series(20, () => 10, [8, 9, 10, 11]));
    expect(s.gapMs).toBe(45 * MIN);
    expect(s.segments.map((x) => x.length)).toEqual([8, 8]);
    expect(s.gaps).toEqual([{ fromMs: T0 + 7 * 15 * MIN, toMs: T0 + 12 * 15 * MIN }]);
  });

  it('does not call a single missed sample (2 × the interval) a gap', () => {
    expect(segmentTrend(series(20, () => 10, [5])).gaps).toEqual([]);
  });

  it('breaks the line at a sample without a usable value, and sorts by time', () => {
    const pts = series(6, (i) => (i === 3 ? null : i)).reverse();
    const s = segmentTrend(pts);
    expect(s.segments.map((x) => x.map((p) => p.value))).toEqual([
      [0, 1, 2],
      [4, 5],
    ]);
  });

  it('honours an explicit gap threshold', () => {
    expect(
      segmentTrend(
        series(4, () => 1),
        10 * MIN,
      ).segments,
    ).toHaveLength(4);
  });
});

describe('trend', () => {
  const pts = series(
    96,
    (i) => (i === 70 ? 300 : i === 20 ? 110 : 30),
    [41, 42, 43, 44, 45, 46, 47, 48, 49, 50],
  );
  const chart = () =>
    svgOf(
      trend({
        title: 'Bay 3 ≥ 0.5 µm',
        channelLabel: '≥ 0.5 µm',
        unit: 'particles/m³',
        points: pts,
        alert: 80,
        action: 150,
        classLimit: { value: 352, label: 'ISO 5 limit' },
        yScale: 'linear',
      }),
    );

  it('draws the alert, action and class-limit lines in order, each named, with distinct dashes', () => {
    const svg = chart();
    const levels = byClass(svg, 'vc-level');
    expect(levels.map((l) => l.attrs['data-level'])).toEqual(['alert', 'action', 'class-limit']);
    const ys = levels.map((l) => Number(l.children[0]!.attrs.y1));
    // Screen y grows downward: a higher level sits higher.
    expect(ys[0]!).toBeGreaterThan(ys[1]!);
    expect(ys[1]!).toBeGreaterThan(ys[2]!);
    expect(levels.map((l) => textOf(l))).toEqual(['alert 80', 'action 150', 'ISO 5 limit 352']);
    const dashes = levels.map((l) => l.children[0]!.attrs['stroke-dasharray'] ?? 'solid');
    expect(new Set(dashes).size).toBe(3);
  });

  it('shows the gap as a gap: two line segments and one shaded "no data" band', () => {
    const svg = chart();
    expect(byClass(svg, 'vc-trend-line')).toHaveLength(2);
    const gaps = byClass(svg, 'vc-gap');
    expect(gaps).toHaveLength(1);
    expect(textOf(gaps[0]!)).toBe('no data');
  });

  it('marks samples above action with a triangle and above alert with a diamond', () => {
    const svg = chart();
    expect(byClass(svg, 'vc-point-action')).toHaveLength(1);
    expect(byClass(svg, 'vc-point-alert')).toHaveLength(1);
    expect(byClass(svg, 'vc-point')).toHaveLength(86);
    expect(textOf(byClass(svg, 'vc-point-action')[0]!)).toContain('(above action)');
  });

  it('labels its time axis in UTC and its y axis with channel and unit', () => {
    const svg = chart();
    const x = svg.children.find((c) => c.attrs['data-axis'] === 'x')!;
    expect(textOf(x)).toContain('sample start (UTC)');
    expect(byClass(x, 'vc-tick').map(textOf)).toContain('06:00');
    const y = svg.children.find((c) => c.attrs['data-axis'] === 'y')!;
    expect(textOf(y)).toContain('≥ 0.5 µm (particles/m³)');
  });

  it('switches to a log axis when the class limit lies far above the data', () => {
    const svg = svgOf(
      trend({
        title: 't',
        channelLabel: '≥ 0.1 µm',
        unit: 'particles/m³',
        points: series(10, () => 20),
        classLimit: { value: 100000, label: 'ISO 5' },
      }),
    );
    const y = svg.children.find((c) => c.attrs['data-axis'] === 'y')!;
    expect(byClass(y, 'vc-tick').map(textOf)).toContain('10⁵');
  });

  it('says so when the window has no samples', () => {
    const svg = svgOf(
      trend({ title: 't', channelLabel: 'c', unit: 'u', points: [], fromMs: T0, toMs: T0 + 3600_000 }),
    );
    expect(textOf(byClass(svg, 'vc-nodata')[0]!)).toBe('no samples in this window');
    expect(byClass(svg, 'vc-trend-line')).toHaveLength(0);
  });

  it('escapes the class-limit label and title', () => {
    const out = String(
      trend({
        title: '<x>',
        channelLabel: '<c>',
        unit: 'u',
        points: series(3, () => 1),
        classLimit: { value: 5, label: '<ISO>' },
      }),
    );
    expect(out).not.toMatch(/<x>|<c>|<ISO>/);
  });
});

describe('bucketTrend and the dense trend', () => {
  it('keeps each slice’s mean, minimum and maximum and the sample count', () => {
    const pts = Array.from({ length: 10 }, (_, i) => ({ tMs: T0 + i * MIN, value: i }));
    const b = bucketTrend(pts, T0, T0 + 10 * MIN, 2);
    expect(b.map((x) => [x.n, x.min, x.max, x.mean])).toEqual([
      [5, 0, 4, 2],
      [5, 5, 9, 7],
    ]);
    expect(b.reduce((a, x) => a + x.n, 0)).toBe(10);
  });

  it('draws many samples as a band and a mean line, keeping a mark for every sample above action', () => {
    const pts = Array.from({ length: 5000 }, (_, i) => ({
      tMs: T0 + i * MIN,
      value: i === 2500 ? 500 : 20 + (i % 10),
    }));
    const svg = svgOf(
      trend({
        title: 't',
        channelLabel: 'c',
        unit: 'u',
        points: pts,
        alert: 100,
        action: 200,
        yScale: 'linear',
      }),
    );
    expect(byClass(svg, 'vc-trend-band')).toHaveLength(1);
    expect(byClass(svg, 'vc-point')).toHaveLength(1);
    expect(byClass(svg, 'vc-point-action')).toHaveLength(1);
    expect(textOf(svg.children.find((c) => c.name === 'desc')!)).toContain('5000 samples drawn as the mean');
  });

  it('gives levels at the same value one label, so they never print on top of each other', () => {
    const svg = svgOf(
      trend({
        title: 't',
        channelLabel: 'c',
        unit: 'u',
        points: series(10, () => 10),
        action: 352,
        classLimit: { value: 352, label: 'ISO 4 limit' },
        yScale: 'linear',
      }),
    );
    // Both lines stay drawn; one label names both (values from the input).
    expect(byClass(svg, 'vc-level')).toHaveLength(2);
    const labels = byClass(svg, 'vc-level-label');
    expect(labels.map(textOf)).toEqual(['action = ISO 4 limit 352']);
    expect(labels[0]!.attrs['data-levels']).toBe('action class-limit');
  });

  it('spreads labels of nearby levels a line box apart and keeps them inside the chart', () => {
    const width = 640;
    const svg = svgOf(
      trend({
        title: 't',
        channelLabel: 'c',
        unit: 'u',
        points: series(10, () => 10),
        alert: 99_000,
        action: 100_000,
        classLimit: { value: 101_000, label: 'ISO 5 limit' },
        yScale: 'linear',
        width,
      }),
    );
    const labels = byClass(svg, 'vc-level-label');
    // Digits grouped by U+202F (fmtNum); document order alert, action, class limit.
    expect(labels.map(textOf)).toEqual([
      'alert 99\u202f000',
      'action 100\u202f000',
      'ISO 5 limit 101\u202f000',
    ]);
    const ys = labels.map((l) => Number(l.attrs.y)).sort((a, b) => a - b);
    // A line box of 11 px DejaVu Sans is (0.93 + 0.24) × 11 = 12.9 px (measured in Chromium);
    // 0.1 px is the rounding of coordinates.
    for (let i = 1; i < ys.length; i++) expect(ys[i]! - ys[i - 1]!).toBeGreaterThanOrEqual(12.9 - 0.1);
    // Right edge of each label from the estimated width (textWidth, DejaVu advance widths).
    for (const l of labels) expect(Number(l.attrs.x) + textWidth(textOf(l))).toBeLessThanOrEqual(width);
  });
});

describe('spreadBaselines', () => {
  const step = LINE_BOX_PX + 1;
  it('keeps labels where they wish when they are a line apart, in the input order', () => {
    expect(spreadBaselines([100, 20, 60], 0, 200)).toEqual([100, 20, 60]);
  });
  it('pushes coinciding labels apart by one line box and a pixel, inside the bounds', () => {
    const y = spreadBaselines([50, 50, 50], 0, 200);
    expect(y[1]! - y[0]!).toBeCloseTo(step, 9);
    expect(y[2]! - y[1]!).toBeCloseTo(step, 9);
    const low = spreadBaselines([195, 195], 0, 200);
    expect(Math.max(...low)).toBeLessThanOrEqual(200);
    expect(Math.abs(low[0]! - low[1]!)).toBeCloseTo(step, 9);
    const high = spreadBaselines([2, 2], 10, 200);
    // 1e-9: floating-point rounding of the subtraction of a line step.
    expect(Math.min(...high)).toBeGreaterThanOrEqual(10 - 1e-9);
  });
});
