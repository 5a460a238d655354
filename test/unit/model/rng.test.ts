import { describe, expect, it } from 'vitest';
import { ModelInputError } from '../../../src/model/errors.ts';
import { createRng, createRngFromState, type Rng, splitMix64 } from '../../../src/model/rng.ts';
import { chiSquareSurvival } from '../../../src/model/stats/chi-square.ts';
import { logGamma } from '../../../src/model/stats/gamma.ts';

/*
 * Statistical tolerances. Every moment check allows 4 standard errors of the estimator
 * (two-sided false-alarm probability 6·10⁻⁵ for a correct generator); the seeds are fixed, so
 * each check is deterministic, and a wrong distribution (wrong mean, wrong variance) moves the
 * estimate by far more than 4 SE at these sample sizes.
 */
const SIGMAS = 4;

function moments(draw: () => number, n: number): { mean: number; variance: number; m4: number } {
  const xs = new Float64Array(n);
  let s = 0;
  for (let i = 0; i < n; i++) {
    xs[i] = draw();
    s += xs[i]!;
  }
  const mean = s / n;
  let s2 = 0;
  let s4 = 0;
  for (const x of xs) {
    const d2 = (x - mean) ** 2;
    s2 += d2;
    s4 += d2 * d2;
  }
  return { mean, variance: s2 / (n - 1), m4: s4 / n };
}

/** Pearson chi-square goodness of fit of integer draws to a pmf, pooling a tail so every cell expects ≥ 5. */
function goodnessOfFit(
  draws: number[],
  pmf: (k: number) => number,
): { statistic: number; df: number; pValue: number } {
  const n = draws.length;
  const counts = new Map<number, number>();
  for (const k of draws) counts.set(k, (counts.get(k) ?? 0) + 1);
  // Cells 0…K−1 individually (pooling the low tail into cell lo), then one cell for ≥ K.
  let lo = 0;
  let lowMass = pmf(0);
  while (n * lowMass < 5) lowMass += pmf(++lo);
  const cells: { observed: number; expected: number }[] = [];
  let obsLow = 0;
  for (let k = 0; k <= lo; k++) obsLow += counts.get(k) ?? 0;
  cells.push({ observed: obsLow, expected: n * lowMass });
  let cum = lowMass;
  let k = lo + 1;
  for (;;) {
    const p = pmf(k);
    if (n * (1 - cum - p) < 5) break;
    cells.push({ observed: counts.get(k) ?? 0, expected: n * p });
    cum += p;
    k++;
  }
  let obsTail = 0;
  for (const [kk, c] of counts) if (kk >= k) obsTail += c;
  cells.push({ observed: obsTail, expected: n * (1 - cum) });
  const statistic = cells.reduce((s, c) => s + (c.observed - c.expected) ** 2 / c.expected, 0);
  const df = cells.length - 1;
  return { statistic, df, pValue: chiSquareSurvival(statistic, df) };
}

const poissonPmf = (mu: number) => (k: number) => Math.exp(-mu + k * Math.log(mu) - logGamma(k + 1));

describe('xoshiro128** core', () => {
  it('reproduces the reference output from state {1, 2, 3, 4}', () => {
    // rust-random/rngs, rand_xoshiro/src/xoshiro128starstar.rs, test `reference`: "produced with
    // the reference implementation (v1.1)", Blackman & Vigna's xoshiro128starstar.c.
    const r = createRngFromState([1, 2, 3, 4]);
    const expected = [
      11520, 0, 5927040, 70819200, 2031721883, 1637235492, 1287239034, 3734860849, 3729100597, 4258142804,
    ];
    expect(expected.map(() => r.nextUint32())).toEqual(expected);
  });

  it('reproduces the SplitMix64 reference output used for seeding', () => {
    // rust-random/rngs, rand_xoshiro/src/splitmix64.rs, test `reference` (Vigna's splitmix64.c).
    let state = 1477776061723855037n;
    const out: bigint[] = [];
    for (let i = 0; i < 4; i++) {
      const step = splitMix64(state);
      out.push(step.value);
      state = step.state;
    }
    expect(out).toEqual([
      1985237415132408290n,
      2979275885539914483n,
      13511426838097143398n,
      8488337342461049707n,
    ]);
  });

  it('gives the same sequence for the same seed, a different one for another seed, and resumes from state()', () => {
    const a = createRng(20260101);
    const b = createRng(20260101);
    const c = createRng(20260102);
    const seqA = Array.from({ length: 50 }, () => a.uniform());
    expect(Array.from({ length: 50 }, () => b.uniform())).toEqual(seqA);
    expect(Array.from({ length: 50 }, () => c.uniform())).not.toEqual(seqA);
    const resumed = createRngFromState(a.state());
    expect(Array.from({ length: 20 }, () => resumed.poisson(4))).toEqual(
      Array.from({ length: 20 }, () => a.poisson(4)),
    );
    expect(createRng(5n).nextUint32()).toBe(createRng(5).nextUint32());
  });

  it('rejects bad seeds and states with ModelInputError', () => {
    for (const s of [-1, 1.5, Number.NaN, Number.POSITIVE_INFINITY, 2 ** 53])
      expect(() => createRng(s)).toThrow(/createRng: seed = .*allowed an integer ≥ 0/);
    expect(() => createRng(-1n)).toThrow(ModelInputError);
    expect(() => createRng(1n << 64n)).toThrow(ModelInputError);
    expect(() => createRngFromState([0, 0, 0, 0])).toThrow(/not all zero/);
    expect(() => createRngFromState([1, 2, 3, 2 ** 32])).toThrow(/createRngFromState: words\[3\]/);
    expect(() => createRngFromState([1, 2, -3, 4])).toThrow(ModelInputError);
    expect(() => splitMix64(-1n)).toThrow(ModelInputError);
  });
});

describe('distributions (moments within 4 standard errors)', () => {
  const N = 200_000;
  const rng: Rng = createRng(1234);

  it('uniform: in [0, 1), mean ½, variance 1/12', () => {
    let min = 1;
    let max = 0;
    const m = moments(() => {
      const u = rng.uniform();
      min = Math.min(min, u);
      max = Math.max(max, u);
      return u;
    }, N);
    expect(min).toBeGreaterThanOrEqual(0);
    expect(max).toBeLessThan(1);
    expect(Math.abs(m.mean - 0.5)).toBeLessThan(SIGMAS * Math.sqrt(1 / 12 / N));
    // Var(s²) ≈ (µ₄ − σ⁴)/N with µ₄ = 1/80 for U(0, 1).
    expect(Math.abs(m.variance - 1 / 12)).toBeLessThan(SIGMAS * Math.sqrt((1 / 80 - 1 / 144) / N));
  });

  it('normal: mean 0, variance 1, 95 % inside ±1.959964', () => {
    let inside = 0;
    const m = moments(() => {
      const z = rng.normal();
      if (Math.abs(z) <= 1.959963984540054) inside++;
      return z;
    }, N);
    expect(Math.abs(m.mean)).toBeLessThan(SIGMAS / Math.sqrt(N));
    expect(Math.abs(m.variance - 1)).toBeLessThan(SIGMAS * Math.sqrt(2 / N));
    expect(Math.abs(inside / N - 0.95)).toBeLessThan(SIGMAS * Math.sqrt((0.95 * 0.05) / N));
  });

  it('normals(out): the same law as normal(), and the two values of each polar pair uncorrelated', () => {
    // Both values of an accepted polar pair are independent N(0, 1) (Marsaglia & Bray 1964); checked
    // here through the moments, the 95 % band and the correlation of the pair's values and squares
    // (each within 4 standard errors; the correlation's standard error is 1/√pairs).
    const z = rng.normals(new Float64Array(N + 1)); // odd length: the last pair is cut in half
    expect(z.length).toBe(N + 1);
    let sum = 0;
    let sum2 = 0;
    let inside = 0;
    for (const x of z) {
      sum += x;
      sum2 += x * x;
      if (Math.abs(x) <= 1.959963984540054) inside++;
    }
    const n = z.length;
    const mean = sum / n;
    expect(Math.abs(mean)).toBeLessThan(SIGMAS / Math.sqrt(n));
    expect(Math.abs(sum2 / n - mean * mean - 1)).toBeLessThan(SIGMAS * Math.sqrt(2 / n));
    expect(Math.abs(inside / n - 0.95)).toBeLessThan(SIGMAS * Math.sqrt((0.95 * 0.05) / n));
    const pairs = Math.floor(N / 2);
    let sxy = 0;
    let sq = 0;
    for (let i = 0; i < pairs; i++) {
      const a = z[2 * i]!;
      const b = z[2 * i + 1]!;
      sxy += a * b; // E = 0, Var = 1
      sq += (a * a - 1) * (b * b - 1); // E = 0, Var = 4
    }
    expect(Math.abs(sxy / pairs)).toBeLessThan(SIGMAS / Math.sqrt(pairs));
    expect(Math.abs(sq / pairs)).toBeLessThan((SIGMAS * 2) / Math.sqrt(pairs));
  });

  it('gamma(shape): mean = shape, variance = shape (scale 1), and scale multiplies', () => {
    for (const k of [0.3, 1, 2.5, 10, 400]) {
      const m = moments(() => rng.gamma(k), N);
      expect(Math.abs(m.mean - k)).toBeLessThan(SIGMAS * Math.sqrt(k / N));
      // Var(s²) ≈ (µ₄ − σ⁴)/N, µ₄ = 3k² + 6k for Gamma(k, 1).
      expect(Math.abs(m.variance - k)).toBeLessThan(SIGMAS * Math.sqrt((2 * k * k + 6 * k) / N));
    }
    const scaled = moments(() => rng.gamma(2, 3e-6), N);
    expect(Math.abs(scaled.mean - 6e-6)).toBeLessThan((SIGMAS * Math.sqrt(2 * 9e-12)) / Math.sqrt(N));
  });

  it('poisson(mean): mean and variance equal the mean, on both sides of the method switch at 10', () => {
    for (const mu of [0.5, 3, 9.99, 10, 57.3, 1e4, 1e9]) {
      const m = moments(() => rng.poisson(mu), N);
      expect(Math.abs(m.mean - mu)).toBeLessThan(SIGMAS * Math.sqrt(mu / N));
      // Var(s²) ≈ (µ₄ − σ⁴)/N, µ₄ = µ(1 + 3µ) for Poisson(µ).
      expect(Math.abs(m.variance - mu)).toBeLessThan(SIGMAS * Math.sqrt((mu + 2 * mu * mu) / N));
    }
    expect(rng.poisson(0)).toBe(0);
  });

  it('negativeBinomial(mean, α): mean m and variance m + m²/α (gamma–Poisson mixture)', () => {
    for (const [mu, alpha] of [
      [2, 0.5],
      [2, 2],
      [30, 1],
    ] as const) {
      const m = moments(() => rng.negativeBinomial(mu, alpha), N);
      const v = mu + (mu * mu) / alpha;
      expect(Math.abs(m.mean - mu)).toBeLessThan(SIGMAS * Math.sqrt(v / N));
      // SE of the sample variance from the sample's own fourth central moment, √((m₄ − v²)/N).
      expect(Math.abs(m.variance - v)).toBeLessThan(SIGMAS * Math.sqrt((m.m4 - v * v) / N));
    }
    expect(rng.negativeBinomial(0, 1)).toBe(0);
  });
});

describe('exact distributions (chi-square goodness of fit, p > 0.001)', () => {
  // A correct generator fails each of these with probability 0.001; the seed is fixed.
  const N = 100_000;

  it('poisson(3) (inversion) fits the Poisson pmf', () => {
    const r = createRng(3);
    const draws = Array.from({ length: N }, () => r.poisson(3));
    const g = goodnessOfFit(draws, poissonPmf(3));
    expect(g.df).toBeGreaterThanOrEqual(9);
    expect(g.pValue).toBeGreaterThan(0.001);
  });

  it('poisson(30) (PTRS transformed rejection) fits the Poisson pmf', () => {
    const r = createRng(30);
    const draws = Array.from({ length: N }, () => r.poisson(30));
    const g = goodnessOfFit(draws, poissonPmf(30));
    expect(g.df).toBeGreaterThanOrEqual(25);
    expect(g.pValue).toBeGreaterThan(0.001);
  });

  it('the goodness-of-fit check can fail: poisson(3.15) draws are rejected against the pmf of 3', () => {
    const r = createRng(315);
    const draws = Array.from({ length: N }, () => r.poisson(3.15));
    expect(goodnessOfFit(draws, poissonPmf(3)).pValue).toBeLessThan(1e-6);
  });

  it('negativeBinomial(2, 1.5) fits the negative-binomial pmf Γ(k+α)/(Γ(α)k!)·(α/(α+m))^α·(m/(α+m))^k', () => {
    const m = 2;
    const a = 1.5;
    const pmf = (k: number) =>
      Math.exp(
        logGamma(k + a) -
          logGamma(a) -
          logGamma(k + 1) +
          a * Math.log(a / (a + m)) +
          k * Math.log(m / (a + m)),
      );
    const r = createRng(1500);
    const draws = Array.from({ length: N }, () => r.negativeBinomial(m, a));
    expect(goodnessOfFit(draws, pmf).pValue).toBeGreaterThan(0.001);
  });
});

describe('argument checks', () => {
  const r = createRng(1);
  it('rejects bad shapes, scales, means and α with ModelInputError naming the method and parameter', () => {
    for (const s of [0, -1, Number.NaN, Number.POSITIVE_INFINITY])
      expect(() => r.gamma(s)).toThrow(/rng\.gamma: shape = .*allowed > 0/);
    expect(() => r.gamma(1, 0)).toThrow(/rng\.gamma: scale = 0/);
    for (const mu of [-0.1, Number.NaN, Number.POSITIVE_INFINITY, 2e12])
      expect(() => r.poisson(mu)).toThrow(/rng\.poisson: mean = .* count is out of range; allowed ≥ 0 count/);
    expect(() => r.negativeBinomial(-1, 1)).toThrow(/rng\.negativeBinomial: mean = -1/);
    for (const a of [0, -2, Number.NaN])
      expect(() => r.negativeBinomial(1, a)).toThrow(/rng\.negativeBinomial: alpha/);
  });
});
