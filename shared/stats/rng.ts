/**
 * Seeded random numbers for pseudo-experiments: the same seed gives the same pseudo-experiments on
 * every machine and in the browser (32-bit integer arithmetic only, no platform generator).
 */
import { lnFactorial } from './distributions';

// Module-scope aliases: cheaper than global lookups in sandboxed runtimes (test runners' VM contexts).
const { abs, exp, floor, imul, log, sqrt, trunc } = Math;

/** splitmix32 step: spreads a small seed over the whole generator state. */
function splitmix32(state: { s: number }): number {
  state.s = (state.s + 0x9e3779b9) | 0;
  let z = state.s;
  z = imul(z ^ (z >>> 16), 0x85ebca6b);
  z = imul(z ^ (z >>> 13), 0xc2b2ae35);
  return (z ^ (z >>> 16)) >>> 0;
}

/**
 * xoshiro128** (D. Blackman, S. Vigna, "Scrambled linear pseudorandom number generators",
 * ACM Trans. Math. Softw. 47 (2021) 36): period 2^128 − 1, fast on 32-bit integer arithmetic.
 */
export class Random {
  private a: number;
  private b: number;
  private c: number;
  private d: number;
  private spareNormal = 0;
  private hasSpare = false;

  constructor(seed: number) {
    const state = { s: trunc(seed) | 0 };
    // Mix the high part of seeds above 2^32 as well.
    state.s ^= trunc(seed / 4294967296) | 0;
    this.a = splitmix32(state);
    this.b = splitmix32(state);
    this.c = splitmix32(state);
    this.d = splitmix32(state);
    if ((this.a | this.b | this.c | this.d) === 0) this.a = 1;
  }

  /** Next 32-bit unsigned integer. */
  nextUint32(): number {
    const result = imul(rotl(imul(this.b, 5), 7), 9) >>> 0;
    const t = this.b << 9;
    this.c ^= this.a;
    this.d ^= this.b;
    this.b ^= this.c;
    this.a ^= this.d;
    this.c ^= t;
    this.d = rotl(this.d, 11);
    return result;
  }

  /** Uniform double in (0, 1) with 53 random bits (never exactly 0, so logarithms are safe). */
  uniform(): number {
    const hi = this.nextUint32() >>> 5; // 27 bits
    const lo = this.nextUint32() >>> 6; // 26 bits
    return (hi * 67108864 + lo + 0.5) / 9007199254740992;
  }

  /** Standard normal deviate (Marsaglia's polar method; the second deviate is kept for the next call). */
  normal(): number {
    if (this.hasSpare) {
      this.hasSpare = false;
      return this.spareNormal;
    }
    let u: number;
    let v: number;
    let s: number;
    do {
      u = 2 * this.uniform() - 1;
      v = 2 * this.uniform() - 1;
      s = u * u + v * v;
    } while (s >= 1 || s === 0);
    const factor = sqrt((-2 * log(s)) / s);
    this.spareNormal = v * factor;
    this.hasSpare = true;
    return u * factor;
  }

  /**
   * Poisson deviate with mean λ: inverse transform (sequential search) below λ = 10, and above the
   * transformed rejection "PTRS" of W. Hörmann, "The transformed rejection method for generating
   * Poisson random variables", Insurance: Mathematics and Economics 12 (1993) 39.
   */
  poisson(lambda: number): number {
    if (!(lambda > 0)) return 0;
    if (lambda < 10) {
      let p = exp(-lambda);
      let cdf = p;
      const u = this.uniform();
      let k = 0;
      while (u > cdf) {
        k++;
        p *= lambda / k;
        cdf += p;
        // Rounding can leave the summed CDF a hair below 1: stop in the far tail.
        if (k > 1000) break;
      }
      return k;
    }
    const slam = sqrt(lambda);
    const logLam = log(lambda);
    const b = 0.931 + 2.53 * slam;
    const a = -0.059 + 0.02483 * b;
    const invAlpha = 1.1239 + 1.1328 / (b - 3.4);
    const vr = 0.9277 - 3.6224 / (b - 2);
    for (;;) {
      const u = this.uniform() - 0.5;
      const v = this.uniform();
      const us = 0.5 - abs(u);
      const k = floor(((2 * a) / us + b) * u + lambda + 0.43);
      if (us >= 0.07 && v <= vr) return k;
      if (k < 0 || (us < 0.013 && v > us)) continue;
      if (log(v) + log(invAlpha) - log(a / (us * us) + b) <= -lambda + k * logLam - lnFactorial(k)) return k;
    }
  }
}

function rotl(x: number, k: number): number {
  return (x << k) | (x >>> (32 - k));
}
