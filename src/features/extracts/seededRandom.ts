/**
 * Seeded pseudo-random numbers for generated demo and benchmark extracts.
 *
 * The words come from the engine's generator, xoshiro128** 1.1 (Blackman and Vigna,
 * "Scrambled linear pseudorandom number generators", ACM Transactions on Mathematical
 * Software 2021;47(4):36) seeded through SplitMix64 (src/engine/random/xoshiro128StarStar.ts),
 * so demo data and engine runs share one published, reproducible source. This module adds
 * the sampling methods the generators need.
 *
 * Same seed, same numbers, on every platform (integer arithmetic and exact conversions to
 * doubles, apart from the normal and Poisson deviates' Math.log/sqrt/cos/exp).
 */
import { Xoshiro128StarStar } from '@/engine/random/xoshiro128StarStar';

/** A seeded stream of pseudo-random numbers. */
export class SeededRandom {
  private readonly generator: Xoshiro128StarStar;
  private spareNormal: number | null = null;

  /**
   * @param seed integer in [0, 2^32)
   * @param stream independent stream of the same seed, integer in [0, 2^32); default 0
   * @throws RangeError when either is out of range
   */
  constructor(seed: number, stream = 0) {
    this.generator = Xoshiro128StarStar.forStream(seed, stream);
  }

  /** Next unsigned 32-bit integer (the generator's raw output). */
  nextUint32(): number {
    return this.generator.nextUint32();
  }

  /** Uniform double in [0, 1) with 53 random bits. */
  uniform(): number {
    return this.generator.nextDouble();
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
