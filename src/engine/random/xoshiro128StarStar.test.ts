import { execFileSync } from 'node:child_process';
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { resampleCounts, splitMix64, Xoshiro128StarStar } from './xoshiro128StarStar.js';

/**
 * The authors' reference C code (public domain, prng.di.unimi.it: splitmix64.c and
 * xoshiro128starstar.c), compiled with the system C compiler when one is present, seeded
 * the way forStream seeds: SplitMix64 from seed·2³² + stream, two outputs split into
 * four 32-bit words, low half first.
 */
const referenceC = `
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
static uint64_t x;
static uint64_t splitmix64(void) {
  uint64_t z = (x += 0x9e3779b97f4a7c15);
  z = (z ^ (z >> 30)) * 0xbf58476d1ce4e5b9;
  z = (z ^ (z >> 27)) * 0x94d049bb133111eb;
  return z ^ (z >> 31);
}
static inline uint32_t rotl(const uint32_t v, int k) { return (v << k) | (v >> (32 - k)); }
static uint32_t s[4];
static uint32_t next(void) {
  const uint32_t result = rotl(s[1] * 5, 7) * 9;
  const uint32_t t = s[1] << 9;
  s[2] ^= s[0]; s[3] ^= s[1]; s[1] ^= s[2]; s[0] ^= s[3];
  s[2] ^= t;
  s[3] = rotl(s[3], 11);
  return result;
}
int main(int argc, char **argv) {
  x = ((uint64_t)strtoul(argv[1], 0, 10) << 32) | (uint64_t)strtoul(argv[2], 0, 10);
  uint64_t a = splitmix64(), b = splitmix64();
  s[0] = (uint32_t)a; s[1] = (uint32_t)(a >> 32); s[2] = (uint32_t)b; s[3] = (uint32_t)(b >> 32);
  for (int i = 0; i < 8; i++) printf("%u\\n", next());
  return 0;
}
`;

function compilerAvailable(): boolean {
  try {
    execFileSync('cc', ['--version'], { stdio: 'ignore' });
    return true;
  } catch {
    return false;
  }
}

describe('xoshiro128** seeded by SplitMix64', () => {
  it('SplitMix64 from state 0 gives 0xe220a8397b1dcdaf first (Vigna\'s splitmix64.c; from memory)', () => {
    expect(splitMix64(0n)[1]).toBe(0xe220a8397b1dcdafn);
  });

  it.skipIf(!compilerAvailable())('matches the reference C implementation for several seeds and streams', () => {
    const folder = mkdtempSync(join(tmpdir(), 'xoshiro-'));
    writeFileSync(join(folder, 'reference.c'), referenceC);
    execFileSync('cc', ['-O2', '-o', join(folder, 'reference'), join(folder, 'reference.c')]);
    for (const [seed, stream] of [[1, 0], [1, 1], [4294967295, 123456], [0, 0]]) {
      const expected = execFileSync(join(folder, 'reference'), [String(seed), String(stream)], { encoding: 'utf8' }).trim().split('\n').map(Number);
      const generator = Xoshiro128StarStar.forStream(seed, stream);
      expect(expected.map(() => generator.nextUint32()), `seed ${seed}, stream ${stream}`).toEqual(expected);
    }
  });

  it('streams are reproducible and distinct', () => {
    const first = Xoshiro128StarStar.forStream(9, 3);
    const again = Xoshiro128StarStar.forStream(9, 3);
    const other = Xoshiro128StarStar.forStream(9, 4);
    const a = [first.nextDouble(), first.nextDouble()];
    expect([again.nextDouble(), again.nextDouble()]).toEqual(a);
    expect([other.nextDouble(), other.nextDouble()]).not.toEqual(a);
  });

  it('doubles are uniform on [0, 1) and resampling counts sum to n', () => {
    const generator = Xoshiro128StarStar.forStream(5, 0);
    let sum = 0;
    let outside = 0;
    for (let i = 0; i < 100_000; i++) {
      const u = generator.nextDouble();
      if (!(u >= 0 && u < 1)) outside++;
      sum += u;
    }
    expect(outside).toBe(0);
    // Mean of 1e5 uniforms: sd 1/√(12·1e5) ≈ 0.00091; 5 sd (common practice).
    expect(Math.abs(sum / 100_000 - 0.5)).toBeLessThan(0.0046);
    const counts = resampleCounts(generator, 1000, new Float64Array(1000));
    expect(counts.reduce((a, b) => a + b, 0)).toBe(1000);
  });

  it('rejects seeds outside [0, 2^32)', () => {
    expect(() => Xoshiro128StarStar.forStream(-1, 0)).toThrow(RangeError);
    expect(() => Xoshiro128StarStar.forStream(2 ** 32, 0)).toThrow(RangeError);
  });
});
