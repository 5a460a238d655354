/**
 * Voids no scanned particle explains, a source of its own while an adopted parameter set states
 * their rate for the product: expected voids, unbonded area (Boolean model) and die kills (critical
 * area) move by exactly what the hand computations say; the source appears in the contributions,
 * the kind Pareto and the dominant source; nothing changes for a product the set says nothing of.
 */
import { describe, expect, it } from 'vitest';
import { assessPair } from '../../../src/engine/pair.ts';
import type { FittedUnexplainedVoids, ParameterSetRef } from '../../../src/engine/parameter-set-types.ts';
import type { LineData, PairAssessment } from '../../../src/engine/types.ts';
import {
  counterSeries,
  H,
  line,
  pair,
  product,
  scan,
  someParticles,
  standardWafer,
  T0,
  wafer,
} from '../../helpers/engine-inputs.ts';
import { fittedUnexplained } from '../../helpers/parameter-values.ts';

const CH = [0.1e-6, 0.2e-6, 0.3e-6, 0.5e-6, 1e-6, 5e-6];
const ISO5 = [100000, 23700, 10200, 3520, 832, 29];
const AS_OF = T0 + 7 * H;
const REF: ParameterSetRef = { id: 1, version: 1, label: 'test set', valuesHash: 'e'.repeat(64) };
/** Bonded area of a 300 mm wafer with a 3 mm edge exclusion, m² (hand computation). */
const AB = Math.PI * 0.147 ** 2;

function withSet(data: LineData, u: Record<string, FittedUnexplainedVoids>): LineData {
  return { ...data, parameters: { ref: REF, unexplainedVoids: u } };
}

function standard(airScale = 1) {
  const data = line({
    counters: { BAY: counterSeries('BAY', T0, T0 + 8 * H, CH, () => ISO5.map((v) => v * airScale)) },
  });
  const p = pair(
    'P1',
    standardWafer('W-T', someParticles(300, 1)),
    standardWafer('W-B', someParticles(300, 2)),
    { bondTimeMs: T0 + 6 * H },
  );
  return { p, data };
}

/**
 * A pair that brings no particle at all (scans with no defect, no ledger, no bonder) on a small
 * layout: 50 mm dies at a 70 mm pitch, the centre die's corner at (−25 mm, −25 mm) — the 3 × 3 dies
 * around the centre lie inside the 147 mm bonded radius (farthest corner (95, 95) mm at 134 mm) and
 * the next ring does not (its nearest corner (115, 25) mm is at 118 mm but the die reaches 165 mm).
 */
function emptyPair() {
  const data = line({
    products: {
      'HB-1': product({
        die: {
          widthM: 50e-3,
          heightM: 50e-3,
          pitchXM: 70e-3,
          pitchYM: 70e-3,
          originXM: -25e-3,
          originYM: -25e-3,
          pad: null,
        },
        recleanCleanId: null,
      }),
    },
  });
  const none = (id: string) => wafer(id, scan(`S-${id}`, T0, [], [], []), []);
  const p = pair('P0', none('W0-T'), none('W0-B'), { bondTimeMs: T0 + H, bonderToolId: null });
  return { p, data };
}

/** Everything of an assessment but what names the set (its reference and the inputs' hash). */
function figuresOf(a: PairAssessment) {
  const { parameters: _p, inputsHash: _h, ...rest } = a;
  return JSON.stringify(rest);
}

describe('voids no scanned particle explains', () => {
  it('raise the expected voids by exactly the rate and the unbonded area by the Boolean-model amount', () => {
    const { p, data } = standard();
    const u = fittedUnexplained('HB-1', { ratePerPair: 2.5, meanAreaM2: 4e-6 });
    const a = assessPair(p, data, { asOfMs: AS_OF });
    const b = assessPair(p, withSet(data, { 'HB-1': u }), { asOfMs: AS_OF });
    // Expected reportable voids: + u (hand computation: every such void is a reported one).
    expect(b.figures.voids.value - a.figures.voids.value).toBeCloseTo(2.5, 10);
    // Unbonded fraction: 1 − exp(−(E₀ + u·a/A_b)) with E₀ = −ln(1 − f₀) (Boolean model, hand computation).
    const e0 = -Math.log1p(-a.figures.unbondedFraction.value);
    const f1 = -Math.expm1(-(e0 + (2.5 * 4e-6) / AB));
    expect(b.figures.unbondedFraction.value).toBeCloseTo(f1, 12);
    expect(b.figures.unbondedAreaM2.value).toBeCloseTo(f1 * AB, 14);
    // Particles are unchanged: these voids have no particle behind them.
    expect(b.figures.particles).toBe(a.figures.particles);
    const src = b.contributions.find((c) => c.kind === 'unexplained')!;
    expect(src).toMatchObject({
      key: 'pair:unexplained',
      label: 'Voids no scanned particle explains (calibrated)',
      wafer: 'pair',
      waferId: 'P1',
      groupKey: 'unexplained',
      particles: 0,
    });
    expect(src.expectedVoids).toBeCloseTo(2.5, 12);
    expect(src.unbondedAreaM2).toBeCloseTo(2.5 * 4e-6, 15); // linearised: E·A_b = u·a
    const kind = b.pareto.byKind.find((e) => e.key === 'unexplained')!;
    expect(kind.label).toBe('Voids no scanned particle explains (calibrated)');
    expect(kind.expectedVoids).toBeCloseTo(2.5, 12);
    // Shares still sum to one over the contributions; the clean and size-band Paretos leave this
    // source out, so they sum to one less its share.
    const sum = (xs: number[]) => xs.reduce((s, x) => s + x, 0);
    expect(sum(b.contributions.map((c) => c.shareVoids))).toBeCloseTo(1, 12);
    expect(sum(b.pareto.byKind.map((e) => e.share))).toBeCloseTo(1, 12);
    expect(sum(b.pareto.byClean.map((e) => e.share))).toBeCloseTo(1 - kind.share, 12);
    expect(sum(b.pareto.bySizeBand.map((e) => e.share))).toBeCloseTo(1 - kind.share, 12);
    expect(b.spectrum!.series.some((s) => s.kind === 'unexplained')).toBe(false);
    expect(b.parameters).toEqual(REF);
    expect(a.parameters).toEqual({ id: null, version: null, label: 'typed values', valuesHash: null });
    expect(b.inputsHash).not.toBe(a.inputsHash);
  });

  it('stay out of the size bands, which hold the particle sources’ voids in every detail (the line view sums them)', () => {
    const { p, data } = standard();
    const u = fittedUnexplained('HB-1', { ratePerPair: 2.5, meanAreaM2: 4e-6 });
    const sum = (xs: number[]) => xs.reduce((s, x) => s + x, 0);
    for (const detail of ['full', 'summary'] as const) {
      const a = assessPair(p, data, { asOfMs: AS_OF, detail });
      const b = assessPair(p, withSet(data, { 'HB-1': u }), { asOfMs: AS_OF, detail });
      const bands = sum(b.pareto.bySizeBand.map((e) => e.expectedVoids));
      const particleSources = sum(
        b.contributions.filter((c) => c.kind !== 'unexplained').map((c) => c.expectedVoids),
      );
      // The bands partition the particle sources' voids (a sum of 48 bins regrouped: 1e-12 relative).
      expect(bands).toBeGreaterThan(0);
      expect(Math.abs(bands - particleSources)).toBeLessThan(1e-12 * particleSources);
      // … which are the pair's voids less the 2.5 no particle explains (hand computation), and the
      // same as without the set: the unexplained voids are in no band.
      expect(bands).toBeCloseTo(b.figures.voids.value - 2.5, 10);
      expect(Math.abs(bands - sum(a.pareto.bySizeBand.map((e) => e.expectedVoids)))).toBeLessThan(
        1e-12 * bands,
      );
    }
  });

  it('kill dies by the uniform critical-area amount on a small layout (hand computation)', () => {
    const { p, data } = emptyPair();
    const a = assessPair(p, data, { asOfMs: AS_OF });
    expect(a.figures.dieCount).toBe(9);
    expect(a.figures.voids.value).toBe(0);
    expect(a.figures.dieKillsPoisson!.value).toBe(0);
    const u = fittedUnexplained('HB-1', { ratePerPair: 2, meanAreaM2: Math.PI * 1e-6 }); // r = 1 mm
    const b = assessPair(p, withSet(data, { 'HB-1': u }), { asOfMs: AS_OF });
    // Critical area of a 50 mm die for a 1 mm void: w·h + 2r(w + h) + πr² (criticalAreaRectangle).
    const ac = 0.05 * 0.05 + 2 * 1e-3 * 0.1 + Math.PI * 1e-6;
    const m = (2 / AB) * ac; // kills per die: density u/A_b times the critical area
    expect(b.figures.dieKillsPoisson!.value).toBeCloseTo(9 * -Math.expm1(-m), 12);
    // Negative binomial with the product's α = 1: 1 − (1 + m/α)^(−α) per die (Stapper).
    expect(b.figures.dieKillsNB!.value).toBeCloseTo(9 * (1 - 1 / (1 + m)), 12);
    expect(b.figures.voids.value).toBeCloseTo(2, 12);
    expect(b.figures.unbondedFraction.value).toBeCloseTo(-Math.expm1(-(2 * Math.PI * 1e-6) / AB), 15);
    const src = b.contributions.find((c) => c.kind === 'unexplained')!;
    expect(src.dieKillEvents).toBeCloseTo(9 * m, 12);
    // The only source: it is the dominant one.
    expect(b.dominant).toMatchObject({ groupKey: 'unexplained', kind: 'unexplained', share: 1 });
    for (const d of b.voidMap!.dieGrid!.dies)
      expect(d.killProbabilityPoisson).toBeCloseTo(-Math.expm1(-m), 12);
  });

  it('count as Poisson voids in the intervals (a rate without uncertainty: the Poisson quantiles)', () => {
    const { p, data } = emptyPair();
    const u = fittedUnexplained('HB-1', { ratePerPair: 2, rateLowPerPair: 2, rateHighPerPair: 2 });
    const b = assessPair(p, withSet(data, { 'HB-1': u }), {
      asOfMs: AS_OF,
      config: { draws: 4000 },
    });
    // Poisson(2): P(N ≤ 4) = 0.947, P(N ≤ 5) = 0.983 (jstat.poisson.cdf), so the 97.5 % quantile is 5;
    // P(N = 0) = 0.135 > 0.025, so the 2.5 % quantile is 0. With 4000 draws the empirical CDF at 4
    // and 5 is within ±0.0025 (one binomial standard error), far from 0.975.
    expect(b.figures.voids.low).toBe(0);
    expect(b.figures.voids.high).toBe(5);
    // With its interval the rate itself is uncertain: the upper end of the voids widens.
    const wide = assessPair(
      p,
      withSet(data, {
        'HB-1': fittedUnexplained('HB-1', { ratePerPair: 2, rateLowPerPair: 0.5, rateHighPerPair: 8 }),
      }),
      { asOfMs: AS_OF, config: { draws: 4000 } },
    );
    expect(wide.figures.voids.high).toBeGreaterThan(5);
    expect(wide.figures.voids.value).toBeCloseTo(2, 12);
  });

  it('can be the dominant source of an ordinary pair', () => {
    // Air a thousandth of ISO 5: the pair's die loss then comes mostly from its scan tails (about
    // 1600 expected die-kill events); 1000 voids of 25 mm² per pair bring about 2100 (hand estimate).
    const { p, data } = standard(0.001);
    const a = assessPair(p, data, { asOfMs: AS_OF, detail: 'summary' });
    expect(a.dominant?.groupKey).toBe('tail');
    const u = fittedUnexplained('HB-1', { ratePerPair: 1000, rateHighPerPair: 1100, meanAreaM2: 25e-6 });
    const b = assessPair(p, withSet(data, { 'HB-1': u }), {
      asOfMs: AS_OF,
      detail: 'summary',
    });
    expect(b.dominant?.groupKey).toBe('unexplained');
  });

  it('leave a product the set says nothing of exactly as it was', () => {
    const { p, data } = standard();
    const a = assessPair(p, data, { asOfMs: AS_OF });
    const b = assessPair(p, withSet(data, { OTHER: fittedUnexplained('OTHER') }), { asOfMs: AS_OF });
    expect(figuresOf(b)).toBe(figuresOf(a));
    expect(b.contributions.some((c) => c.kind === 'unexplained')).toBe(false);
    // The set is named and hashed all the same: the assessment was made with it.
    expect(b.parameters).toEqual(REF);
    expect(b.inputsHash).not.toBe(a.inputsHash);
  });

  it('stay out of the modelled re-clean’s reach: the re-clean removes particles, not these voids', () => {
    const { p, data } = standard();
    const u = fittedUnexplained('HB-1', { ratePerPair: 3 });
    const a = assessPair(p, data, { asOfMs: AS_OF });
    const b = assessPair(p, withSet(data, { 'HB-1': u }), { asOfMs: AS_OF });
    // Both assessments model a re-clean (the test pair's product names one), with and without the set.
    expect(a.reclean).not.toBeNull();
    expect(b.reclean).not.toBeNull();
    expect(b.reclean!.after.voids.value - a.reclean!.after.voids.value).toBeCloseTo(3, 10);
  });
});
