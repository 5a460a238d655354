import { describe, expect, it } from 'vitest';
import { depositionVelocity } from '../../../src/model/aerosol.ts';
import { depositDuringExposure, exposureDose } from '../../../src/model/deposition.ts';
import { ModelInputError } from '../../../src/model/errors.ts';
import {
  addSpectra,
  cumulativeAbove,
  powerLawSpectrum,
  SPECTRUM_BIN_COUNT,
  SPECTRUM_CENTRES_M,
  scaleSpectrum,
  spectrumTotal,
  zeroSpectrum,
} from '../../../src/model/spectrum.ts';

/** |a − b| ≤ rel·|b|, tolerance stated at each call. */
const within = (a: number, b: number, rel: number) =>
  expect(Math.abs(a - b)).toBeLessThanOrEqual(rel * Math.abs(b));
const um = (x: number) => x * 1e-6;
const WAFER_300_M2 = Math.PI * 0.15 ** 2; // 706.86 cm² [D, π r²]
/** ISO 2-type air: 100 particles ≥ 0.1 µm per m³, ISO slope 2.08 (ISO 14644-1:2015 class formula). */
const iso2Air = powerLawSpectrum({ countAbove: 100, atDiameterM: um(0.1), slope: 2.08, fromM: um(0.1) });

describe('exposureDose (Σ C·Δt per bin)', () => {
  it('one sample held 3 h is the concentration × 10 800 s', () => {
    const dose = exposureDose([{ perM3: iso2Air, durationS: 3 * 3600 }]);
    for (let k = 0; k < SPECTRUM_BIN_COUNT; k++) within(dose[k]!, iso2Air[k]! * 10800, 1e-15);
  });

  it('sums piecewise-constant samples; splitting an interval changes nothing (invariant)', () => {
    const a = exposureDose([{ perM3: iso2Air, durationS: 1800 }]);
    const b = exposureDose([
      { perM3: iso2Air, durationS: 600 },
      { perM3: iso2Air, durationS: 1200 },
    ]);
    for (let k = 0; k < SPECTRUM_BIN_COUNT; k++) within(b[k]!, a[k]!, 1e-15);
    const mixed = exposureDose([
      { perM3: iso2Air, durationS: 600 },
      { perM3: scaleSpectrum(iso2Air, 10), durationS: 60 },
    ]);
    within(spectrumTotal(mixed), spectrumTotal(iso2Air) * (600 + 600), 1e-12);
  });

  it('an empty list and zero durations give a zero dose', () => {
    expect(spectrumTotal(exposureDose([]))).toBe(0);
    expect(spectrumTotal(exposureDose([{ perM3: iso2Air, durationS: 0 }]))).toBe(0);
  });

  it('rejects bad samples with ModelInputError', () => {
    expect(() => exposureDose([{ perM3: iso2Air, durationS: -1 }])).toThrow(
      'exposureDose: samples[0].durationS = -1 s is out of range; allowed ≥ 0 s',
    );
    expect(() => exposureDose([{ perM3: iso2Air, durationS: Number.NaN }])).toThrow(ModelInputError);
    expect(() => exposureDose([{ perM3: new Float64Array(3), durationS: 1 }])).toThrow(
      'exposureDose: samples[0].perM3',
    );
    const neg = zeroSpectrum();
    neg[5] = -1;
    expect(() => exposureDose([{ perM3: neg, durationS: 1 }])).toThrow('exposureDose: samples[0].perM3[5]');
    expect(() => exposureDose('x' as unknown as [])).toThrow(ModelInputError);
    expect(() => exposureDose([null as unknown as { perM3: Float64Array; durationS: number }])).toThrow(
      ModelInputError,
    );
    const huge = zeroSpectrum().fill(1e300);
    expect(() => exposureDose([{ perM3: huge, durationS: 1e300 }])).toThrow(ModelInputError);
  });
});

describe('depositDuringExposure (n_k = A · v_d(d_k) · Dose_k / I)', () => {
  it('worked check: 300 mm wafer, 3 h open in 100/m³ ≥ 0.1 µm air at v_d = 2e-5 m/s → ≈ 1.5 particles ≥ 0.1 µm (hand computation, practice)', () => {
    // by hand: 100 m⁻³ × 10 800 s × 2e-5 m/s × 0.070686 m² = 1.5268
    const dose = exposureDose([{ perM3: iso2Air, durationS: 3 * 3600 }]);
    const n = depositDuringExposure({
      airborneDoseM3s: dose,
      areaM2: WAFER_300_M2,
      isolationFactor: 1,
      velocity: () => 2e-5,
    });
    // 1e-6 relative: powerLawSpectrum cuts the tail above 100 µm, (1000)^−2.08 = 5.8e-7 of the total
    within(cumulativeAbove(n, um(0.1)), 100 * 10800 * 2e-5 * WAFER_300_M2, 1e-6);
    within(cumulativeAbove(n, um(0.1)), 1.5268, 1e-4);
  });

  it('an isolation factor of 1000 (mini-environment) divides the deposit by 1000', () => {
    const dose = exposureDose([{ perM3: iso2Air, durationS: 3600 }]);
    const open = depositDuringExposure({
      airborneDoseM3s: dose,
      areaM2: WAFER_300_M2,
      isolationFactor: 1,
      velocity: () => 1e-5,
    });
    const closed = depositDuringExposure({
      airborneDoseM3s: dose,
      areaM2: WAFER_300_M2,
      isolationFactor: 1000,
      velocity: () => 1e-5,
    });
    for (let k = 0; k < SPECTRUM_BIN_COUNT; k++) within(closed[k]!, open[k]! / 1000, 1e-15);
  });

  it('evaluates the velocity at each bin’s geometric centre', () => {
    const dose = zeroSpectrum().fill(1);
    const seen: number[] = [];
    const n = depositDuringExposure({
      airborneDoseM3s: dose,
      areaM2: 1,
      isolationFactor: 1,
      velocity: (d) => {
        seen.push(d);
        return d; // v = d (m/s), so n_k = centre_k
      },
    });
    expect(seen).toEqual(Array.from(SPECTRUM_CENTRES_M));
    for (let k = 0; k < SPECTRUM_BIN_COUNT; k++) expect(n[k]).toBe(SPECTRUM_CENTRES_M[k]);
  });

  it('linearity: deposit(dose₁ + dose₂) = deposit(dose₁) + deposit(dose₂); proportional to area (invariant)', () => {
    const v = (d: number) =>
      depositionVelocity(d, { orientation: 'faceUp', downflowMps: 0.3, waferDiameterM: 0.3 });
    const d1 = exposureDose([{ perM3: iso2Air, durationS: 7200 }]);
    const d2 = exposureDose([
      {
        perM3: powerLawSpectrum({ countAbove: 50, atDiameterM: um(0.05), slope: 3, fromM: um(0.02) }),
        durationS: 900,
      },
    ]);
    const dep = (dose: Float64Array, areaM2 = WAFER_300_M2) =>
      depositDuringExposure({ airborneDoseM3s: dose, areaM2, isolationFactor: 1, velocity: v });
    const sum = addSpectra(dep(d1), dep(d2));
    const both = dep(addSpectra(d1, d2));
    for (let k = 0; k < SPECTRUM_BIN_COUNT; k++) within(both[k]!, sum[k]!, 1e-14);
    const half = dep(d1, WAFER_300_M2 / 2);
    for (let k = 0; k < SPECTRUM_BIN_COUNT; k++) within(half[k]!, dep(d1)[k]! / 2, 1e-15);
  });

  it('face up collects at least as much as face down from the same air (aerosol invariant carried through)', () => {
    const dose = exposureDose([{ perM3: iso2Air, durationS: 3600 }]);
    const dep = (orientation: 'faceUp' | 'faceDown') =>
      depositDuringExposure({
        airborneDoseM3s: dose,
        areaM2: WAFER_300_M2,
        isolationFactor: 1,
        velocity: (d) => depositionVelocity(d, { orientation, downflowMps: 0.3, waferDiameterM: 0.3 }),
      });
    const up = dep('faceUp');
    const down = dep('faceDown');
    for (let k = 0; k < SPECTRUM_BIN_COUNT; k++) expect(up[k]!).toBeGreaterThanOrEqual(down[k]!);
  });

  it('rejects bad input with ModelInputError naming the parameter', () => {
    const ok = { airborneDoseM3s: iso2Air, areaM2: WAFER_300_M2, isolationFactor: 1, velocity: () => 1e-5 };
    expect(() => depositDuringExposure({ ...ok, isolationFactor: 0.5 })).toThrow(
      'depositDuringExposure: isolationFactor = 0.5 is out of range; allowed ≥ 1',
    );
    expect(() => depositDuringExposure({ ...ok, isolationFactor: Number.NaN })).toThrow(ModelInputError);
    for (const areaM2 of [0, -1, Number.POSITIVE_INFINITY, 11])
      expect(() => depositDuringExposure({ ...ok, areaM2 })).toThrow('depositDuringExposure: areaM2');
    expect(() => depositDuringExposure({ ...ok, velocity: () => -1 })).toThrow(
      'depositDuringExposure: velocity(',
    );
    expect(() => depositDuringExposure({ ...ok, velocity: () => Number.NaN })).toThrow(ModelInputError);
    expect(() => depositDuringExposure({ ...ok, velocity: () => 20 })).toThrow(ModelInputError);
    expect(() => depositDuringExposure({ ...ok, velocity: 1 as unknown as () => number })).toThrow(
      'depositDuringExposure: velocity',
    );
    expect(() =>
      depositDuringExposure({ ...ok, airborneDoseM3s: [1, 2] as unknown as Float64Array }),
    ).toThrow('depositDuringExposure: airborneDoseM3s');
    expect(() => depositDuringExposure(undefined as unknown as typeof ok)).toThrow(ModelInputError);
    expect(() =>
      depositDuringExposure({
        ...ok,
        airborneDoseM3s: zeroSpectrum().fill(1e308),
        areaM2: 10,
        velocity: () => 10,
      }),
    ).toThrow(ModelInputError);
  });
});
