/**
 * Seeded synthetic cohorts whose true effects the generator sets (invented data, no real
 * patients). Intervention a ~ Bernoulli(½), modifier m uniform over its levels ("m0" the
 * reference), covariate x ~ N(0, 1); the outcome follows the chosen link with
 * g(μ) = b0 + b1·a + b2[m] + b3[m]·a + bx·x.
 */
import { Xoshiro128StarStar } from '@/engine/random/xoshiro128StarStar.js';
import type { EngineData } from '@/engine/types.js';

export interface BinaryTruth {
  readonly n: number;
  readonly seed: number;
  readonly stream?: number;
  readonly link: 'logit' | 'log';
  readonly intercept: number;
  readonly exposure: number;
  /** Main effects of m1, m2, ... (m0 is the reference). */
  readonly modifier: readonly number[];
  /** Products a × m1, a × m2, ... */
  readonly product: readonly number[];
  readonly covariate: number;
}

export function binaryCohort(truth: BinaryTruth): EngineData {
  const generator = Xoshiro128StarStar.forStream(truth.seed, truth.stream ?? 0);
  const levels = ['m0', ...truth.modifier.map((_, k) => `m${k + 1}`)];
  const y = new Float64Array(truth.n);
  const a = new Float64Array(truth.n);
  const m = new Int32Array(truth.n);
  const x = new Float64Array(truth.n);
  for (let i = 0; i < truth.n; i++) {
    a[i] = generator.nextDouble() < 0.5 ? 1 : 0;
    m[i] = generator.nextBelow(levels.length);
    x[i] = generator.nextNormal();
    const level = m[i];
    const eta =
      truth.intercept + truth.exposure * a[i] + (level > 0 ? truth.modifier[level - 1] + a[i] * truth.product[level - 1] : 0) + truth.covariate * x[i];
    const risk = truth.link === 'logit' ? 1 / (1 + Math.exp(-eta)) : Math.min(1, Math.exp(eta));
    y[i] = generator.nextDouble() < risk ? 1 : 0;
  }
  return {
    rowCount: truth.n,
    columns: {
      y: { kind: 'numeric', values: y },
      a: { kind: 'numeric', values: a },
      m: { kind: 'categorical', codes: m, levels },
      x: { kind: 'numeric', values: x },
    },
  };
}

/** Linear outcome y = b0 + b1·a + b2·w + b3·a·w + bx·x + N(0, σ²) with a continuous modifier w ~ N(2, 1). */
export function continuousCohort(options: { n: number; seed: number; b: readonly [number, number, number, number]; covariate: number; sigma: number }): EngineData {
  const generator = Xoshiro128StarStar.forStream(options.seed, 0);
  const [b0, b1, b2, b3] = options.b;
  const y = new Float64Array(options.n);
  const a = new Float64Array(options.n);
  const w = new Float64Array(options.n);
  const x = new Float64Array(options.n);
  for (let i = 0; i < options.n; i++) {
    a[i] = generator.nextDouble() < 0.5 ? 1 : 0;
    w[i] = 2 + generator.nextNormal();
    x[i] = generator.nextNormal();
    y[i] = b0 + b1 * a[i] + b2 * w[i] + b3 * a[i] * w[i] + options.covariate * x[i] + options.sigma * generator.nextNormal();
  }
  return {
    rowCount: options.n,
    columns: { y: { kind: 'numeric', values: y }, a: { kind: 'numeric', values: a }, w: { kind: 'numeric', values: w }, x: { kind: 'numeric', values: x } },
  };
}

/** The same data with rows in a seeded random order (Fisher-Yates). */
export function shuffleRows(data: EngineData, seed: number): EngineData {
  const generator = Xoshiro128StarStar.forStream(seed, 99);
  const order = Int32Array.from({ length: data.rowCount }, (_, i) => i);
  for (let i = data.rowCount - 1; i > 0; i--) {
    const j = generator.nextBelow(i + 1);
    [order[i], order[j]] = [order[j], order[i]];
  }
  const columns: EngineData['columns'] = Object.fromEntries(
    Object.entries(data.columns).map(([name, column]) =>
      column.kind === 'numeric'
        ? [name, { kind: 'numeric', values: Float64Array.from(order, (i) => column.values[i]) }]
        : [name, { kind: 'categorical', codes: Int32Array.from(order, (i) => column.codes[i]), levels: column.levels }],
    ),
  );
  return { rowCount: data.rowCount, columns };
}
