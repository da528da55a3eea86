import type { Result } from '@/engine/boundary/schemas';
import { perResult } from '../finishedResults';

/**
 * The part of a result the plots read (plotFigures.ts), so that the results page does
 * not serialise the whole result (covariance matrix, bootstrap, planning, tables) into
 * the island's props. The figures take this type, so reading a field left out here fails
 * to compile: add the field here first.
 */
export type PlotInput = Pick<
  Result,
  'effectMeasure' | 'alpha' | 'ciLevel' | 'exposure' | 'modifier' | 'outcome' | 'joint' | 'strata' | 'slopes' | 'band' | 'johnsonNeyman' | 'standardized' | 'spread' | 'predictions'
> & {
  model: Pick<Result['model'], 'link' | 'coefficients'>;
  stratifiedTables: Pick<NonNullable<Result['stratifiedTables']>, 'mantelHaenszel'> | null;
};

/** plotInput, computed once per finished result (finishedResults.ts). */
export const plotInputOf = perResult((result: Result) => plotInput(result), () => '');

export function plotInput(result: Result): PlotInput {
  return {
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
    standardized: result.standardized,
    spread: result.spread,
    predictions: result.predictions ?? null,
    model: { link: result.model.link, coefficients: result.model.coefficients },
    stratifiedTables: result.stratifiedTables ? { mantelHaenszel: result.stratifiedTables.mantelHaenszel } : null,
  };
}
