/**
 * A small seeded pseudo-random generator for the simulator and anything else that must be
 * reproducible: xoshiro128** (Blackman & Vigna, "Scrambled linear pseudorandom number generators",
 * ACM TOMS 47 (2021)) on 32-bit integer arithmetic, its state filled by a splitmix-style 32-bit
 * mixer. Only `Math.imul`, shifts and xor touch the state, so a seed gives the same integer stream on
 * every platform; the real-valued draws then go through `Math.log`/`Math.sqrt` and are identical on
 * every JavaScript engine that rounds those the same way (all current ones do for the inputs that
 * matter here).
 */

/** One step of a 32-bit splitmix-style mixer: a bijective avalanche hash of a counter. */
function mix32(x: number): number {
  let z = x | 0;
  z ^= z >>> 16;
  z = Math.imul(z, 0x21f0aaad);
  z ^= z >>> 15;
  z = Math.imul(z, 0x735a2d97);
  z ^= z >>> 15;
  return z >>> 0;
}

const GOLDEN = 0x9e3779b9;
const TWO_POW_32 = 4294967296;
const TWO_POW_53 = 9007199254740992;

/** Splits a non-negative integer seed (up to 2^53 − 1) into its low and high 32-bit words. */
function seedWords(seed: number): [number, number] {
  if (!Number.isSafeInteger(seed) || seed < 0) {
    throw new RangeError(`a seed must be an integer from 0 to 2^53 − 1, got ${seed}`);
  }
  return [seed >>> 0, Math.floor(seed / TWO_POW_32) >>> 0];
}

/** log(k!) exactly summed below 256, Stirling's series above (relative error < 1e-16 there). */
const LOG_FACTORIAL_TABLE = (() => {
  const t = new Float64Array(256);
  for (let k = 2; k < 256; k++) t[k] = t[k - 1] + Math.log(k);
  return t;
})();

export function logFactorial(k: number): number {
  if (k < 256) return LOG_FACTORIAL_TABLE[k];
  const x = k + 1;
  const inv = 1 / x;
  const inv2 = inv * inv;
  // ln Γ(x) = (x − ½)ln x − x + ½ln 2π + 1/(12x) − 1/(360x³) + 1/(1260x⁵) − …
  return (
    (x - 0.5) * Math.log(x) -
    x +
    0.9189385332046728 +
    inv * (1 / 12 - inv2 * (1 / 360 - inv2 * (1 / 1260 - inv2 / 1680)))
  );
}

export class Rng {
  private s0 = 0;
  private s1 = 0;
  private s2 = 0;
  private s3 = 0;
  /** The second value of the last polar-method pair, waiting to be used. */
  private spareNormal = 0;
  private hasSpare = false;
  private readonly seedLo: number;
  private readonly seedHi: number;
  private readonly streamId: number;

  /**
   * @param seed integer 0 … 2^53 − 1.
   * @param stream sub-stream number (used by `fork`); 0 for the main stream.
   */
  constructor(seed: number, stream = 0) {
    [this.seedLo, this.seedHi] = seedWords(seed);
    this.streamId = stream >>> 0;
    let counter = mix32(this.seedLo ^ mix32(this.seedHi + GOLDEN) ^ mix32(this.streamId ^ 0x5bd1e995));
    const next = () => {
      counter = (counter + GOLDEN) | 0;
      return mix32(counter);
    };
    this.s0 = next();
    this.s1 = next();
    this.s2 = next();
    this.s3 = next();
    // xoshiro's all-zero state is a fixed point; the mixer makes it astronomically unlikely, but be sure.
    if ((this.s0 | this.s1 | this.s2 | this.s3) === 0) this.s0 = 1;
  }

  /** Next 32-bit unsigned integer (xoshiro128**). */
  nextUint32(): number {
    const s1 = this.s1;
    const result = Math.imul(rotl(Math.imul(s1, 5), 7), 9) >>> 0;
    const t = s1 << 9;
    this.s2 ^= this.s0;
    this.s3 ^= this.s1;
    this.s1 ^= this.s2;
    this.s0 ^= this.s3;
    this.s2 ^= t;
    this.s3 = rotl(this.s3, 11);
    return result;
  }

  /** Uniform on [0, 1) with 53 random bits. */
  uniform(): number {
    const a = this.nextUint32() >>> 5; // 27 bits
    const b = this.nextUint32() >>> 6; // 26 bits
    return (a * 67108864 + b) / TWO_POW_53;
  }

  /** Uniform integer on 0 … n − 1 (n ≤ 2^32), by rejection so that no value is favoured. */
  integer(n: number): number {
    if (n <= 1) return 0;
    const limit = TWO_POW_32 - (TWO_POW_32 % n);
    for (;;) {
      const x = this.nextUint32();
      if (x < limit) return x % n;
    }
  }

  /** Standard normal N(0, 1) by Marsaglia's polar method. */
  normal(): number {
    if (this.hasSpare) {
      this.hasSpare = false;
      return this.spareNormal;
    }
    let u: number, v: number, s: number;
    do {
      u = 2 * this.uniform() - 1;
      v = 2 * this.uniform() - 1;
      s = u * u + v * v;
    } while (s >= 1 || s === 0);
    const f = Math.sqrt((-2 * Math.log(s)) / s);
    this.spareNormal = v * f;
    this.hasSpare = true;
    return u * f;
  }

  /** Exponential with unit mean, by inversion: −ln(1 − U), U ∈ [0, 1), so the argument is never 0. */
  exponential(): number {
    return -Math.log(1 - this.uniform());
  }

  /**
   * Poisson with the given mean. Exact for every mean: multiplication of uniforms (Knuth) below 10,
   * Hörmann's transformed rejection with squeeze, PTRS (Insurance: Math. Econ. 12, 39 (1993)), from 10 up.
   * A mean of 0 gives 0; a negative or non-finite mean gives NaN.
   */
  poisson(mean: number): number {
    if (!(mean >= 0) || !Number.isFinite(mean)) return NaN;
    if (mean === 0) return 0;
    if (mean < 10) {
      const limit = Math.exp(-mean);
      let k = 0;
      let p = this.uniform();
      while (p > limit) {
        k++;
        p *= this.uniform();
      }
      return k;
    }
    const sqrtMean = Math.sqrt(mean);
    const logMean = Math.log(mean);
    const b = 0.931 + 2.53 * sqrtMean;
    const a = -0.059 + 0.02483 * b;
    const invAlpha = 1.1239 + 1.1328 / (b - 3.4);
    const vr = 0.9277 - 3.6224 / (b - 2);
    for (;;) {
      const u = this.uniform() - 0.5;
      const v = this.uniform();
      const us = 0.5 - Math.abs(u);
      const k = Math.floor(((2 * a) / us + b) * u + mean + 0.43);
      if (us >= 0.07 && v <= vr) return k;
      if (k < 0 || (us < 0.013 && v > us)) continue;
      if (
        Math.log(v) + Math.log(invAlpha) - Math.log(a / (us * us) + b) <=
        -mean + k * logMean - logFactorial(k)
      ) {
        return k;
      }
    }
  }

  /**
   * An independent generator for sub-stream `stream`, derived from this generator's seed and stream
   * number only: forking does not advance this generator, and the same (seed, stream) always gives the
   * same sub-stream. Streams of a fork are numbered from this one's, so forks of forks differ too.
   */
  fork(stream: number): Rng {
    const child = mix32(Math.imul(this.streamId + 1, GOLDEN) ^ mix32((stream >>> 0) + 0x6a09e667));
    return new Rng(this.seedHi * TWO_POW_32 + this.seedLo, child === 0 ? 1 : child);
  }
}

function rotl(x: number, k: number): number {
  return (x << k) | (x >>> (32 - k));
}

/** A generator for `seed` (integer 0 … 2^53 − 1). */
export function createRng(seed: number): Rng {
  return new Rng(seed);
}
