import { describe, expect, it } from 'vitest';
import { ModelInputError } from '../../../src/model/errors.ts';
import {
  cumulativeAbove,
  powerLawSpectrum,
  SPECTRUM_BIN_COUNT,
  SPECTRUM_EDGES_M,
  SPECTRUM_MAX_DIAMETER_M,
  spectrumTotal,
} from '../../../src/model/spectrum.ts';
import {
  type ChannelReading,
  ISO_NOMINAL_SLOPE,
  spectrumFromChannels,
  twoChannelSlope,
} from '../../../src/model/spectrum-channels.ts';

/** |a − b| ≤ rel·|b|, tolerance stated at each call. */
const within = (a: number, b: number, rel: number) =>
  expect(Math.abs(a - b)).toBeLessThanOrEqual(rel * Math.abs(b));
const um = (x: number) => x * 1e-6;
const COUNTER = [0.1, 0.2, 0.3, 0.5, 1, 5].map(um); // the usual counter channels (practice)
const noNaN = (s: Float64Array) => {
  for (const v of s) {
    expect(Number.isFinite(v)).toBe(true);
    expect(v).toBeGreaterThanOrEqual(0);
  }
};

describe('twoChannelSlope (α = ln(N1/N2) / ln(d2/d1))', () => {
  it('ISO class 3: 1000 at ≥ 0.1 µm and 237 at ≥ 0.2 µm give 2.077 [D from the formula; values ISO 14644-1:2015 Table 1]', () => {
    within(twoChannelSlope(1000, um(0.1), 237, um(0.2)), 2.077, 0.0005 / 2.077);
    within(twoChannelSlope(1000, um(0.1), 237, um(0.2)), Math.log(1000 / 237) / Math.log(2), 1e-15);
  });

  it('recovers the exponent of an exact power law, whatever the pair (invariant)', () => {
    const n = (d: number) => 5e4 * (d / um(0.1)) ** -2.08;
    within(twoChannelSlope(n(um(0.3)), um(0.3), n(um(5)), um(5)), 2.08, 1e-12);
    expect(twoChannelSlope(10, um(1), 10, um(2))).toBe(0); // flat: no particles between
  });

  it('rejects a zero upper channel, a rising reading, equal sizes and non-finite input', () => {
    expect(() => twoChannelSlope(10, um(0.1), 0, um(0.2))).toThrow(
      'twoChannelSlope: n2 = 0 is out of range; allowed > 0 and ≤ 10',
    );
    expect(() => twoChannelSlope(10, um(0.1), 11, um(0.2))).toThrow('twoChannelSlope: n2 = 11');
    expect(() => twoChannelSlope(10, um(0.2), 5, um(0.2))).toThrow('twoChannelSlope: d2M');
    expect(() => twoChannelSlope(0, um(0.1), 0, um(0.2))).toThrow('twoChannelSlope: n1 = 0');
    expect(() => twoChannelSlope(10, -1, 5, um(0.2))).toThrow(ModelInputError);
    expect(() => twoChannelSlope(Number.NaN, um(0.1), 5, um(0.2))).toThrow(ModelInputError);
  });
});

describe('spectrumFromChannels: power-law interpolation between channels', () => {
  it('ISO class 3 channels: pair slopes from the formula, counts conserved between channels [D]', () => {
    const values = [1000, 237, 102, 35]; // ISO 14644-1:2015 Table 1, class 3 [V]
    const ch = COUNTER.slice(0, 4);
    const r = spectrumFromChannels({ channelsM: ch, values, mode: 'cumulative' });
    r.fittedSlopes.forEach((s, i) => {
      within(s!, twoChannelSlope(values[i]!, ch[i]!, values[i + 1]!, ch[i + 1]!), 1e-15);
    });
    within(r.fittedSlopes[0]!, 2.077, 0.0005 / 2.077);
    // all of N(≥ 0.1 µm) is in the spectrum, and nothing below 0.1 µm (a bin edge)
    within(spectrumTotal(r.spectrum), 1000, 1e-12);
    within(cumulativeAbove(r.spectrum, um(0.1)), 1000, 1e-12);
    expect(r.flags.some((f) => f.startsWith('below-empty:'))).toBe(true);
    expect(r.flags.some((f) => f.startsWith('above-extrapolated:') && f.includes('last channel pair'))).toBe(
      true,
    );
    expect(r.aboveSlope).toBe(r.fittedSlopes[2]);
  });

  it('a bin inside one segment holds exactly N_i[(e_k/d_i)^−α − (e_{k+1}/d_i)^−α] (formula check)', () => {
    const r = spectrumFromChannels({ channelsM: [um(0.1), um(1)], values: [1000, 10], mode: 'cumulative' });
    const alpha = 2; // ln(100)/ln(10)
    within(r.fittedSlopes[0]!, alpha, 1e-15);
    const k = 15; // a bin between 0.1 and 1 µm
    const [a, b] = [SPECTRUM_EDGES_M[k]!, SPECTRUM_EDGES_M[k + 1]!];
    within(r.spectrum[k]!, 1000 * ((a / um(0.1)) ** -alpha - (b / um(0.1)) ** -alpha), 1e-12);
  });

  it('differential channels are summed from the top into the same spectrum', () => {
    const cumulative = [1000, 237, 102, 35, 8, 0.3];
    const differential = cumulative.map((v, i) => v - (cumulative[i + 1] ?? 0));
    const c = spectrumFromChannels({ channelsM: COUNTER, values: cumulative, mode: 'cumulative' });
    const d = spectrumFromChannels({ channelsM: COUNTER, values: differential, mode: 'differential' });
    d.cumulative.forEach((v, i) => {
      within(v, cumulative[i]!, 1e-12);
    });
    for (let k = 0; k < SPECTRUM_BIN_COUNT; k++) within(d.spectrum[k]!, c.spectrum[k]!, 1e-12);
  });

  it('one channel: the open top uses ISO’s 2.08 and says so', () => {
    const r = spectrumFromChannels({ channelsM: [um(1)], values: [832], mode: 'cumulative' });
    expect(r.aboveSlope).toBe(ISO_NOMINAL_SLOPE);
    expect(r.fittedSlopes).toEqual([]);
    expect(r.flags.find((f) => f.startsWith('above-extrapolated:'))).toContain('one channel');
    within(spectrumTotal(r.spectrum), 832, 1e-12);
    // the top is a power law of slope 2.08 truncated at 100 µm (1 and 10 µm are bin edges, read exactly):
    // N(≥ 10 µm) = 832 (10^−2.08 − 100^−2.08) / (1 − 100^−2.08)  [D]
    const t = (x: number) => x ** -2.08;
    within(cumulativeAbove(r.spectrum, um(10)), (832 * (t(10) - t(100))) / (1 - t(100)), 1e-9);
  });

  it('an explicit aboveSlope and ceilingM are used, and nothing lies above the ceiling', () => {
    const r = spectrumFromChannels({
      channelsM: [um(0.1), um(1)],
      values: [1000, 10],
      mode: 'cumulative',
      aboveSlope: 3,
      ceilingM: um(10),
    });
    expect(r.aboveSlope).toBe(3);
    expect(cumulativeAbove(r.spectrum, um(10))).toBe(0);
    within(cumulativeAbove(r.spectrum, um(1)), 10, 1e-12);
    expect(r.flags.find((f) => f.startsWith('above-extrapolated:'))).toContain('slope 3 (given)');
  });

  it('below the smallest channel only with belowSlope and floorM, flagged as not measured', () => {
    const r = spectrumFromChannels({
      channelsM: [um(0.1), um(0.2)],
      values: [1000, 237],
      mode: 'cumulative',
      belowSlope: 2.08,
      floorM: um(0.01),
    });
    // N(≥ 10 nm) = 1000 · (0.1)^−2.08 = 120 226 [D]; 10 nm and 0.1 µm are bin edges, so exact
    within(spectrumTotal(r.spectrum), 1000 * 0.1 ** -2.08, 1e-12);
    expect(r.belowSlope).toBe(2.08);
    expect(r.flags.some((f) => f.startsWith('below-extrapolated:') && f.includes('not measured'))).toBe(true);
    expect(r.flags.some((f) => f.startsWith('below-empty:'))).toBe(false);
  });
});

describe('spectrumFromChannels: zero counts', () => {
  it('a zero upper channel: the particles below it are spread with the slope of the pair below, truncated, flagged', () => {
    const r = spectrumFromChannels({
      channelsM: COUNTER,
      values: [500, 120, 50, 12, 0, 0],
      mode: 'cumulative',
    });
    noNaN(r.spectrum);
    expect(r.fittedSlopes.slice(3)).toEqual([null, null]);
    within(spectrumTotal(r.spectrum), 500, 1e-12);
    expect(cumulativeAbove(r.spectrum, um(1))).toBe(0);
    // the 12 between 0.5 and 1 µm: a power law of the 0.3–0.5 µm slope, truncated at 1 µm
    const s = twoChannelSlope(50, um(0.3), 12, um(0.5));
    const flag = r.flags.find((f) => f.startsWith('zero-channel:'))!;
    expect(flag).toContain(`slope ${Number(s.toFixed(3))}`);
    expect(flag).toContain('0.3 µm–0.5 µm');
    expect(r.aboveSlope).toBeNull(); // nothing ≥ 5 µm, nothing placed above
    // the bin from the 0.5 µm channel's edge onwards: truncated power-law fraction of 12 [D]
    const k = 24; // [1 µm, 1.21 µm) is empty; bin 23 = [0.825, 1 µm) holds the top of the segment
    expect(r.spectrum[k]).toBe(0);
    const [a, b] = [SPECTRUM_EDGES_M[23]!, um(1)];
    const r0 = (x: number) => (x / um(0.5)) ** -s;
    within(r.spectrum[23]!, (12 * (r0(a) - r0(b))) / (1 - r0(um(1))), 1e-9);
  });

  it('a zero channel with no pair below falls back to 2.08', () => {
    const r = spectrumFromChannels({ channelsM: [um(0.1), um(0.2)], values: [7, 0], mode: 'cumulative' });
    expect(r.flags.find((f) => f.startsWith('zero-channel:'))).toContain('2.08 (ISO 14644-1 nominal)');
    within(spectrumTotal(r.spectrum), 7, 1e-12);
    noNaN(r.spectrum);
  });

  it('all-zero readings give an all-zero spectrum (zeros are data in ISO 1–4 air, practice)', () => {
    for (const mode of ['cumulative', 'differential'] as const) {
      const r = spectrumFromChannels({ channelsM: COUNTER, values: [0, 0, 0, 0, 0, 0], mode });
      expect(spectrumTotal(r.spectrum)).toBe(0);
      noNaN(r.spectrum);
      expect(r.flags.some((f) => f.startsWith('zero-channel:'))).toBe(false);
    }
  });

  it('equal neighbouring channels (α = 0) put nothing between them; the top falls back to 2.08 when the last pair is flat', () => {
    const r = spectrumFromChannels({
      channelsM: [um(0.3), um(0.5), um(1)],
      values: [40, 40, 40],
      mode: 'cumulative',
    });
    expect(r.fittedSlopes).toEqual([0, 0]);
    expect(cumulativeAbove(r.spectrum, um(1))).toBeCloseTo(40, 9);
    expect(r.aboveSlope).toBe(ISO_NOMINAL_SLOPE);
  });

  it('differential zeros in the middle are fine (the cumulative stays positive)', () => {
    const r = spectrumFromChannels({
      channelsM: COUNTER,
      values: [100, 0, 0, 20, 0, 1],
      mode: 'differential',
    });
    noNaN(r.spectrum);
    within(spectrumTotal(r.spectrum), 121, 1e-12);
    expect(r.fittedSlopes[1]).toBe(0);
  });
});

describe('spectrumFromChannels: round trip and invariants', () => {
  it('edge-aligned channels (0.1, 1, 10 µm): a power law read back with cumulativeAbove and rebuilt matches bin by bin within 1 %', () => {
    // Source spectrum: ISO-type slope 2.08 (ISO 14644-1:2015). Channels on bin edges are read
    // exactly; the 1 % tolerance covers only the cut of powerLawSpectrum at 100 µm, which bends
    // the last pair's fitted slope (2.0836 instead of 2.08; computed worst bin 0.62 %).
    const orig = powerLawSpectrum({ countAbove: 1000, atDiameterM: um(0.1), slope: 2.08, fromM: um(0.01) });
    const ch = [um(0.1), um(1), um(10)];
    const values = ch.map((d) => cumulativeAbove(orig, d));
    const r = spectrumFromChannels({
      channelsM: ch,
      values,
      mode: 'cumulative',
      belowSlope: 2.08,
      floorM: um(0.01),
    });
    for (let k = 0; k < SPECTRUM_BIN_COUNT; k++) within(r.spectrum[k]!, orig[k]!, 0.01);
    ch.forEach((d, i) => {
      within(cumulativeAbove(r.spectrum, d), values[i]!, 1e-12);
    });
  });

  it('counter channels 0.1–5 µm: the rebuilt spectrum matches within 5 % per bin and 2.5 % read at the channels', () => {
    // Tolerance: 0.2, 0.3, 0.5 and 5 µm fall inside bins, where cumulativeAbove reads by the grid's
    // within-bin log-uniform assumption (up to 2 % low/high for slope 2.08 against the exact power
    // law); the rebuilt pair slopes inherit that (2.05–2.11). Computed worst: 4.4 % per bin, 1.8 % at a channel.
    const orig = powerLawSpectrum({ countAbove: 1000, atDiameterM: um(0.1), slope: 2.08, fromM: um(0.01) });
    const values = COUNTER.map((d) => cumulativeAbove(orig, d));
    const r = spectrumFromChannels({
      channelsM: COUNTER,
      values,
      mode: 'cumulative',
      belowSlope: 2.08,
      floorM: um(0.01),
    });
    for (let k = 0; k < SPECTRUM_BIN_COUNT; k++) within(r.spectrum[k]!, orig[k]!, 0.05);
    COUNTER.forEach((d, i) => {
      within(cumulativeAbove(r.spectrum, d), values[i]!, 0.025);
    });
    r.fittedSlopes.forEach((s) => {
      within(s!, 2.08, 0.02);
    });
  });

  it('conservation: total = N(≥ d_0) without extrapolation below, for any reading (invariant)', () => {
    for (const values of [
      [900, 300, 100, 30, 3, 0.1],
      [10, 10, 2, 2, 0, 0],
      [1, 0, 0, 0, 0, 0],
    ]) {
      within(
        spectrumTotal(spectrumFromChannels({ channelsM: COUNTER, values, mode: 'cumulative' }).spectrum),
        values[0]!,
        1e-12,
      );
    }
  });

  it('linearity: scaling the values scales the spectrum, slopes unchanged (invariant)', () => {
    const values = [900, 300, 100, 30, 3, 0.1];
    const a = spectrumFromChannels({ channelsM: COUNTER, values, mode: 'cumulative' });
    const b = spectrumFromChannels({
      channelsM: COUNTER,
      values: values.map((v) => 7 * v),
      mode: 'cumulative',
    });
    for (let k = 0; k < SPECTRUM_BIN_COUNT; k++) within(b.spectrum[k]!, 7 * a.spectrum[k]!, 1e-12);
    a.fittedSlopes.forEach((s, i) => {
      within(b.fittedSlopes[i]!, s!, 1e-12);
    });
  });

  it('the cumulative of the rebuilt spectrum never rises with size (invariant)', () => {
    const r = spectrumFromChannels({
      channelsM: COUNTER,
      values: [900, 300, 100, 30, 3, 0.1],
      mode: 'cumulative',
    });
    let prev = Number.POSITIVE_INFINITY;
    for (const e of SPECTRUM_EDGES_M) {
      if (e >= SPECTRUM_MAX_DIAMETER_M) break;
      const c = cumulativeAbove(r.spectrum, e);
      expect(c).toBeLessThanOrEqual(prev);
      prev = c;
    }
  });
});

describe('spectrumFromChannels rejects bad input with ModelInputError', () => {
  const ok: ChannelReading = { channelsM: COUNTER, values: [900, 300, 100, 30, 3, 0.1], mode: 'cumulative' };

  it('a cumulative reading that rises with size names the channel', () => {
    expect(() => spectrumFromChannels({ ...ok, values: [900, 300, 310, 30, 3, 0.1] })).toThrow(
      'spectrumFromChannels: values[2] = 310 is out of range; allowed ≤ values[1] = 300 (a cumulative reading cannot rise with size)',
    );
  });

  it('negative, NaN or infinite values; ragged or empty arrays; unknown mode', () => {
    for (const bad of [-1, Number.NaN, Number.POSITIVE_INFINITY]) {
      expect(() => spectrumFromChannels({ ...ok, values: [900, 300, 100, 30, 3, bad] })).toThrow(
        'spectrumFromChannels: values[5]',
      );
    }
    expect(() => spectrumFromChannels({ ...ok, values: [1, 2] })).toThrow('spectrumFromChannels: values');
    expect(() => spectrumFromChannels({ ...ok, channelsM: [], values: [] })).toThrow(
      'spectrumFromChannels: channelsM',
    );
    expect(() => spectrumFromChannels({ ...ok, mode: 'sum' as 'cumulative' })).toThrow(
      'spectrumFromChannels: mode = "sum"',
    );
    expect(() => spectrumFromChannels(null as unknown as ChannelReading)).toThrow(ModelInputError);
  });

  it('channel sizes: strictly increasing, on the grid, below the ceiling', () => {
    expect(() =>
      spectrumFromChannels({ ...ok, channelsM: [um(0.1), um(0.3), um(0.2), um(0.5), um(1), um(5)] }),
    ).toThrow('spectrumFromChannels: channelsM[2]');
    expect(() => spectrumFromChannels({ ...ok, channelsM: [um(0.005), ...COUNTER.slice(1)] })).toThrow(
      'spectrumFromChannels: channelsM[0] = 5e-9 m',
    );
    expect(() => spectrumFromChannels({ ...ok, ceilingM: um(5) })).toThrow(
      'spectrumFromChannels: channelsM[5]',
    );
    expect(() => spectrumFromChannels({ ...ok, ceilingM: 1e-3 })).toThrow('spectrumFromChannels: ceilingM');
    expect(() => spectrumFromChannels({ ...ok, channelsM: [um(0.1), Number.NaN, 1, 2, 3, 4] })).toThrow(
      ModelInputError,
    );
  });

  it('belowSlope and floorM come together; slopes 0–10; floor below the first channel', () => {
    expect(() => spectrumFromChannels({ ...ok, belowSlope: 2 })).toThrow(
      'spectrumFromChannels: floorM = undefined m is out of range; allowed given together with belowSlope (both or neither)',
    );
    expect(() => spectrumFromChannels({ ...ok, floorM: um(0.05) })).toThrow(
      'spectrumFromChannels: belowSlope',
    );
    expect(() => spectrumFromChannels({ ...ok, belowSlope: -1, floorM: um(0.05) })).toThrow(
      'spectrumFromChannels: belowSlope = -1',
    );
    expect(() => spectrumFromChannels({ ...ok, belowSlope: 2, floorM: um(0.1) })).toThrow(
      'spectrumFromChannels: floorM',
    );
    expect(() => spectrumFromChannels({ ...ok, aboveSlope: 11 })).toThrow(
      'spectrumFromChannels: aboveSlope = 11',
    );
    expect(() => spectrumFromChannels({ ...ok, aboveSlope: Number.NaN })).toThrow(ModelInputError);
  });
});
