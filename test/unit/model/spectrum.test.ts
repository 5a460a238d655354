import { describe, expect, it } from 'vitest';
import { ModelInputError } from '../../../src/model/errors.ts';
import {
  addSpectra,
  binIndexOf,
  cumulativeAbove,
  integrateAbove,
  multiplyBySize,
  powerLawSpectrum,
  requireSpectrum,
  SPECTRUM_BIN_COUNT,
  SPECTRUM_BINS_PER_DECADE,
  SPECTRUM_CENTRES_M,
  SPECTRUM_EDGES_M,
  SPECTRUM_MAX_DIAMETER_M,
  SPECTRUM_MIN_DIAMETER_M,
  scaleSpectrum,
  spectrumTotal,
  zeroSpectrum,
} from '../../../src/model/spectrum.ts';

/** |a − b| ≤ rel·|b|, tolerance stated at each call. */
const within = (a: number, b: number, rel: number) =>
  expect(Math.abs(a - b)).toBeLessThanOrEqual(rel * Math.abs(b));
const um = (x: number) => x * 1e-6;
const ramp = () => Float64Array.from({ length: SPECTRUM_BIN_COUNT }, (_, i) => i + 1); // bins 1, 2, …, 48

describe('the grid (voidcast choice: 48 bins, 12 per decade, 10 nm – 100 µm)', () => {
  it('49 edges from 10 nm to 100 µm, a constant ratio 10^(1/12) between them', () => {
    expect(SPECTRUM_EDGES_M.length).toBe(SPECTRUM_BIN_COUNT + 1);
    expect(SPECTRUM_BIN_COUNT).toBe(4 * SPECTRUM_BINS_PER_DECADE);
    expect(SPECTRUM_EDGES_M[0]).toBe(SPECTRUM_MIN_DIAMETER_M);
    within(SPECTRUM_EDGES_M[48]!, SPECTRUM_MAX_DIAMETER_M, 1e-15);
    for (let i = 1; i <= SPECTRUM_BIN_COUNT; i++)
      within(SPECTRUM_EDGES_M[i]! / SPECTRUM_EDGES_M[i - 1]!, 10 ** (1 / 12), 1e-14);
  });

  it('decade sizes 0.1, 1 and 10 µm are bin edges (12, 24, 36), so counter channels there are read exactly', () => {
    within(SPECTRUM_EDGES_M[12]!, um(0.1), 1e-15);
    within(SPECTRUM_EDGES_M[24]!, um(1), 1e-15);
    within(SPECTRUM_EDGES_M[36]!, um(10), 1e-15);
  });

  it('centres are geometric means of their edges and lie inside their bins', () => {
    for (let i = 0; i < SPECTRUM_BIN_COUNT; i++) {
      within(SPECTRUM_CENTRES_M[i]! ** 2, SPECTRUM_EDGES_M[i]! * SPECTRUM_EDGES_M[i + 1]!, 1e-14);
      expect(binIndexOf(SPECTRUM_CENTRES_M[i]!)).toBe(i);
    }
  });
});

describe('binIndexOf', () => {
  it('an edge belongs to the bin above; −1 below the grid, 48 at and above 100 µm', () => {
    for (let i = 0; i < SPECTRUM_BIN_COUNT; i++) expect(binIndexOf(SPECTRUM_EDGES_M[i]!)).toBe(i);
    expect(binIndexOf(um(0.1))).toBe(12);
    expect(binIndexOf(um(0.2))).toBe(15); // log10(20)·12 = 15.6
    expect(binIndexOf(5e-9)).toBe(-1);
    expect(binIndexOf(SPECTRUM_MAX_DIAMETER_M)).toBe(SPECTRUM_BIN_COUNT);
    expect(binIndexOf(1)).toBe(SPECTRUM_BIN_COUNT);
  });

  it('rejects zero, negative and non-finite sizes', () => {
    for (const d of [0, -1e-7, Number.NaN, Number.POSITIVE_INFINITY])
      expect(() => binIndexOf(d)).toThrow(ModelInputError);
    expect(() => binIndexOf(0)).toThrow('binIndexOf: dM = 0 m is out of range; allowed > 0 m');
  });
});

describe('bin-wise arithmetic', () => {
  it('addSpectra adds, scaleSpectrum scales, zeroSpectrum is the identity of addition', () => {
    const a = ramp();
    const sum = addSpectra(a, a, zeroSpectrum());
    const twice = scaleSpectrum(a, 2);
    for (let i = 0; i < SPECTRUM_BIN_COUNT; i++) {
      expect(sum[i]).toBe(2 * (i + 1));
      expect(twice[i]).toBe(2 * (i + 1));
    }
    expect(spectrumTotal(addSpectra())).toBe(0);
    expect(spectrumTotal(a)).toBe((48 * 49) / 2);
  });

  it('inputs are not mutated (pure functions)', () => {
    const a = ramp();
    addSpectra(a, a);
    scaleSpectrum(a, 3);
    multiplyBySize(a, () => 2);
    expect(Array.from(a)).toEqual(Array.from(ramp()));
  });

  it('multiplyBySize evaluates f at the geometric centres', () => {
    const out = multiplyBySize(zeroSpectrum().fill(1), (d) => d * 1e6);
    for (let i = 0; i < SPECTRUM_BIN_COUNT; i++) expect(out[i]).toBe(SPECTRUM_CENTRES_M[i]! * 1e6);
  });

  it('reject bad spectra, factors and weights with ModelInputError', () => {
    const neg = zeroSpectrum();
    neg[3] = -1;
    const nan = zeroSpectrum();
    nan[7] = Number.NaN;
    expect(() => addSpectra(ramp(), neg)).toThrow('addSpectra: spectra[1][3] = -1 count');
    expect(() => spectrumTotal(nan)).toThrow('spectrumTotal: s[7] = NaN');
    expect(() => spectrumTotal(new Float64Array(47))).toThrow('spectrumTotal: s');
    expect(() => spectrumTotal([1, 2] as unknown as Float64Array)).toThrow(ModelInputError);
    expect(() => scaleSpectrum(ramp(), -1)).toThrow('scaleSpectrum: factor = -1');
    expect(() => scaleSpectrum(ramp(), Number.POSITIVE_INFINITY)).toThrow(ModelInputError);
    expect(() => multiplyBySize(ramp(), () => Number.NaN)).toThrow('multiplyBySize: f(d)');
    expect(() => multiplyBySize(ramp(), () => -1)).toThrow(ModelInputError);
    expect(() => integrateAbove(ramp(), um(1), () => -1)).toThrow('integrateAbove: w(d)');
    expect(() => requireSpectrum('f', 'p', 'x')).toThrow('f: p = "x"');
  });
});

describe('cumulativeAbove and integrateAbove', () => {
  it('at a bin edge: the exact sum of the bins above', () => {
    const a = ramp();
    expect(cumulativeAbove(a, SPECTRUM_EDGES_M[40]!)).toBe(41 + 42 + 43 + 44 + 45 + 46 + 47 + 48);
    expect(cumulativeAbove(a, SPECTRUM_MIN_DIAMETER_M)).toBe(spectrumTotal(a));
    expect(cumulativeAbove(a, 1e-9)).toBe(spectrumTotal(a));
    expect(cumulativeAbove(a, SPECTRUM_MAX_DIAMETER_M)).toBe(0);
  });

  it('inside a bin: the fraction of its log-width above d (within-bin log-uniform, the grid convention)', () => {
    const a = ramp();
    const k = 20;
    const d = Math.sqrt(SPECTRUM_EDGES_M[k]! * SPECTRUM_EDGES_M[k + 1]!); // the centre: half the log-width above
    within(cumulativeAbove(a, d), cumulativeAbove(a, SPECTRUM_EDGES_M[k + 1]!) + 0.5 * (k + 1), 1e-12);
  });

  it('non-increasing in d and continuous across edges (invariant)', () => {
    const a = ramp();
    let prev = Number.POSITIVE_INFINITY;
    for (let d = 5e-9; d < 2e-4; d *= 1.013) {
      const c = cumulativeAbove(a, d);
      expect(c).toBeLessThanOrEqual(prev + 1e-9);
      prev = c;
    }
    const e = SPECTRUM_EDGES_M[30]!;
    within(cumulativeAbove(a, e * (1 - 1e-9)), cumulativeAbove(a, e), 1e-7);
  });

  it('integrateAbove with w ≡ 1 is cumulativeAbove; with a weight it sums s_i·w(centre_i)', () => {
    const a = ramp();
    for (const d of [um(0.05), um(0.2), um(3.3), um(1)])
      within(integrateAbove(a, d), cumulativeAbove(a, d), 1e-12);
    const w = (x: number) => x;
    let expected = 0;
    for (let i = 24; i < SPECTRUM_BIN_COUNT; i++) expected += a[i]! * SPECTRUM_CENTRES_M[i]!;
    within(integrateAbove(a, um(1), w), expected, 1e-12);
  });

  it('reject a bad size', () => {
    expect(() => cumulativeAbove(ramp(), -1)).toThrow('cumulativeAbove: dM = -1 m');
    expect(() => integrateAbove(ramp(), Number.NaN)).toThrow('integrateAbove: dM = NaN m');
  });
});

describe('powerLawSpectrum (N(≥ d) = N0 (d/d0)^−α placed between fromM and toM)', () => {
  it('ISO class 5 distribution read at 1 µm gives the Table 1 value 832 [V, ISO 14644-1:2015 Table 1]', () => {
    const s = powerLawSpectrum({ countAbove: 1e5, atDiameterM: um(0.1), slope: 2.08, fromM: um(0.1) });
    // 1 µm is a bin edge: exact 1e5·10^−2.08 = 831.76, less the part cut above 100 µm (1e5·1000^−2.08 = 0.0058)
    within(cumulativeAbove(s, um(1)), 1e5 * 10 ** -2.08 - 1e5 * 1000 ** -2.08, 1e-12);
    expect(Math.round(cumulativeAbove(s, um(1)))).toBe(832);
    within(cumulativeAbove(s, um(0.1)), 1e5 * (1 - 1000 ** -2.08), 1e-12);
  });

  it('at every bin edge the cumulative equals the formula minus the cut at toM (exact integration per bin)', () => {
    const s = powerLawSpectrum({
      countAbove: 300,
      atDiameterM: um(0.05),
      slope: 3,
      fromM: um(0.02),
      toM: um(20),
    });
    const N = (d: number) => 300 * (d / um(0.05)) ** -3;
    for (const e of SPECTRUM_EDGES_M) {
      if (e < um(0.02) * (1 + 1e-12) || e > um(20)) continue;
      within(cumulativeAbove(s, e), N(e) - N(um(20)), 1e-9);
    }
    // nothing above the edge that follows toM (reading inside the bin at toM itself is log-uniform, so not 0)
    expect(cumulativeAbove(s, SPECTRUM_EDGES_M[binIndexOf(um(20)) + 1]!)).toBe(0);
    within(spectrumTotal(s), N(um(0.02)) - N(um(20)), 1e-12);
  });

  it('nothing below fromM, a partial bin at a fromM inside a bin', () => {
    const s = powerLawSpectrum({ countAbove: 100, atDiameterM: um(0.3), slope: 2, fromM: um(0.3) });
    const k = binIndexOf(um(0.3));
    for (let i = 0; i < k; i++) expect(s[i]).toBe(0);
    const N = (d: number) => 100 * (d / um(0.3)) ** -2;
    within(s[k]!, N(um(0.3)) - N(SPECTRUM_EDGES_M[k + 1]!), 1e-12);
  });

  it('linear in countAbove; slope 0 places nothing (a flat cumulative has no particles between sizes)', () => {
    const a = powerLawSpectrum({ countAbove: 10, atDiameterM: um(1), slope: 2.5, fromM: um(0.1) });
    const b = powerLawSpectrum({ countAbove: 30, atDiameterM: um(1), slope: 2.5, fromM: um(0.1) });
    for (let i = 0; i < SPECTRUM_BIN_COUNT; i++) within(b[i]!, 3 * a[i]!, 1e-14);
    expect(
      spectrumTotal(powerLawSpectrum({ countAbove: 10, atDiameterM: um(1), slope: 0, fromM: um(0.1) })),
    ).toBe(0);
  });

  it('rejects bad parameters with ModelInputError', () => {
    const ok = { countAbove: 10, atDiameterM: um(1), slope: 2, fromM: um(0.1) };
    expect(() => powerLawSpectrum({ ...ok, countAbove: -1 })).toThrow(
      'powerLawSpectrum: countAbove = -1 count',
    );
    expect(() => powerLawSpectrum({ ...ok, atDiameterM: 0 })).toThrow('powerLawSpectrum: atDiameterM');
    expect(() => powerLawSpectrum({ ...ok, slope: 11 })).toThrow('powerLawSpectrum: slope = 11');
    expect(() => powerLawSpectrum({ ...ok, slope: Number.NaN })).toThrow(ModelInputError);
    expect(() => powerLawSpectrum({ ...ok, fromM: 1e-9 })).toThrow('powerLawSpectrum: fromM');
    expect(() => powerLawSpectrum({ ...ok, toM: um(0.05) })).toThrow('powerLawSpectrum: toM');
    expect(() => powerLawSpectrum({ countAbove: 1e300, atDiameterM: 1e-4, slope: 10, fromM: 1e-8 })).toThrow(
      ModelInputError,
    );
  });
});
