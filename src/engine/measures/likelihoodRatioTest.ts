import { chiSquareUpperTail } from '../distributions/chiSquare.js';
import type { OmnibusTest } from '../types.js';

/**
 * Likelihood-ratio test of nested models: G = 2(ℓ_full − ℓ_reduced) ~ χ²(k), k the number
 * of dropped terms (Wilks, Ann Math Statist 1938;9:60-62). Matches R's
 * anova(reduced, full, test = "LRT") for GLMs with dispersion 1. Tiny negative G from
 * rounding is reported as 0.
 */
export function likelihoodRatioTest(logLikFull: number, logLikReduced: number, df: number): OmnibusTest {
  const statistic = Math.max(0, 2 * (logLikFull - logLikReduced));
  return { test: 'likelihood-ratio', statistic, df, df2: null, p: chiSquareUpperTail(statistic, df) };
}
