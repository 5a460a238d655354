/**
 * A seeded pseudorandom number generator for simulation, Monte-Carlo checks and demo data.
 *
 * Generator: xoshiro128** 1.1 (D. Blackman & S. Vigna, "Scrambled linear pseudorandom number
 * generators", ACM Trans. Math. Softw. 47 (2021) 36; preprint arXiv:1805.01407, 2018). 128 bits
 * of state, period 2¹²⁸ − 1, 32-bit outputs; all operations are 32-bit integer operations, which
 * JavaScript does exactly (Math.imul, >>>). Seeding expands a 64-bit seed with SplitMix64, as the
 * authors recommend (S. Vigna, splitmix64.c, after G. L. Steele, D. Lea & C. H. Flood, OOPSLA 2014).
 *
 * Not for cryptography. The same seed always gives the same sequence, on every platform.
 */
import { ModelInputError, requireNumber } from './errors.ts';
import { logGammaUnchecked } from './stats/gamma.ts';

const MASK64 = (1n << 64n) - 1n;

/**
 * One step of SplitMix64: returns the next 64-bit output and the advanced state (both as bigint
 * in [0, 2⁶⁴)). Constants from Vigna's reference splitmix64.c.
 *
 * @param state current 64-bit state, 0 ≤ state < 2⁶⁴
 * @throws ModelInputError when state is not a bigint in range
 * @example splitMix64(1477776061723855037n).value // 1985237415132408290n (reference output)
 */
export function splitMix64(state: bigint): { value: bigint; state: bigint } {
  if (typeof state !== 'bigint' || state < 0n || state > MASK64)
    throw new ModelInputError(
      'splitMix64',
      'state',
      '',
      'a bigint in [0, 2^64)',
      typeof state === 'bigint' ? String(state) : typeof state,
    );
  const next = (state + 0x9e3779b97f4a7c15n) & MASK64;
  let z = next;
  z = ((z ^ (z >> 30n)) * 0xbf58476d1ce4e5b9n) & MASK64;
  z = ((z ^ (z >> 27n)) * 0x94d049bb133111ebn) & MASK64;
  return { value: z ^ (z >> 31n), state: next };
}

export interface Rng {
  /** Next raw 32-bit output of xoshiro128**, an integer in [0, 2³²). */
  nextUint32(): number;
  /** Uniform on [0, 1) with 53 random bits (two outputs). */
  uniform(): number;
  /** Standard normal N(0, 1) by Marsaglia's polar method (Marsaglia & Bray, SIAM Rev. 6 (1964) 260). */
  normal(): number;
  /**
   * Fills `out` with independent standard normals by the same polar method, using both values of
   * each accepted pair (u·f and v·f are independent N(0, 1), Marsaglia & Bray 1964): about half
   * the cost per value of `normal()`. Returns `out`.
   */
  normals(out: Float64Array): Float64Array;
  /** Gamma(shape, scale), mean shape·scale, by Marsaglia & Tsang, ACM TOMS 26 (2000) 363. */
  gamma(shape: number, scale?: number): number;
  /** Poisson(mean), exact: inversion for mean < 10, PTRS (Hörmann 1993) otherwise. */
  poisson(mean: number): number;
  /** Negative binomial with mean m and cluster parameter α (variance m + m²/α), as a gamma–Poisson mixture. */
  negativeBinomial(mean: number, alpha: number): number;
  /** The current 128-bit state as four 32-bit words (to resume a sequence). */
  state(): [number, number, number, number];
}

/**
 * Creates a seeded generator (xoshiro128**, state expanded from the seed by SplitMix64).
 *
 * @param seed an integer 0 ≤ seed ≤ 2⁵³ − 1, or a bigint in [0, 2⁶⁴)
 * @throws ModelInputError when seed is not such an integer
 * @example createRng(42).uniform() // the same number on every run and platform
 */
export function createRng(seed: number | bigint): Rng {
  let s: bigint;
  if (typeof seed === 'bigint') {
    if (seed < 0n || seed > MASK64)
      throw new ModelInputError('createRng', 'seed', '', 'an integer in [0, 2^64)', String(seed));
    s = seed;
  } else {
    s = BigInt(
      requireNumber('createRng', 'seed', seed, '', { min: 0, max: Number.MAX_SAFE_INTEGER, integer: true }),
    );
  }
  const a = splitMix64(s);
  const b = splitMix64(a.state);
  const lo = (x: bigint) => Number(x & 0xffffffffn);
  const hi = (x: bigint) => Number(x >> 32n);
  return createRngFromState([lo(a.value), hi(a.value), lo(b.value), hi(b.value)]);
}

/**
 * Creates a generator from an explicit xoshiro128** state (four 32-bit words, not all zero),
 * e.g. to reproduce the reference implementation's output or resume from `rng.state()`.
 *
 * @throws ModelInputError when a word is not an integer in [0, 2³²) or all four are zero
 * @example createRngFromState([1, 2, 3, 4]).nextUint32() // 5760 (reference xoshiro128starstar.c)
 */
export function createRngFromState(words: readonly [number, number, number, number]): Rng {
  const fn = 'createRngFromState';
  if (!Array.isArray(words) || words.length !== 4)
    throw new ModelInputError(fn, 'words', '', 'four 32-bit words', words);
  const st = new Uint32Array(4);
  words.forEach((w, i) => {
    st[i] = requireNumber(fn, `words[${i}]`, w, '', { min: 0, max: 0xffffffff, integer: true });
  });
  if (st[0] === 0 && st[1] === 0 && st[2] === 0 && st[3] === 0)
    throw new ModelInputError(fn, 'words', '', 'not all zero (the all-zero state is a fixed point)', words);
  return makeRng(st);
}

// Argument ranges of the draws, made once (the draws run millions of times in a Monte Carlo).
const GAMMA_SHAPE = Object.freeze({ min: 0, minExclusive: true, max: 1e12 });
const GAMMA_SCALE = Object.freeze({ min: 0, minExclusive: true, max: 1e100 });
const POISSON_MEAN = Object.freeze({ min: 0, max: 1e12 });
const NB_MEAN = Object.freeze({ min: 0, max: 1e9 });
const NB_ALPHA = Object.freeze({ min: 1e-3, max: 1e12 });

function rotl(x: number, k: number): number {
  return ((x << k) | (x >>> (32 - k))) >>> 0;
}

function makeRng(s: Uint32Array): Rng {
  return new Xoshiro128(s);
}

/**
 * The generator as a class: one shape and one set of methods for every instance, so that a
 * Monte Carlo loop calling a fresh generator per scenario keeps its calls monomorphic (inlined).
 */
class Xoshiro128 implements Rng {
  constructor(private readonly s: Uint32Array) {}

  nextUint32(): number {
    // xoshiro128** 1.1, transcribed from Blackman & Vigna's reference xoshiro128starstar.c.
    const s = this.s;
    const s0 = s[0]!;
    const s1 = s[1]!;
    const result = Math.imul(rotl(Math.imul(s1, 5) >>> 0, 7), 9) >>> 0;
    const t = (s1 << 9) >>> 0;
    s[2]! ^= s0;
    s[3]! ^= s1;
    s[1]! ^= s[2]!;
    s[0]! ^= s[3]!;
    s[2]! ^= t;
    s[3] = rotl(s[3]!, 11);
    return result;
  }

  /** 53-bit integer from two outputs (27 + 26 high bits). */
  private bits53(): number {
    return (this.nextUint32() >>> 5) * 67108864 + (this.nextUint32() >>> 6);
  }

  uniform(): number {
    return this.bits53() / 9007199254740992;
  }

  /** Uniform on the open interval (0, 1): never 0, never 1 (for logarithms and powers). */
  private uniformOpen(): number {
    return (this.bits53() + 0.5) / 9007199254740992;
  }

  normal(): number {
    // Polar method: a uniform point in the unit disc, (u, v) with s = u² + v² in (0, 1).
    for (;;) {
      const u = 2 * this.uniform() - 1;
      const v = 2 * this.uniform() - 1;
      const q = u * u + v * v;
      if (q > 0 && q < 1) return u * Math.sqrt((-2 * Math.log(q)) / q);
    }
  }

  normals(out: Float64Array): Float64Array {
    let i = 0;
    const n = out.length;
    while (i < n) {
      const u = 2 * this.uniform() - 1;
      const v = 2 * this.uniform() - 1;
      const q = u * u + v * v;
      if (!(q > 0 && q < 1)) continue;
      const f = Math.sqrt((-2 * Math.log(q)) / q);
      out[i++] = u * f;
      if (i < n) out[i++] = v * f;
    }
    return out;
  }

  private gammaUnit(a: number): number {
    if (a < 1) {
      // Marsaglia & Tsang (2000) §6: Gamma(a) = Gamma(a + 1) · U^(1/a). May underflow to 0 for tiny a.
      return this.gammaUnit(a + 1) * this.uniformOpen() ** (1 / a);
    }
    // Marsaglia & Tsang (2000): d = a − 1/3, c = 1/√(9d); accept d·v with v = (1 + c x)³.
    const d = a - 1 / 3;
    const c = 1 / Math.sqrt(9 * d);
    for (;;) {
      let x: number;
      let v: number;
      do {
        x = this.normal();
        v = 1 + c * x;
      } while (v <= 0);
      v = v * v * v;
      const u = this.uniformOpen();
      const x2 = x * x;
      if (u < 1 - 0.0331 * x2 * x2) return d * v; // squeeze
      if (Math.log(u) < 0.5 * x2 + d * (1 - v + Math.log(v))) return d * v;
    }
  }

  private poissonUnchecked(mu: number): number {
    if (mu === 0) return 0;
    if (mu < 10) {
      // Inversion by sequential search: smallest k with F(k) ≥ u (exact up to rounding of F).
      const u = this.uniform();
      let k = 0;
      let p = Math.exp(-mu);
      let f = p;
      while (u > f && p > 0) {
        k++;
        p *= mu / k;
        f += p;
      }
      return k;
    }
    // PTRS, transformed rejection with squeeze: W. Hörmann, "The transformed rejection method for
    // generating Poisson random variables", Insurance: Mathematics and Economics 12 (1993) 39–45.
    // Exact (a rejection method), valid for µ ≥ 10.
    const sq = Math.sqrt(mu);
    const logMu = Math.log(mu);
    const b = 0.931 + 2.53 * sq;
    const a = -0.059 + 0.02483 * b;
    const invAlpha = 1.1239 + 1.1328 / (b - 3.4);
    const vr = 0.9277 - 3.6224 / (b - 2);
    for (;;) {
      const u = this.uniform() - 0.5;
      const v = this.uniform();
      const us = 0.5 - Math.abs(u);
      const k = Math.floor(((2 * a) / us + b) * u + mu + 0.43);
      if (us >= 0.07 && v <= vr) return k;
      if (!(k >= 0) || (us < 0.013 && v > us)) continue;
      if (
        Math.log(v) + Math.log(invAlpha) - Math.log(a / (us * us) + b) <=
        -mu + k * logMu - logGammaUnchecked(k + 1)
      )
        return k;
    }
  }

  gamma(shape: number, scale = 1): number {
    requireNumber('rng.gamma', 'shape', shape, '', GAMMA_SHAPE);
    requireNumber('rng.gamma', 'scale', scale, '', GAMMA_SCALE);
    return this.gammaUnit(shape) * scale;
  }

  poisson(mean: number): number {
    requireNumber('rng.poisson', 'mean', mean, 'count', POISSON_MEAN);
    return this.poissonUnchecked(mean);
  }

  negativeBinomial(mean: number, alpha: number): number {
    requireNumber('rng.negativeBinomial', 'mean', mean, 'count', NB_MEAN);
    requireNumber('rng.negativeBinomial', 'alpha', alpha, '', NB_ALPHA);
    if (mean === 0) return 0;
    // Gamma–Poisson mixture: λ ~ Gamma(α, m/α) (mean m, variance m²/α), N | λ ~ Poisson(λ).
    return this.poissonUnchecked(this.gammaUnit(alpha) * (mean / alpha));
  }

  state(): [number, number, number, number] {
    const s = this.s;
    return [s[0]!, s[1]!, s[2]!, s[3]!];
  }
}
