/**
 * Seeded random numbers for the simulator: xoshiro128** for 32-bit integers, then uniform, normal and
 * Poisson variates. Everything is deterministic per seed and uses exact 32-bit integer arithmetic
 * (`Math.imul`, shifts), so a seed gives the same stream on every JS engine.
 *
 * References: Blackman & Vigna, "Scrambled linear pseudorandom number generators" (ACM TOMS 47, 2021),
 * generator xoshiro128** as published at prng.di.unimi.it/xoshiro128starstar.c; seeding by a
 * SplitMix-style 32-bit mixer (the murmur3 fmix32 finaliser, constants 0x85ebca6b / 0xc2b2ae35);
 * Marsaglia & Bray (1964) polar method for normals; Hörmann (1993), "The transformed rejection method for
 * generating Poisson random variables", Insurance: Mathematics and Economics 12, 39-45 (algorithm PTRS).
 */
import { LOG_FACTORIAL, LOG_FACTORIAL_TABLE_SIZE, stirlingLogGamma } from './special.js';

const TWO_POW_MINUS_32 = 2.3283064365386963e-10; // 2^-32

/** Mean below which Poisson variates come from exact inversion (sequential search); PTRS at and above. */
export const POISSON_INVERSION_LIMIT = 10;

/** Mix 32-bit words into one 32-bit seed (fmix32 of a running combination); order matters. */
export function mixSeed(...parts: number[]): number {
  let h = 0x6a09e667 | 0;
  for (const p of parts) {
    // Fold values beyond 32 bits so large integer seeds still differ.
    const lo = p >>> 0;
    const hi = Math.floor(p / 4294967296) >>> 0;
    h = fmix32((h ^ lo) + 0x9e3779b9 + (h << 6) + (h >>> 2));
    if (hi !== 0) h = fmix32((h ^ hi) + 0x9e3779b9);
  }
  return h >>> 0;
}

function fmix32(x: number): number {
  let z = x | 0;
  z = Math.imul(z ^ (z >>> 16), 0x85ebca6b);
  z = Math.imul(z ^ (z >>> 13), 0xc2b2ae35);
  return (z ^ (z >>> 16)) | 0;
}

/**
 * A seeded generator (xoshiro128**). Scalar methods for setup code; bulk methods
 * (`addNormal`, `poissonInPlace`, `fillUniform`) keep the state in locals so per-pixel work has no calls.
 *
 * @example
 * const rng = new Rng(42);
 * const u = rng.uniform(); // in (0, 1)
 * const k = rng.poisson(1234.5);
 */
export class Rng {
  private s0: number;
  private s1: number;
  private s2: number;
  private s3: number;
  private spare = 0;
  private hasSpare = false;
  private readonly one = new Float64Array(1);

  /** @param seed any finite number; its integer part (mod 2^64 as two 32-bit words) selects the stream. */
  constructor(seed: number) {
    let x = mixSeed(seed);
    // SplitMix-style expansion into four state words; the all-zero state is impossible in practice
    // but guarded anyway (xoshiro must not start at zero).
    x = (x + 0x9e3779b9) | 0;
    this.s0 = fmix32(x);
    x = (x + 0x9e3779b9) | 0;
    this.s1 = fmix32(x);
    x = (x + 0x9e3779b9) | 0;
    this.s2 = fmix32(x);
    x = (x + 0x9e3779b9) | 0;
    this.s3 = fmix32(x);
    if ((this.s0 | this.s1 | this.s2 | this.s3) === 0) this.s0 = 1;
  }

  /** A generator whose state is set directly (for reference-vector tests). Not all four words zero. */
  static fromState(s0: number, s1: number, s2: number, s3: number): Rng {
    const r = new Rng(0);
    r.s0 = s0 | 0;
    r.s1 = s1 | 0;
    r.s2 = s2 | 0;
    r.s3 = s3 | 0;
    r.hasSpare = false;
    return r;
  }

  /** Next 32-bit output as an unsigned integer in [0, 2^32). */
  nextUint32(): number {
    const s1 = this.s1;
    const m = Math.imul(s1, 5);
    const result = Math.imul((m << 7) | (m >>> 25), 9) >>> 0;
    const t = s1 << 9;
    this.s2 ^= this.s0;
    this.s3 ^= this.s1;
    this.s1 ^= this.s2;
    this.s0 ^= this.s3;
    this.s2 ^= t;
    this.s3 = (this.s3 << 11) | (this.s3 >>> 21);
    return result;
  }

  /** Uniform in the open interval (0, 1): (k + 0.5)/2^32 for a 32-bit k, so never 0 or 1 (safe for logs). */
  uniform(): number {
    return (this.nextUint32() + 0.5) * TWO_POW_MINUS_32;
  }

  /** Integer uniform in [0, n) for 1 <= n <= 2^32 (multiply-shift; bias below n/2^32, negligible here). */
  integer(n: number): number {
    return Math.floor(this.uniform() * n);
  }

  /** Standard normal by the polar method; the second value of each pair is cached for the next call. */
  normal(): number {
    if (this.hasSpare) {
      this.hasSpare = false;
      return this.spare;
    }
    let u: number;
    let v: number;
    let s: number;
    do {
      u = 2 * this.uniform() - 1;
      v = 2 * this.uniform() - 1;
      s = u * u + v * v;
    } while (s >= 1 || s === 0);
    const f = Math.sqrt((-2 * Math.log(s)) / s);
    this.spare = v * f;
    this.hasSpare = true;
    return u * f;
  }

  /** One Poisson variate with the given mean (>= 0); see `poissonInPlace` for the method. */
  poisson(mean: number): number {
    const one = this.one;
    one[0] = mean;
    this.poissonInPlace(one);
    return one[0] ?? 0;
  }

  /** Fill `out` with uniforms in (0, 1). */
  fillUniform(out: Float64Array): void {
    let s0 = this.s0;
    let s1 = this.s1;
    let s2 = this.s2;
    let s3 = this.s3;
    for (let i = 0; i < out.length; i++) {
      const m = Math.imul(s1, 5);
      const r = Math.imul((m << 7) | (m >>> 25), 9) >>> 0;
      const t = s1 << 9;
      s2 ^= s0;
      s3 ^= s1;
      s1 ^= s2;
      s0 ^= s3;
      s2 ^= t;
      s3 = (s3 << 11) | (s3 >>> 21);
      out[i] = (r + 0.5) * TWO_POW_MINUS_32;
    }
    this.s0 = s0;
    this.s1 = s1;
    this.s2 = s2;
    this.s3 = s3;
  }

  /**
   * Add `sigma` times a standard normal to each element of `buf` (polar method, both values of each pair
   * used; the scalar `normal()` cache is not touched).
   */
  addNormal(buf: Float64Array | Float32Array, sigma: number): void {
    let s0 = this.s0;
    let s1 = this.s1;
    let s2 = this.s2;
    let s3 = this.s3;
    const n = buf.length;
    let i = 0;
    while (i < n) {
      let u: number;
      let v: number;
      let s: number;
      do {
        let m = Math.imul(s1, 5);
        let r = Math.imul((m << 7) | (m >>> 25), 9) >>> 0;
        let t = s1 << 9;
        s2 ^= s0;
        s3 ^= s1;
        s1 ^= s2;
        s0 ^= s3;
        s2 ^= t;
        s3 = (s3 << 11) | (s3 >>> 21);
        u = 2 * ((r + 0.5) * TWO_POW_MINUS_32) - 1;
        m = Math.imul(s1, 5);
        r = Math.imul((m << 7) | (m >>> 25), 9) >>> 0;
        t = s1 << 9;
        s2 ^= s0;
        s3 ^= s1;
        s1 ^= s2;
        s0 ^= s3;
        s2 ^= t;
        s3 = (s3 << 11) | (s3 >>> 21);
        v = 2 * ((r + 0.5) * TWO_POW_MINUS_32) - 1;
        s = u * u + v * v;
      } while (s >= 1 || s === 0);
      const f = sigma * Math.sqrt((-2 * Math.log(s)) / s);
      buf[i] = (buf[i] ?? 0) + u * f;
      if (i + 1 < n) buf[i + 1] = (buf[i + 1] ?? 0) + v * f;
      i += 2;
    }
    this.s0 = s0;
    this.s1 = s1;
    this.s2 = s2;
    this.s3 = s3;
  }

  /**
   * Replace every mean in `buf` by one Poisson variate with that mean (means <= 0 or NaN give 0).
   *
   * Method: mean < 10 — exact inversion by sequential search of the CDF from k = 0 (one uniform);
   * mean >= 10 — Hörmann's PTRS (transformed rejection with squeeze), exact for every mean, with his
   * constants b = 0.931 + 2.53√μ, a = -0.059 + 0.02483 b, 1/α = 1.1239 + 1.1328/(b - 3.4),
   * v_r = 0.9277 - 3.6224/(b - 2), and ln k! from a table (k < 256) or Stirling's series.
   * Setup constants are recomputed only when the mean changes from the previous element.
   */
  poissonInPlace(buf: Float64Array): void {
    let s0 = this.s0;
    let s1 = this.s1;
    let s2 = this.s2;
    let s3 = this.s3;
    let lastMean = Number.NaN;
    let expMinus = 0;
    let logMean = 0;
    let a = 0;
    let b = 0;
    let invAlpha = 0;
    let vr = 0;
    const n = buf.length;
    for (let i = 0; i < n; i++) {
      const mean = buf[i] ?? 0;
      if (!(mean > 0)) {
        buf[i] = 0;
        continue;
      }
      if (mean < POISSON_INVERSION_LIMIT) {
        if (mean !== lastMean) {
          lastMean = mean;
          expMinus = Math.exp(-mean);
        }
        const m = Math.imul(s1, 5);
        const r = Math.imul((m << 7) | (m >>> 25), 9) >>> 0;
        const t = s1 << 9;
        s2 ^= s0;
        s3 ^= s1;
        s1 ^= s2;
        s0 ^= s3;
        s2 ^= t;
        s3 = (s3 << 11) | (s3 >>> 21);
        let u = (r + 0.5) * TWO_POW_MINUS_32;
        let k = 0;
        let p = expMinus;
        // Walk the CDF; the guard stops at k = 200 where the remaining tail is < 1e-150 for mean < 10.
        while (u > p && k < 200) {
          u -= p;
          k++;
          p *= mean / k;
        }
        buf[i] = k;
        continue;
      }
      if (mean !== lastMean) {
        lastMean = mean;
        logMean = Math.log(mean);
        b = 0.931 + 2.53 * Math.sqrt(mean);
        a = -0.059 + 0.02483 * b;
        invAlpha = 1.1239 + 1.1328 / (b - 3.4);
        vr = 0.9277 - 3.6224 / (b - 2);
      }
      for (;;) {
        let m = Math.imul(s1, 5);
        let r = Math.imul((m << 7) | (m >>> 25), 9) >>> 0;
        let t = s1 << 9;
        s2 ^= s0;
        s3 ^= s1;
        s1 ^= s2;
        s0 ^= s3;
        s2 ^= t;
        s3 = (s3 << 11) | (s3 >>> 21);
        const uu = (r + 0.5) * TWO_POW_MINUS_32 - 0.5;
        m = Math.imul(s1, 5);
        r = Math.imul((m << 7) | (m >>> 25), 9) >>> 0;
        t = s1 << 9;
        s2 ^= s0;
        s3 ^= s1;
        s1 ^= s2;
        s0 ^= s3;
        s2 ^= t;
        s3 = (s3 << 11) | (s3 >>> 21);
        const v = (r + 0.5) * TWO_POW_MINUS_32;
        const us = 0.5 - Math.abs(uu);
        const k = Math.floor(((2 * a) / us + b) * uu + mean + 0.43);
        if (us >= 0.07 && v <= vr) {
          buf[i] = k;
          break;
        }
        if (k < 0 || (us < 0.013 && v > us)) continue;
        const logFactK = k < LOG_FACTORIAL_TABLE_SIZE ? (LOG_FACTORIAL[k] ?? 0) : stirlingLogGamma(k + 1);
        if (Math.log((v * invAlpha) / (a / (us * us) + b)) <= -mean + k * logMean - logFactK) {
          buf[i] = k;
          break;
        }
      }
    }
    this.s0 = s0;
    this.s1 = s1;
    this.s2 = s2;
    this.s3 = s3;
  }
}
