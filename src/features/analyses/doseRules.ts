/**
 * Rules of a continuous intervention (a dose) and of an ordered modifier that the form and
 * the server share. A dose has no reference level and no joint cells: the additive
 * measures (RERI, AP, S, the joint table) need two intervention levels and do not apply
 * (shared/design/methods.md, "Rates, doses, absolute effects"), so what serves only them
 * (the percentile bootstrap, MOVER, preventive recoding) is refused with the reason.
 */
import type { Spec } from '@/engine/boundary/schemas';

export interface RuleProblem {
  path: string;
  message: string;
}

const WHY = 'the additive measures (RERI, AP, S) it serves do not apply to a continuous intervention';

/** Why a method or option is unavailable with a continuous intervention, or null. */
export function doseRefusal(option: 'bootstrap' | 'mover' | 'preventive'): string {
  if (option === 'bootstrap') return `Use delta intervals: the percentile bootstrap is for the additive measures, and ${WHY}.`;
  if (option === 'mover') return `Use delta intervals: MOVER is for RERI, and ${WHY}.`;
  return `Turn off preventive recoding: ${WHY}.`;
}

/** Problems of a specification with a continuous intervention, by server path ("spec.ci.method"). */
export function doseProblems(spec: Pick<Spec, 'exposure' | 'ci' | 'preventive'>): RuleProblem[] {
  if (spec.exposure.type !== 'continuous') return [];
  const problems: RuleProblem[] = [];
  if (spec.ci.method === 'bootstrap' || spec.ci.method === 'mover') problems.push({ path: 'spec.ci.method', message: doseRefusal(spec.ci.method) });
  if (spec.preventive === true) problems.push({ path: 'spec.preventive', message: doseRefusal('preventive') });
  return problems;
}

/**
 * An ordered modifier's scores in the specification must be those of the version's
 * dictionary when it declares the column ordered (so a run states the scores it used and
 * they are the ones confirmed with the data), and give every level a score.
 */
export function orderedProblems(spec: Pick<Spec, 'modifier'>, dictionaryScores: Readonly<Record<string, number>> | null, levels: readonly string[] | null): RuleProblem[] {
  const scores = spec.modifier.ordered?.scores;
  if (scores === undefined) return [];
  const path = 'spec.modifier.ordered';
  const column = spec.modifier.column;
  if (spec.modifier.type !== 'categorical') return [{ path, message: `Only a categorical modifier can be ordered; “${column}” is used as continuous.` }];
  const missing = (levels ?? []).filter((level) => !Object.prototype.hasOwnProperty.call(scores, level));
  if (missing.length > 0) return [{ path, message: `Give a score to every level of “${column}”: ${missing.map((level) => `“${level}”`).join(', ')} has none.` }];
  if (dictionaryScores) {
    const differs = Object.entries(scores).some(([level, score]) => dictionaryScores[level] !== score);
    if (differs) return [{ path, message: `The scores of “${column}” must be those confirmed in the extract's dictionary.` }];
  }
  return [];
}
