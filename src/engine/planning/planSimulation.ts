import { normalQuantile } from '../distributions/normal.js';
import { Xoshiro128StarStar } from '../random/xoshiro128StarStar.js';
import { planCells, planFractions, type PlanInput } from './interactionPlan.js';

/**
 * The plan checked by simulation: `replicates` data sets of `rows` rows drawn with the
 * engine's seeded generator (each row's arm and modifier level at random with the plan's
 * allocation and prevalence, then its outcome from the cell's risk, or normal with the
 * cell's mean and the plan's SD), each analysed with the saturated arm × modifier model
 * and the interaction's two-sided Wald test at the plan's alpha. For a binary outcome the
 * saturated model's estimates are the cells' proportions, and its model-based variances
 * those of the closed form with observed proportions; for a continuous outcome the cells'
 * means with the pooled residual variance. The share of replicates that reject is the
 * simulated power; its Monte Carlo standard error is √(p(1 − p)/replicates).
 * A replicate in which a needed cell has no rows (or, on a ratio scale, no events) cannot
 * be tested: it counts as not rejecting, and is counted.
 */
export interface SimulatedPower {
  readonly rows: number;
  readonly replicates: number;
  readonly seed: number;
  readonly power: number;
  readonly monteCarloError: number;
  readonly untestable: number;
}

export function simulatePlanPower(input: PlanInput, rows: number, replicates: number, seed: number): SimulatedPower {
  const cells = planCells(input);
  planFractions(input.allocation, input.modifierPrevalence); // refuses an allocation or prevalence outside (0, 1)
  const z = normalQuantile(1 - input.alpha / 2);
  const generator = Xoshiro128StarStar.forStream(seed, 0);
  const count = new Float64Array(4);
  const sum = new Float64Array(4);
  const squares = new Float64Array(4);
  let rejected = 0;
  let untestable = 0;
  for (let replicate = 0; replicate < replicates; replicate++) {
    count.fill(0);
    sum.fill(0);
    squares.fill(0);
    for (let row = 0; row < rows; row++) {
      const arm = generator.nextDouble() < input.allocation ? 1 : 0;
      const level = generator.nextDouble() < input.modifierPrevalence ? 1 : 0;
      const cell = arm * 2 + level;
      count[cell] += 1;
      if (input.outcome.type === 'binary') {
        if (generator.nextDouble() < cells[cell]) sum[cell] += 1;
      } else {
        const value = cells[cell] + input.outcome.sd * generator.nextNormal();
        sum[cell] += value;
        squares[cell] += value * value;
      }
    }
    const statistic = waldStatistic(input, count, sum, squares);
    if (statistic === null) untestable += 1;
    else if (Math.abs(statistic) > z) rejected += 1;
  }
  const power = rejected / replicates;
  return { rows, replicates, seed, power, monteCarloError: Math.sqrt((power * (1 - power)) / replicates), untestable };
}

/** The interaction's Wald statistic from one replicate's cells, or null when it cannot be formed. */
function waldStatistic(input: PlanInput, count: Float64Array, sum: Float64Array, squares: Float64Array): number | null {
  if (count.some((n) => n === 0)) return null;
  const { measure } = input.interaction;
  if (measure === 'mean-difference-difference') {
    const means = [0, 1, 2, 3].map((c) => sum[c] / count[c]);
    let residual = 0;
    for (let c = 0; c < 4; c++) residual += squares[c] - count[c] * means[c] * means[c];
    const total = count.reduce((a, b) => a + b, 0);
    if (total <= 4) return null;
    const pooled = residual / (total - 4);
    const estimate = means[3] - means[2] - means[1] + means[0];
    const variance = pooled * [0, 1, 2, 3].reduce((a, c) => a + 1 / count[c], 0);
    return estimate / Math.sqrt(variance);
  }
  const p = [0, 1, 2, 3].map((c) => sum[c] / count[c]);
  const binomial = (c: number) => (p[c] * (1 - p[c])) / count[c];
  if (measure === 'ratio-of-ratios') {
    if (p.some((risk) => risk === 0)) return null;
    const estimate = Math.log(p[3]) - Math.log(p[2]) - Math.log(p[1]) + Math.log(p[0]);
    const variance = [0, 1, 2, 3].reduce((a, c) => a + (1 - p[c]) / (count[c] * p[c]), 0);
    return variance > 0 ? estimate / Math.sqrt(variance) : null;
  }
  if (measure === 'risk-difference-difference') {
    const estimate = p[3] - p[2] - p[1] + p[0];
    const variance = [0, 1, 2, 3].reduce((a, c) => a + binomial(c), 0);
    return variance > 0 ? estimate / Math.sqrt(variance) : null;
  }
  // RERI, tested against 0.
  if (p[0] === 0) return null;
  const estimate = (p[3] - p[2] - p[1] + p[0]) / p[0];
  const gradient = [(p[2] + p[1] - p[3]) / (p[0] * p[0]), -1 / p[0], -1 / p[0], 1 / p[0]];
  const variance = [0, 1, 2, 3].reduce((a, c) => a + gradient[c] ** 2 * binomial(c), 0);
  return variance > 0 ? estimate / Math.sqrt(variance) : null;
}
