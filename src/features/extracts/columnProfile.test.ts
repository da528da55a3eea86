import { describe, expect, it } from 'vitest';
import { ingestExtract } from './extracts';
import { quantileType7 } from './columnProfile';
import { SeededRandom } from './seededRandom';
import { chunked } from './testSupport';
import type { ColumnProfile } from './extracts.schema';

async function profileOf(values: readonly (number | string)[]): Promise<ColumnProfile> {
  const csv = `x\n${values.map(String).join('\n')}\n`;
  const result = await ingestExtract(chunked(csv, 7));
  return result.profile[0];
}

/** |actual - expected| within `digits` significant digits of expected. */
function expectRelativelyClose(actual: number | null | undefined, expected: number, digits = 15): void {
  expect(actual).not.toBeNull();
  expect(Math.abs((actual as number) - expected)).toBeLessThanOrEqual(Math.abs(expected) * 10 ** -digits);
}

describe('numeric profile against R 4.2.2 (Debian, /usr/bin/Rscript)', () => {
  it('decimals with a missing value', async () => {
    // R: x <- c(3.2, 1.5, NA, 7.25, 2, 2, 10.125, 0.5)
    //    quantile(x, c(.25,.5,.75), na.rm=TRUE)  -> 1.75, 2, 5.2249999999999996
    //    mean(x, na.rm=TRUE) -> 3.7964285714285713; sd(x, na.rm=TRUE) -> 3.5338372843668044
    // By hand: sorted 0.5 1.5 2 2 3.2 7.25 10.125 (n = 7); Q1 at h = 1 + 6/4 = 2.5 -> (1.5 + 2)/2;
    // median at h = 4 -> 2; Q3 at h = 5.5 -> (3.2 + 7.25)/2 = 5.225; mean 26.575 / 7.
    const p = await profileOf([3.2, 1.5, 'NA', 7.25, 2, 2, 10.125, 0.5]);
    expect(p.missingCount).toBe(1);
    expect(p.distinctCount).toBe(6);
    expect(p.inferredType).toBe('continuous');
    expect(p.numeric).toMatchObject({ min: 0.5, max: 10.125, q1: 1.75, median: 2, q3: 5.225, quantileDefinition: 'hyndman-fan-7' });
    expectRelativelyClose(p.numeric?.mean, 3.7964285714285713);
    expectRelativelyClose(p.numeric?.sd, 3.5338372843668044);
  });

  it('integers (counting path)', async () => {
    // R: y <- c(0,1,1,2,3,5,8,13,21,34,55); quantile(y) -> 1.5, 5, 17; mean 13; sd 17.424121211699603
    const p = await profileOf([0, 1, 1, 2, 3, 5, 8, 13, 21, 34, 55]);
    expect(p.inferredType).toBe('count');
    expect(p.numeric).toMatchObject({ q1: 1.5, median: 5, q3: 17, mean: 13, integerValued: true });
    expectRelativelyClose(p.numeric?.sd, 17.424121211699603);
    expect(p.distinctCount).toBe(10);
    expect(p.levels?.[1]).toEqual({ value: '1', count: 2 });
  });

  it('500 two-decimal values (scaled counting path)', async () => {
    // R: i <- 1:500; x <- ((i*7919) %% 1000)/100
    //    quantile(x) -> 2.5175000000000001 5.0250000000000004 7.5075000000000003
    //    mean(x) -> 5.0149999999999997; sd(x) -> 2.8852685402052605; length(unique(x)) -> 500
    const values = Array.from({ length: 500 }, (_, k) => ((k + 1) * 7919 % 1000) / 100);
    const p = await profileOf(values);
    expect(p.numeric?.q1).toBe(2.5175000000000001);
    expect(p.numeric?.median).toBe(5.0250000000000004);
    expect(p.numeric?.q3).toBe(7.5075000000000003);
    expectRelativelyClose(p.numeric?.mean, 5.0149999999999997);
    expectRelativelyClose(p.numeric?.sd, 2.8852685402052605);
    expect(p.distinctCount).toBe(500);
    expect(p.levels).toBeNull();
  });

  it('values written with exponents (sorted path)', async () => {
    // R: z <- c(1e-3, 2.5e2, 3e0, -4.75, 1e5); quantile(z) -> 0.001 3 250
    //    mean(z) -> 20049.6502; sd(z) -> 44693.736042790995
    const p = await profileOf(['1e-3', '2.5e2', '3e0', '-4.75', '1E5']);
    expect(p.numeric).toMatchObject({ min: -4.75, max: 100000, q1: 0.001, median: 3, q3: 250 });
    expectRelativelyClose(p.numeric?.mean, 20049.6502);
    expectRelativelyClose(p.numeric?.sd, 44693.736042790995);
  });
});

describe('quantiles', () => {
  it('quantileType7 follows Hyndman and Fan definition 7', () => {
    // h = 1 + 3 * 0.25 = 1.75 -> 1 + 0.75 * (2 - 1) = 1.75; h = 1 + 3 * 0.5 = 2.5 -> 2.5.
    expect(quantileType7([4, 1, 3, 2], 0.25)).toBe(1.75);
    expect(quantileType7([4, 1, 3, 2], 0.5)).toBe(2.5);
    expect(quantileType7([NaN, 7], 0.9)).toBe(7);
    expect(() => quantileType7([NaN], 0.5)).toThrow(RangeError);
  });

  it('the counting shortcut agrees with sorting, bit for bit (invariant)', async () => {
    // 20,000 values spread over about 240 units: even with 3 decimals the key range (about
    // 240,000) stays under the counting limit of 16 n + 1024, so the shortcut is exercised.
    const random = new SeededRandom(7);
    for (const decimals of [0, 1, 2, 3]) {
      const values = Array.from({ length: 20_000 }, () => Number((random.normal() * 40 + 100).toFixed(decimals)));
      const p = await profileOf(values);
      expect(p.numeric?.q1).toBe(quantileType7(values, 0.25));
      expect(p.numeric?.median).toBe(quantileType7(values, 0.5));
      expect(p.numeric?.q3).toBe(quantileType7(values, 0.75));
      expect(p.distinctCount).toBe(new Set(values).size);
      expect(p.numeric?.min).toBe(Math.min(...values));
      expect(p.numeric?.max).toBe(Math.max(...values));
    }
  });
});

describe('other profiles', () => {
  it('lists binary numeric levels and a constant 0/1 column as binary', async () => {
    const p = await profileOf([0, 1, 1, 0, 1]);
    expect(p.inferredType).toBe('binary');
    // Mean of a 0/1 column is the share of ones: 3 / 5.
    expect(p.numeric?.mean).toBe(0.6);
    expect(p.levels).toEqual([{ value: '0', count: 2 }, { value: '1', count: 3 }]);
    expect((await profileOf([1, 1, 1])).inferredType).toBe('binary');
  });

  it('says when every value is missing', async () => {
    const p = await profileOf(['NA', 'NA']);
    expect(p.missingCount).toBe(2);
    expect(p.numeric).toBeNull();
    expect(p.notes).toContain('Every value is missing.');
  });

  it('shows the 200 most frequent levels of a column with more', async () => {
    const values = Array.from({ length: 700 }, (_, i) => `code${i % 300}`);
    const p = await profileOf(values);
    expect(p.distinctCount).toBe(300);
    expect(p.levelsTruncated).toBe(true);
    expect(p.levels).toHaveLength(200);
    // code0..code99 occur three times (700 = 2 * 300 + 100), the rest twice.
    expect(p.levels?.[0].count).toBe(3);
    expect(p.levels?.[99].count).toBe(3);
    expect(p.levels?.[100].count).toBe(2);
  });
});
