import { describe, expect, it } from 'vitest';
import { PlanError, planFigures, powerAtRows, type PlanInput } from './interactionPlan';
import { simulatePlanPower } from './planSimulation';

// A binary plan: comparison-arm risk 0.2 without the modifier and 0.3 with it, risk ratio
// 0.7 for the intervention without the modifier, ratio of ratios 0.6; half the rows in each
// arm, 30 % with the modifier. Cells 00, 01, 10, 11: 0.2, 0.3, 0.14, 0.126.
const binary = (interaction: PlanInput['interaction']): PlanInput => ({
  outcome: { type: 'binary', baselineRisk: 0.2, modifierRiskRatio: 1.5 },
  mainEffect: { measure: 'risk-ratio', value: 0.7 },
  interaction,
  allocation: 0.5,
  modifierPrevalence: 0.3,
  alpha: 0.05,
});

describe('the closed form', () => {
  // Source: the formulas written by hand in R 4.2.2 (r-base-core):
  //   p <- c(0.2, 0.3, 0.14, 0.3*0.7*0.6); pi <- 0.5; q <- 0.3
  //   f <- c((1-pi)*(1-q), (1-pi)*q, pi*(1-q), pi*q)
  //   V_ror <- sum((1-p)/(f*p)); V_drd <- sum(p*(1-p)/f)
  //   g <- c((p[3]+p[2]-p[4])/p[1]^2, -1/p[1], -1/p[1], 1/p[1]); V_reri <- sum(g^2*p*(1-p)/f)
  //   ceiling((qnorm(0.975)+qnorm(0.8))^2*V_ror/log(0.6)^2)   # 2731
  //   ceiling((qnorm(0.975)+qnorm(0.9))^2*V_ror/log(0.6)^2)   # 3656
  //   pnorm(abs(log(0.6))*sqrt(2000/V_ror)-qnorm(0.975)) + pnorm(-abs(log(0.6))*sqrt(2000/V_ror)-qnorm(0.975))
  it('gives the unit variance, rows and power of a ratio of ratios as written in R', () => {
    const figures = planFigures(binary({ measure: 'ratio-of-ratios', value: 0.6 }));
    expect(figures.cellOutcomes[3]).toBeCloseTo(0.126, 14);
    expect(figures.unitVariance).toBeCloseTo(90.7785336356765, 8);
    expect(figures.testedSize).toBeCloseTo(Math.log(0.6), 14);
    expect(figures.rowsFor80).toBe(2731);
    expect(figures.rowsFor90).toBe(3656);
    expect(powerAtRows(figures.testedSize, figures.unitVariance, 0.05, 2000)).toBeCloseTo(0.669220238960259, 10);
  });

  it('gives the unit variances of a difference in risk differences and of RERI as written in R', () => {
    // The same cells expressed on the other scales: RERI −0.57 and a difference of −0.114.
    expect(planFigures(binary({ measure: 'risk-difference-difference', value: -0.114 })).unitVariance).toBeCloseTo(2.93530285714286, 10);
    const reri = planFigures(binary({ measure: 'reri', value: -0.57 }));
    expect(reri.cellOutcomes[3]).toBeCloseTo(0.126, 12);
    expect(reri.unitVariance).toBeCloseTo(90.1242857142857, 8);
  });

  // Source: Brookes et al., J Clin Epidemiol 2004;57:229-236: with equal arms and an even
  // modifier, an interaction as large as the main effect needs four times the sample. The
  // main effect's rows, 4(z + z_β)²σ²/δ², are the textbook two-sample formula (from memory).
  it('says an interaction as large as the main effect needs four times the rows', () => {
    const figures = planFigures({
      outcome: { type: 'continuous', mean: 10, sd: 2 },
      mainEffect: { measure: 'mean-difference', value: 1 },
      interaction: { measure: 'mean-difference-difference', value: 1 },
      allocation: 0.5,
      modifierPrevalence: 0.5,
      alpha: 0.05,
    });
    expect(figures.relativeToMainEffect).toBeCloseTo(4, 12);
    const z = 1.959963984540054 + 0.8416212335729143; // qnorm(0.975) + qnorm(0.8), R 4.2.2
    // σ² Σ 1/f = 4 · 16; R: ceiling((qnorm(0.975) + qnorm(0.8))^2 * 64) is 503, four times the main effect's 125.6.
    expect(figures.rowsFor80).toBe(Math.ceil(z * z * 64));
    expect(figures.rowsFor80).toBe(503);
  });

  it('refuses figures that cannot hold, in words', () => {
    expect(() => planFigures(binary({ measure: 'ratio-of-ratios', value: 20 }))).toThrow(PlanError);
    expect(() => planFigures(binary({ measure: 'ratio-of-ratios', value: 20 }))).toThrow(/risk of 4\.2 in the intervention arm with the modifier/);
    expect(() => planFigures({ ...binary({ measure: 'ratio-of-ratios', value: 0.6 }), allocation: 1 })).toThrow(/allocation/);
    expect(() => planFigures(binary({ measure: 'mean-difference-difference', value: 1 }))).toThrow(/binary outcome/);
    expect(() => planFigures(binary({ measure: 'risk-difference-difference', value: 0 }))).toThrow(/size zero/);
  });
});

describe('the closed form against the engine\'s seeded simulation', () => {
  // The truth is set by the generator (the plan's cells); the simulated power must agree
  // with the closed form's power at the same rows within four Monte Carlo standard errors
  // (plus 0.01 for the normal approximation itself).
  const cases: [string, PlanInput, number][] = [
    ['ratio of ratios', binary({ measure: 'ratio-of-ratios', value: 0.6 }), 2000],
    ['difference in risk differences', binary({ measure: 'risk-difference-difference', value: -0.114 }), 1500],
    ['RERI', binary({ measure: 'reri', value: -0.57 }), 1500],
    ['difference in mean differences', {
      outcome: { type: 'continuous', mean: 10, sd: 2 },
      mainEffect: { measure: 'mean-difference', value: 1 },
      interaction: { measure: 'mean-difference-difference', value: 1 },
      allocation: 0.4, modifierPrevalence: 0.35, alpha: 0.05,
    }, 300],
  ];
  it.each(cases)('%s', (_name, plan, rows) => {
    const figures = planFigures(plan);
    const closed = powerAtRows(figures.testedSize, figures.unitVariance, plan.alpha, rows);
    const simulated = simulatePlanPower(plan, rows, 1500, 20261202);
    expect(simulated.untestable).toBe(0);
    expect(Math.abs(simulated.power - closed)).toBeLessThan(4 * simulated.monteCarloError + 0.01);
    // Repeatable: the same seed gives the same figure.
    expect(simulatePlanPower(plan, rows, 50, 7).power).toBe(simulatePlanPower(plan, rows, 50, 7).power);
  });

  it('can fail: a plan with no interaction rejects about alpha of the time, far from the closed form at a real size', () => {
    const none = simulatePlanPower(binary({ measure: 'ratio-of-ratios', value: 1 }), 2000, 1500, 11);
    expect(Math.abs(none.power - 0.05)).toBeLessThan(4 * none.monteCarloError + 0.01);
    const real = planFigures(binary({ measure: 'ratio-of-ratios', value: 0.6 }));
    expect(Math.abs(none.power - powerAtRows(real.testedSize, real.unitVariance, 0.05, 2000))).toBeGreaterThan(0.3);
  });
});
