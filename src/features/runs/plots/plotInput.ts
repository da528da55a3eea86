import type { Result } from '../../../engine/boundary/schemas';

/**
 * The part of a result the plots read (plotFigures.ts), so that the results page does
 * not serialise the whole result (covariance matrix, bootstrap, planning, tables) into
 * the island's props. Keep this in step with what plotFigures.ts reads.
 */
export function plotInput(result: Result): Result {
  const picked = {
    effectMeasure: result.effectMeasure,
    alpha: result.alpha,
    ciLevel: result.ciLevel,
    exposure: result.exposure,
    modifier: result.modifier,
    outcome: result.outcome,
    joint: result.joint,
    strata: result.strata,
    slopes: result.slopes,
    band: result.band,
    johnsonNeyman: result.johnsonNeyman,
    model: { link: result.model.link, coefficients: result.model.coefficients },
    stratifiedTables: result.stratifiedTables ? { mantelHaenszel: result.stratifiedTables.mantelHaenszel } : result.stratifiedTables,
  };
  return picked as unknown as Result;
}
