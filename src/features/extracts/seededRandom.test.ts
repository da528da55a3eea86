import { describe, expect, it } from 'vitest';
import { Xoshiro128StarStar } from '@/engine/random/xoshiro128StarStar';
import { SeededRandom } from './seededRandom';

describe('SeededRandom', () => {
  it("draws its words from the engine's xoshiro128** stream for the same seed", () => {
    const random = new SeededRandom(72);
    const engine = Xoshiro128StarStar.forStream(72, 0);
    expect(Array.from({ length: 8 }, () => random.nextUint32())).toEqual(Array.from({ length: 8 }, () => engine.nextUint32()));
    expect(() => new SeededRandom(-1)).toThrow(RangeError);
  });

  it('repeats a stream for the same seed and differs for another', () => {
    const a = new SeededRandom(42);
    const b = new SeededRandom(42);
    const c = new SeededRandom(43);
    const first = Array.from({ length: 5 }, () => a.uniform());
    expect(Array.from({ length: 5 }, () => b.uniform())).toEqual(first);
    expect(Array.from({ length: 5 }, () => c.uniform())).not.toEqual(first);
  });

  it('draws from the stated distributions (moments within 4 standard errors, n = 100,000)', () => {
    const random = new SeededRandom(2026);
    const n = 100_000;
    let uniformSum = 0;
    let normalSum = 0;
    let normalSquares = 0;
    let poissonSum = 0;
    const below = new Array<number>(3).fill(0);
    for (let i = 0; i < n; i++) {
      const u = random.uniform();
      expect(u >= 0 && u < 1).toBe(true);
      uniformSum += u;
      const z = random.normal();
      normalSum += z;
      normalSquares += z * z;
      poissonSum += random.poisson(3);
      below[random.integerBelow(3)]++;
    }
    // Uniform(0,1): mean 1/2, sd 1/sqrt(12), so the standard error of the mean is 0.2887/sqrt(n).
    expect(Math.abs(uniformSum / n - 0.5)).toBeLessThan((4 * 0.2887) / Math.sqrt(n));
    // Standard normal: mean 0 (se 1/sqrt(n)); variance 1 (se sqrt(2/n)).
    expect(Math.abs(normalSum / n)).toBeLessThan(4 / Math.sqrt(n));
    expect(Math.abs(normalSquares / n - 1)).toBeLessThan(4 * Math.sqrt(2 / n));
    // Poisson(3): mean 3, variance 3.
    expect(Math.abs(poissonSum / n - 3)).toBeLessThan(4 * Math.sqrt(3 / n));
    // integerBelow(3): each share 1/3 with se sqrt(2/9/n).
    for (const count of below) expect(Math.abs(count / n - 1 / 3)).toBeLessThan(4 * Math.sqrt(2 / 9 / n));
  });
});
