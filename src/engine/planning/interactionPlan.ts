import { normalCdf, normalQuantile } from '../distributions/normal.js';

/**
 * A plan made before the data: the sample an initiative needs to detect an interaction
 * between a two-arm intervention and a two-level modifier, by the closed-form normal
 * approximation for the saturated 2×2 design (four cells: arm × modifier level).
 *
 * Each cell c holds the fraction f_c of the rows (the allocation to the intervention times
 * the modifier's prevalence) and, for a binary outcome, the risk p_c. An estimate δ̂ built
 * from the four cells has variance V/n, with V the per-row ("unit") variance below, and
 * the two-sided Wald test at level α has power Φ(|δ|√(n/V) − z) + Φ(−|δ|√(n/V) − z),
 * z = Φ⁻¹(1 − α/2). The rows needed for power 1 − β are n = (z + z_{1−β})² V / δ²
 * (the usual closed form, which drops the far tail). Unit variances (delta method, from
 * memory of the standard results for cell proportions and means):
 * - ratio of risk ratios, on the log scale: V = Σ (1 − p_c)/(f_c p_c);
 * - difference in risk differences: V = Σ p_c (1 − p_c)/f_c;
 * - RERI = (p11 − p10 − p01 + p00)/p00: V = Σ g_c² p_c (1 − p_c)/f_c with gradient
 *   g = (∂/∂p00, ∂/∂p01, ∂/∂p10, ∂/∂p11) = ((p10 + p01 − p11)/p00², −1/p00, −1/p00, 1/p00);
 * - difference in mean differences (continuous outcome, common SD σ): V = σ² Σ 1/f_c.
 *
 * An interaction is estimated from four cells where a main effect is estimated from two
 * arms, so an interaction as large as the main effect needs about four times the sample
 * with equal arms and an even modifier (Brookes, Whitely, Egger, Smith, Mulheran and
 * Peters, J Clin Epidemiol 2004;57:229-236); `relativeToMainEffect` states that ratio for
 * the plan at hand.
 */

export type PlanInteractionMeasure = 'ratio-of-ratios' | 'reri' | 'risk-difference-difference' | 'mean-difference-difference';

export interface PlanInput {
  readonly outcome:
    | {
        readonly type: 'binary';
        /** Risk in the comparison arm where the modifier is absent. */
        readonly baselineRisk: number;
        /** Comparison-arm risk where the modifier is present, relative to where it is absent. */
        readonly modifierRiskRatio: number;
      }
    | { readonly type: 'continuous'; readonly mean: number; readonly sd: number };
  /**
   * The intervention's effect where the modifier is absent: a risk ratio or a risk
   * difference for a binary outcome, a mean difference for a continuous one.
   */
  readonly mainEffect: { readonly measure: 'risk-ratio' | 'risk-difference' | 'mean-difference'; readonly value: number };
  /** The interaction worth detecting, on its own scale. */
  readonly interaction: { readonly measure: PlanInteractionMeasure; readonly value: number };
  /** Fraction of rows in the intervention arm, in (0, 1). */
  readonly allocation: number;
  /** Fraction of rows with the modifier present, in (0, 1). */
  readonly modifierPrevalence: number;
  readonly alpha: number;
}

/** Cells in the order (arm, modifier): 00, 01, 10, 11. */
export type Cells = readonly [number, number, number, number];

export interface PlanFigures {
  /** Outcome risk (binary) or mean (continuous) in each cell, order 00, 01, 10, 11. */
  readonly cellOutcomes: Cells;
  /** Fraction of rows in each cell. */
  readonly cellFractions: Cells;
  /** The interaction on the scale its test uses (log for the ratio of ratios). */
  readonly testedSize: number;
  /** Per-row variance V of the interaction's estimate (its variance is V/n). */
  readonly unitVariance: number;
  /** Rows needed for 80 % and 90 % power (closed form). */
  readonly rowsFor80: number;
  readonly rowsFor90: number;
  /**
   * The interaction's rows needed over those a main effect of the same tested size
   * needs (the intervention's effect over the whole sample, same allocation).
   */
  readonly relativeToMainEffect: number;
}

export class PlanError extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'PlanError';
  }
}

const inUnit = (value: number) => Number.isFinite(value) && value > 0 && value < 1;

/** The four cells' outcomes implied by the plan's baseline, main effect and interaction. */
export function planCells(input: PlanInput): Cells {
  const { outcome, mainEffect, interaction } = input;
  if (outcome.type === 'continuous') {
    if (mainEffect.measure !== 'mean-difference' || interaction.measure !== 'mean-difference-difference') {
      throw new PlanError('A continuous outcome takes a mean difference and a difference in mean differences.');
    }
    const m00 = outcome.mean;
    const m10 = m00 + mainEffect.value;
    return [m00, m00, m10, m10 + interaction.value];
  }
  if (mainEffect.measure === 'mean-difference' || interaction.measure === 'mean-difference-difference') {
    throw new PlanError('A binary outcome takes a risk ratio or a risk difference, and a ratio of ratios, RERI or difference in risk differences.');
  }
  const p00 = outcome.baselineRisk;
  const p01 = p00 * outcome.modifierRiskRatio;
  const p10 = mainEffect.measure === 'risk-ratio' ? p00 * mainEffect.value : p00 + mainEffect.value;
  let p11: number;
  if (interaction.measure === 'ratio-of-ratios') p11 = p01 * (p10 / p00) * interaction.value;
  else if (interaction.measure === 'reri') p11 = p10 + p01 - p00 + interaction.value * p00;
  else p11 = p10 + p01 - p00 + interaction.value;
  const cells: Cells = [p00, p01, p10, p11];
  const names = ['the comparison arm without the modifier', 'the comparison arm with the modifier', 'the intervention arm without the modifier', 'the intervention arm with the modifier'];
  cells.forEach((risk, index) => {
    if (!inUnit(risk)) throw new PlanError(`These figures give a risk of ${Number(risk.toPrecision(4))} in ${names[index]}; every risk must lie between 0 and 1.`);
  });
  return cells;
}

/** Fractions of rows in the cells 00, 01, 10, 11. */
export function planFractions(allocation: number, prevalence: number): Cells {
  if (!inUnit(allocation)) throw new PlanError('The allocation to the intervention must lie between 0 and 1.');
  if (!inUnit(prevalence)) throw new PlanError('The modifier\'s prevalence must lie between 0 and 1.');
  return [(1 - allocation) * (1 - prevalence), (1 - allocation) * prevalence, allocation * (1 - prevalence), allocation * prevalence];
}

/** The tested size δ and the unit variance V of its estimate (see the module comment). */
export function interactionUnitVariance(input: PlanInput, cells: Cells, fractions: Cells): { testedSize: number; unitVariance: number } {
  const { measure, value } = input.interaction;
  const sum = (term: (index: number) => number) => [0, 1, 2, 3].reduce((total, index) => total + term(index), 0);
  const binomial = (index: number) => cells[index] * (1 - cells[index]) / fractions[index];
  switch (measure) {
    case 'ratio-of-ratios':
      if (!(value > 0)) throw new PlanError('A ratio of ratios must be positive.');
      return { testedSize: Math.log(value), unitVariance: sum((c) => (1 - cells[c]) / (fractions[c] * cells[c])) };
    case 'risk-difference-difference':
      return { testedSize: value, unitVariance: sum(binomial) };
    case 'reri': {
      const [p00, p01, p10, p11] = cells;
      const gradient = [(p10 + p01 - p11) / (p00 * p00), -1 / p00, -1 / p00, 1 / p00];
      return { testedSize: value, unitVariance: sum((c) => gradient[c] ** 2 * binomial(c)) };
    }
    case 'mean-difference-difference': {
      const sd = input.outcome.type === 'continuous' ? input.outcome.sd : NaN;
      if (!(sd > 0)) throw new PlanError('The outcome\'s standard deviation must be positive.');
      return { testedSize: value, unitVariance: sd * sd * sum((c) => 1 / fractions[c]) };
    }
  }
}

/**
 * Unit variance of the intervention's main effect on the same scale, over the whole
 * sample: the arms' pooled risks (or means) and the allocation.
 */
function mainEffectUnitVariance(input: PlanInput, cells: Cells): number {
  const q = input.modifierPrevalence;
  const pi = input.allocation;
  const control = (1 - q) * cells[0] + q * cells[1];
  const treated = (1 - q) * cells[2] + q * cells[3];
  switch (input.interaction.measure) {
    case 'ratio-of-ratios':
      return (1 - treated) / (pi * treated) + (1 - control) / ((1 - pi) * control);
    case 'risk-difference-difference':
      return treated * (1 - treated) / pi + control * (1 - control) / (1 - pi);
    case 'reri':
      // A risk ratio minus 1 on the natural scale: (p1/p0), delta method.
      return (treated / control) ** 2 * ((1 - treated) / (pi * treated) + (1 - control) / ((1 - pi) * control));
    case 'mean-difference-difference': {
      const sd = input.outcome.type === 'continuous' ? input.outcome.sd : NaN;
      return sd * sd * (1 / pi + 1 / (1 - pi));
    }
  }
}

const zFor = (probability: number) => normalQuantile(probability);

/** Rows needed for the target power: n = (z_{1−α/2} + z_{power})² V / δ², rounded up. */
export function rowsForPower(testedSize: number, unitVariance: number, alpha: number, power: number): number {
  if (testedSize === 0) throw new PlanError('An interaction of size zero cannot be detected; state the size worth detecting.');
  return Math.ceil(((zFor(1 - alpha / 2) + zFor(power)) ** 2 * unitVariance) / (testedSize * testedSize));
}

/** Power of the two-sided Wald test with n rows: Φ(|δ|√(n/V) − z) + Φ(−|δ|√(n/V) − z). */
export function powerAtRows(testedSize: number, unitVariance: number, alpha: number, rows: number): number {
  const z = zFor(1 - alpha / 2);
  const ratio = Math.abs(testedSize) * Math.sqrt(rows / unitVariance);
  return normalCdf(ratio - z) + normalCdf(-ratio - z);
}

/** The plan's closed-form figures. Throws PlanError on figures that cannot hold. */
export function planFigures(input: PlanInput): PlanFigures {
  if (!(input.alpha > 0 && input.alpha < 0.5)) throw new PlanError('Alpha must lie between 0 and 0.5.');
  const fractions = planFractions(input.allocation, input.modifierPrevalence);
  const cells = planCells(input);
  const { testedSize, unitVariance } = interactionUnitVariance(input, cells, fractions);
  return {
    cellOutcomes: cells,
    cellFractions: fractions,
    testedSize,
    unitVariance,
    rowsFor80: rowsForPower(testedSize, unitVariance, input.alpha, 0.8),
    rowsFor90: rowsForPower(testedSize, unitVariance, input.alpha, 0.9),
    relativeToMainEffect: unitVariance / mainEffectUnitVariance(input, cells),
  };
}
