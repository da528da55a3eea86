/**
 * Seeded pseudo-random numbers for generated demo and benchmark extracts.
 *
 * Generator: xoshiro128** 1.1 (D. Blackman and S. Vigna, "Scrambled linear pseudorandom
 * number generators", ACM Transactions on Mathematical Software 2021;47(4):36; reference C
 * code https://prng.di.unimi.it/xoshiro128starstar.c, public domain). Its four 32-bit
 * state words are filled from the seed with the 32-bit finaliser of MurmurHash3
 * (A. Appleby, public domain) applied to a Weyl sequence, so that nearby seeds give
 * unrelated streams and the state is never all zero.
 *
 * Same seed, same numbers, on every platform (only 32-bit integer arithmetic and exact
 * conversions to doubles are involved, apart from the normal deviates' Math.log/sqrt/cos).
 */

function rotl(x: number, k: number): number {
  return (x << k) | (x >>> (32 - k));
}

function fmix32(h: number): number {
  h ^= h >>> 16;
  h = Math.imul(h, 0x85ebca6b);
  h ^= h >>> 13;
  h = Math.imul(h, 0xc2b2ae35);
  h ^= h >>> 16;
  return h >>> 0;
}

/** A seeded stream of pseudo-random numbers. */
export class SeededRandom {
  private s0: number;
  private s1: number;
  private s2: number;
  private s3: number;
  private spareNormal: number | null = null;

  /**
   * @param seed any integer (taken modulo 2^32)
   * @param state optional exact initial state (four 32-bit words), for reproducing
   *   published reference outputs; not all zero
   */
  constructor(seed: number, state?: readonly [number, number, number, number]) {
    if (state) {
      [this.s0, this.s1, this.s2, this.s3] = state.map((w) => w >>> 0) as [number, number, number, number];
    } else {
      const base = seed >>> 0;
      this.s0 = fmix32((base + 0x9e3779b9) >>> 0);
      this.s1 = fmix32((base + 2 * 0x9e3779b9) >>> 0);
      this.s2 = fmix32((base + 3 * 0x9e3779b9) >>> 0);
      this.s3 = fmix32((base + 4 * 0x9e3779b9) >>> 0);
    }
    if ((this.s0 | this.s1 | this.s2 | this.s3) === 0) this.s0 = 1;
  }

  /** Next unsigned 32-bit integer (the generator's raw output). */
  nextUint32(): number {
    const result = Math.imul(rotl(Math.imul(this.s1, 5), 7), 9) >>> 0;
    const t = this.s1 << 9;
    this.s2 ^= this.s0;
    this.s3 ^= this.s1;
    this.s1 ^= this.s2;
    this.s0 ^= this.s3;
    this.s2 ^= t;
    this.s3 = rotl(this.s3, 11);
    return result;
  }

  /** Uniform double in [0, 1) with 53 random bits. */
  uniform(): number {
    const high = this.nextUint32() >>> 5; // 27 bits
    const low = this.nextUint32() >>> 6; // 26 bits
    return (high * 67108864 + low) / 9007199254740992;
  }

  /** Uniform integer in [0, n). Rejection sampling, so every value is equally likely. */
  integerBelow(n: number): number {
    if (!Number.isInteger(n) || n <= 0 || n > 2 ** 32) throw new RangeError('integerBelow: n must be an integer in 1..2^32');
    const limit = Math.floor(2 ** 32 / n) * n;
    for (;;) {
      const x = this.nextUint32();
      if (x < limit) return x % n;
    }
  }

  /** True with probability p. */
  bernoulli(p: number): boolean {
    return this.uniform() < p;
  }

  /**
   * Standard normal deviate by the Box-Muller transform (Box and Muller, Ann Math Stat
   * 1958;29:610-611), using both values of each pair.
   */
  normal(): number {
    if (this.spareNormal !== null) {
      const spare = this.spareNormal;
      this.spareNormal = null;
      return spare;
    }
    let u = this.uniform();
    while (u === 0) u = this.uniform();
    const v = this.uniform();
    const radius = Math.sqrt(-2 * Math.log(u));
    this.spareNormal = radius * Math.sin(2 * Math.PI * v);
    return radius * Math.cos(2 * Math.PI * v);
  }

  /** Index drawn with probability proportional to `weights`. */
  pick(weights: readonly number[]): number {
    let total = 0;
    for (const w of weights) total += w;
    let u = this.uniform() * total;
    for (let i = 0; i < weights.length; i++) {
      u -= weights[i];
      if (u < 0) return i;
    }
    return weights.length - 1;
  }

  /**
   * Poisson deviate: Knuth's multiplication method (The Art of Computer Programming,
   * vol. 2, 3.4.1) for mean up to 30, else a rounded normal approximation.
   */
  poisson(mean: number): number {
    if (!(mean >= 0)) throw new RangeError('poisson: mean must be non-negative');
    if (mean > 30) return Math.max(0, Math.round(mean + Math.sqrt(mean) * this.normal()));
    const limit = Math.exp(-mean);
    let k = 0;
    let product = this.uniform();
    while (product > limit) {
      k++;
      product *= this.uniform();
    }
    return k;
  }
}
