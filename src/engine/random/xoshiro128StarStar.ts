/**
 * The engine's pseudo-random generator: xoshiro128** 1.1 (Blackman and Vigna, "Scrambled
 * linear pseudorandom number generators", ACM Trans Math Softw 2021;47(4):36), a 32-bit
 * generator with a 128-bit state and period 2¹²⁸ − 1, seeded from SplitMix64 (Steele, Lea
 * and Flood, "Fast splittable pseudorandom number generators", OOPSLA 2014) as its authors
 * recommend. Only integer operations that JavaScript defines exactly are used (Math.imul,
 * shifts, BigInt in the seeding), so a seed gives the same stream on every machine.
 *
 * Streams: `forStream(seed, stream)` seeds SplitMix64 with seed·2³² + stream, so every
 * bootstrap replicate has its own stream, whatever thread computes it.
 */
const MASK_64 = (1n << 64n) - 1n;

/** One SplitMix64 step: returns [next state, output]. */
export function splitMix64(state: bigint): [bigint, bigint] {
  const next = (state + 0x9e3779b97f4a7c15n) & MASK_64;
  let z = next;
  z = ((z ^ (z >> 30n)) * 0xbf58476d1ce4e5b9n) & MASK_64;
  z = ((z ^ (z >> 27n)) * 0x94d049bb133111ebn) & MASK_64;
  return [next, z ^ (z >> 31n)];
}

function rotateLeft(value: number, count: number): number {
  return (value << count) | (value >>> (32 - count));
}

export class Xoshiro128StarStar {
  private s0: number;
  private s1: number;
  private s2: number;
  private s3: number;

  private constructor(s0: number, s1: number, s2: number, s3: number) {
    this.s0 = s0 | 0;
    this.s1 = s1 | 0;
    this.s2 = s2 | 0;
    this.s3 = s3 | 0;
    if ((this.s0 | this.s1 | this.s2 | this.s3) === 0) this.s0 = 1; // the all-zero state is excluded
  }

  /**
   * A generator for stream `stream` (e.g. a replicate index) of seed `seed`, both integers
   * in [0, 2³²).
   * @throws RangeError when either is out of range.
   */
  static forStream(seed: number, stream: number): Xoshiro128StarStar {
    if (!Number.isInteger(seed) || seed < 0 || seed > 0xffffffff) throw new RangeError(`seed must be an integer in [0, 2^32), got ${seed}`);
    if (!Number.isInteger(stream) || stream < 0 || stream > 0xffffffff) throw new RangeError(`stream must be an integer in [0, 2^32), got ${stream}`);
    let state = (BigInt(seed) << 32n) | BigInt(stream);
    let first: bigint;
    let second: bigint;
    [state, first] = splitMix64(state);
    [state, second] = splitMix64(state);
    return new Xoshiro128StarStar(
      Number(first & 0xffffffffn),
      Number(first >> 32n),
      Number(second & 0xffffffffn),
      Number(second >> 32n),
    );
  }

  /** The next 32-bit output as an unsigned integer. */
  nextUint32(): number {
    const result = Math.imul(rotateLeft(Math.imul(this.s1, 5), 7), 9);
    const t = this.s1 << 9;
    this.s2 ^= this.s0;
    this.s3 ^= this.s1;
    this.s1 ^= this.s2;
    this.s0 ^= this.s3;
    this.s2 ^= t;
    this.s3 = rotateLeft(this.s3, 11);
    return result >>> 0;
  }

  /** A double uniform on [0, 1) with 53 random bits (two outputs: 27 high + 26 low bits). */
  nextDouble(): number {
    const high = this.nextUint32() >>> 5;
    const low = this.nextUint32() >>> 6;
    return (high * 67108864 + low) / 9007199254740992;
  }

  /** An integer uniform on [0, bound), as ⌊u·bound⌋ with u from nextDouble (bias below bound/2⁵³). */
  nextBelow(bound: number): number {
    return Math.floor(this.nextDouble() * bound);
  }

  /** A standard normal deviate by the Box-Muller transform (Box and Muller, Ann Math Statist 1958;29:610-611). */
  nextNormal(): number {
    let u = this.nextDouble();
    while (u === 0) u = this.nextDouble();
    const v = this.nextDouble();
    return Math.sqrt(-2 * Math.log(u)) * Math.cos(2 * Math.PI * v);
  }
}

/**
 * Multinomial resampling weights for the nonparametric bootstrap: n draws with
 * replacement from n rows, returned as each row's count (Efron and Tibshirani, An
 * Introduction to the Bootstrap, 1993, ch. 6), so a refit can weight the original rows
 * instead of copying them.
 */
export function resampleCounts(generator: Xoshiro128StarStar, n: number, out: Float64Array): Float64Array {
  out.fill(0);
  for (let draw = 0; draw < n; draw++) out[generator.nextBelow(n)] += 1;
  return out;
}
