import { describe, expect, it } from 'vitest';
import { buildExposureIndex, intervalDose } from '../../../src/engine/exposure.ts';
import { type CounterSeriesInput, type LocationInput, SAMPLE_FLAG } from '../../../src/engine/types.ts';

const MIN = 60_000;

/** n one-minute samples from t = 0 with two channels (0.1 and 0.5 µm), concentrations from f(i). */
function series(
  n: number,
  f: (i: number) => [number, number],
  flags: (i: number) => number = () => 0,
): CounterSeriesInput {
  const conc = new Float64Array(2 * n);
  for (let i = 0; i < n; i++) {
    const [a, b] = f(i);
    conc[2 * i] = a;
    conc[2 * i + 1] = b;
  }
  return {
    locationId: 'BAY',
    channelSizesM: Float64Array.of(0.1e-6, 0.5e-6),
    startMs: Float64Array.from({ length: n }, (_, i) => i * MIN),
    endMs: Float64Array.from({ length: n }, (_, i) => (i + 1) * MIN),
    cumulativePerM3: conc,
    flags: Uint8Array.from({ length: n }, (_, i) => flags(i)),
  };
}

const loc = (action: number | null): LocationInput => ({
  locationId: 'BAY',
  name: 'Bay',
  environment: 'open room',
  isoClass: 5,
  airVelocityMps: null,
  levels: { atDiameterM: 0.5e-6, alertPerM3: null, actionPerM3: action },
});

describe('intervalDose (prefix sums of C·Δt)', () => {
  it('equals the direct sum over whole samples (hand computation: Σ C_i · 60 s)', () => {
    const s = series(100, (i) => [100 + i, 10 + i]);
    const ix = buildExposureIndex(s, loc(null));
    const d = intervalDose(ix, 10 * MIN, 40 * MIN, null);
    let a = 0;
    let b = 0;
    for (let i = 10; i < 40; i++) {
      a += (100 + i) * 60;
      b += (10 + i) * 60;
    }
    expect(d.dosePerChannel[0]).toBeCloseTo(a, 6);
    expect(d.dosePerChannel[1]).toBeCloseTo(b, 6);
    expect(d.gapS).toBe(0);
    expect(d.fill).toBe('none');
    expect(d.durationS).toBe(1800);
  });

  it('takes the overlapped fraction of a sample at each end of the interval', () => {
    const s = series(10, (i) => [i + 1, 0]);
    const ix = buildExposureIndex(s, loc(null));
    // from 2.5 min to 4.25 min: half of sample 2 (C = 3), a quarter of sample 4 (C = 5), all of sample 3 (C = 4)
    const d = intervalDose(ix, 2.5 * MIN, 4.25 * MIN, null);
    expect(d.dosePerChannel[0]).toBeCloseTo(3 * 30 + 4 * 60 + 5 * 15, 9);
  });

  it('fills a gap with the median of the usable samples and reports its length', () => {
    // samples 20–29 missing (no rows): the concentration is 7 everywhere else, median 7
    const full = series(60, () => [7, 1]);
    const keep = Array.from({ length: 60 }, (_, i) => i).filter((i) => i < 20 || i >= 30);
    const s: CounterSeriesInput = {
      ...full,
      startMs: Float64Array.from(keep, (i) => full.startMs[i]!),
      endMs: Float64Array.from(keep, (i) => full.endMs[i]!),
      cumulativePerM3: Float64Array.from(
        keep.flatMap((i) => [full.cumulativePerM3[2 * i]!, full.cumulativePerM3[2 * i + 1]!]),
      ),
      flags: new Uint8Array(keep.length),
    };
    const ix = buildExposureIndex(s, loc(null));
    const d = intervalDose(ix, 10 * MIN, 40 * MIN, null);
    expect(d.gapS).toBeCloseTo(600, 9);
    expect(d.fill).toBe('median');
    expect(d.dosePerChannel[0]).toBeCloseTo(7 * 1800, 6);
  });

  it('treats fault and sentinel samples as gaps, and counts saturated samples as lower bounds', () => {
    const s = series(
      30,
      (i) => (i === 5 ? [9999, 9999] : [10, 2]),
      (i) =>
        i === 5 ? SAMPLE_FLAG.sentinel : i === 6 ? SAMPLE_FLAG.fault : i === 7 ? SAMPLE_FLAG.lowerBound : 0,
    );
    const ix = buildExposureIndex(s, loc(null));
    const d = intervalDose(ix, 0, 30 * MIN, null);
    expect(d.gapS).toBeCloseTo(120, 9);
    expect(d.lowerBoundSamples).toBe(1);
    // the 9999 sentinel is not used: every minute counts 10 (gap filled by the median 10)
    expect(d.dosePerChannel[0]).toBeCloseTo(10 * 1800, 6);
  });

  it('falls back to the class limit when the location has no usable sample at all', () => {
    const s = series(
      10,
      () => [5, 1],
      () => SAMPLE_FLAG.fault,
    );
    const ix = buildExposureIndex(s, loc(null));
    const limits = Float64Array.of(1e5, 3520);
    const d = intervalDose(ix, 0, 10 * MIN, limits);
    expect(d.fill).toBe('class-limit');
    expect(d.dosePerChannel[0]).toBeCloseTo(1e5 * 600, 3);
    expect(intervalDose(ix, 0, 10 * MIN, null).fill).toBe('zero');
  });

  it('reports the peak at the action-level size and the first sample at or above the action level', () => {
    const s = series(60, (i) => [1000, i === 33 ? 500 : 20]);
    const ix = buildExposureIndex(s, loc(400));
    const d = intervalDose(ix, 30 * MIN, 40 * MIN, null);
    expect(d.peakLevelPerM3).toBe(500);
    expect(d.firstActionMs).toBe(33 * MIN);
    // the same excursion outside the exposure interval is not reported
    const e = intervalDose(ix, 40 * MIN, 50 * MIN, null);
    expect(e.firstActionMs).toBeNull();
    expect(e.peakLevelPerM3).toBe(20);
  });

  it('averages overlapping samples (two counters at one location) over the covered time', () => {
    const a = series(10, () => [10, 1]);
    const b = series(10, () => [30, 3]);
    const order = Array.from({ length: 20 }, (_, i) => i).sort((p, q) => (p % 10) - (q % 10) || p - q);
    const pick = (src: number) => (src < 10 ? a : b);
    const s: CounterSeriesInput = {
      ...a,
      startMs: Float64Array.from(order, (i) => pick(i).startMs[i % 10]!),
      endMs: Float64Array.from(order, (i) => pick(i).endMs[i % 10]!),
      cumulativePerM3: Float64Array.from(
        order.flatMap((i) => [
          pick(i).cumulativePerM3[2 * (i % 10)]!,
          pick(i).cumulativePerM3[2 * (i % 10) + 1]!,
        ]),
      ),
      flags: new Uint8Array(20),
    };
    const ix = buildExposureIndex(s, loc(null));
    const d = intervalDose(ix, 0, 10 * MIN, null);
    // hand computation: mean concentration 20 over 600 s
    expect(d.dosePerChannel[0]).toBeCloseTo(20 * 600, 6);
    expect(d.gapS).toBe(0);
  });
});
