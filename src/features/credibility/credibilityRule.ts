/**
 * How credible a run's subgroup claim is (issue 16 §1): the pure part. The items follow
 * the published criteria for judging effect-modification claims (Schandelmaier et al.,
 * CMAJ 2020;192:E901-E906; Sun et al., BMJ 2010;340:c117), in Crossgrain's own words;
 * the overall rating is CROSSGRAIN'S OWN RULE, informed by those criteria, not the
 * instrument's scoring.
 *
 * The rule (also in DEVELOPERS.md, "Credibility of a subgroup claim"):
 *   Start at HIGH. Step down one level for each of:
 *     1. the modifier was not prespecified before the data arrived;
 *     2. no direction was predicted, or the observed direction disagrees with the prediction
 *        (one step either way; an observed direction that cannot be read costs nothing);
 *     3. the interaction test does not hold after the adjustment for the number of
 *        modifiers examined (Bonferroni: p × k < alpha); TWO steps when it does not reach
 *        alpha even before adjustment;
 *     4. a modifier recorded as a number (or cut into bands) was analysed in categories;
 *     5. the interaction runs the other way for a related outcome the initiative analysed;
 *     6. the clinician rates the clinical or biological rationale weak or absent;
 *     7. the clinician rates prior evidence as contradicting the finding.
 *   The floor is VERY LOW. The within-study comparison always holds for a Crossgrain run and
 *   never steps down; the number of modifiers examined acts through item 3. An item that
 *   does not apply (no related outcomes analysed, a modifier that is not a number) or is
 *   not rated yet costs nothing; while the clinician's two items are unrated, the rating is
 *   marked provisional.
 */
import type { Result } from '@/engine/boundary/schemas';

export const LEVELS = ['high', 'moderate', 'low', 'very-low'] as const;
export type CredibilityLevel = (typeof LEVELS)[number];
export const LEVEL_LABEL: Record<CredibilityLevel, string> = {
  high: 'High credibility', moderate: 'Moderate credibility', low: 'Low credibility', 'very-low': 'Very low credibility',
};

export const RATIONALE_RATINGS = ['strong', 'plausible', 'weak', 'none'] as const;
export type RationaleRating = (typeof RATIONALE_RATINGS)[number];
export const RATIONALE_LABEL: Record<RationaleRating, string> = {
  strong: 'A strong, specific mechanism', plausible: 'A plausible mechanism', weak: 'Only a weak or indirect mechanism', none: 'No mechanism we can name',
};
export const PRIOR_RATINGS = ['supports', 'none-known', 'mixed', 'contradicts'] as const;
export type PriorRating = (typeof PRIOR_RATINGS)[number];
export const PRIOR_LABEL: Record<PriorRating, string> = {
  supports: 'Earlier studies found the same', 'none-known': 'No earlier evidence we know of', mixed: 'Earlier evidence is mixed', contradicts: 'Earlier evidence points the other way',
};

/** What the rule reads: the computed items and the clinician's two ratings. */
export interface RuleInput {
  prespecified: boolean;
  directionPredicted: boolean;
  /** Whether the observed direction agrees with the prediction; null when none was predicted or it cannot be read. */
  directionAgrees: boolean | null;
  alpha: number;
  /** The omnibus interaction test's p; null when the engine could not compute it. */
  p: number | null;
  /** p × the number of modifiers examined, capped at 1. */
  pAdjusted: number | null;
  /** A modifier recorded as a number, or in bands, analysed in categories. */
  numberInCategories: boolean;
  /** null when no related outcome was analysed. */
  relatedConsistent: boolean | null;
  rationale: RationaleRating | null;
  priorEvidence: PriorRating | null;
}

export interface Overall {
  level: CredibilityLevel;
  label: string;
  /** Each step down, in words; empty at high. */
  reasons: string[];
  /** True while the clinician has not rated both of their items. */
  provisional: boolean;
}

/** The overall rating by Crossgrain's rule (see the file's header). */
export function overallRating(input: RuleInput): Overall {
  const reasons: string[] = [];
  let steps = 0;
  const down = (count: number, reason: string) => {
    steps += count;
    reasons.push(reason);
  };
  if (!input.prespecified) down(1, 'The modifier was not named in advance of the data.');
  if (!input.directionPredicted) down(1, 'No direction was predicted before the analysis.');
  else if (input.directionAgrees === false) down(1, 'The effect differs in the opposite direction to the one predicted.');
  if (input.p === null || input.p >= input.alpha) down(2, 'The interaction test does not reach the significance level, so chance could well explain the difference.');
  else if (input.pAdjusted === null || input.pAdjusted >= input.alpha) down(1, 'The interaction test does not hold once adjusted for the number of modifiers examined.');
  if (input.numberInCategories) down(1, 'A modifier recorded as a number was analysed in categories, so the cut-points may drive the finding.');
  if (input.relatedConsistent === false) down(1, 'For a related outcome the initiative analysed, the effect differs the other way.');
  if (input.rationale === 'weak' || input.rationale === 'none') down(1, 'The clinician finds little clinical or biological reason for the difference.');
  if (input.priorEvidence === 'contradicts') down(1, 'Earlier evidence points the other way.');
  const level = LEVELS[Math.min(steps, LEVELS.length - 1)];
  return { level, label: LEVEL_LABEL[level], reasons, provisional: input.rationale === null || input.priorEvidence === null };
}

/** Bonferroni for one test among k: p × k, capped at 1 (the first and strictest step of Holm's procedure). */
export const bonferroni = (p: number | null, k: number): number | null => (p === null ? null : Math.min(1, p * Math.max(1, k)));

const RATIO_MEASURES = new Set(['OR', 'RR']);

/** How far an effect lies from no effect, and on which side: ln for ratios, the value itself for differences. */
export function effectOnScale(result: Pick<Result, 'effectMeasure'>, estimate: number | null): number | null {
  if (estimate === null || !Number.isFinite(estimate)) return null;
  if (RATIO_MEASURES.has(result.effectMeasure)) return estimate > 0 ? Math.log(estimate) : null;
  return estimate;
}

/** The intervention's effect at each level (categorical) or at each reported point (continuous, lowest first), on the scale above. */
function effectsByPlace(result: Result): { place: string; value: number | null }[] {
  if (result.modifier.type === 'continuous') {
    return [...(result.slopes ?? [])].sort((a, b) => a.at - b.at).map((slope) => ({ place: slope.label, value: effectOnScale(result, slope.estimate) }));
  }
  return result.strata.map((stratum) => ({ place: stratum.level, value: effectOnScale(result, stratum.effect.estimate) }));
}

/**
 * For each non-reference level (categorical) or for "higher values" (continuous): +1 when
 * the intervention's effect is stronger there than at the reference level (or the lowest
 * point), −1 when weaker, 0 when equal or unreadable. Used to compare related outcomes.
 */
export function modificationPattern(result: Result): Map<string, number> {
  const places = effectsByPlace(result);
  const out = new Map<string, number>();
  if (result.modifier.type === 'continuous') {
    const low = places[0]?.value ?? null;
    const high = places.at(-1)?.value ?? null;
    out.set('higher values', low === null || high === null ? 0 : Math.sign(Math.abs(high) - Math.abs(low)));
    return out;
  }
  const reference = places.find((place) => place.place === result.modifier.reference)?.value ?? null;
  for (const place of places) {
    if (place.place === result.modifier.reference) continue;
    out.set(place.place, reference === null || place.value === null ? 0 : Math.sign(Math.abs(place.value) - Math.abs(reference)));
  }
  return out;
}

/** The level (or end) a prediction names: by exact level name, then by a level named within it, then the only non-reference level. */
function predictedPlace(result: Result, where: string): string | null {
  const text = where.trim().toLowerCase();
  if (result.modifier.type === 'continuous') {
    if (/\b(high|higher|more|older|greater|above|larger)\b/.test(text)) return 'high';
    if (/\b(low|lower|less|fewer|younger|below|smaller)\b/.test(text)) return 'low';
    return null;
  }
  const others = result.strata.map((s) => s.level).filter((level) => level !== result.modifier.reference);
  const exact = others.find((level) => level.toLowerCase() === text);
  if (exact) return exact;
  const within = others.filter((level) => text.includes(level.toLowerCase()));
  if (within.length === 1) return within[0];
  return others.length === 1 ? others[0] : null;
}

export interface ObservedDirection {
  agrees: boolean | null;
  /** Which place's effect is stronger, in words. */
  text: string;
}

/** Whether the observed effects agree with a predicted direction ('stronger', 'weaker' or 'reversed' at `where`). */
export function observedDirection(result: Result, direction: 'stronger' | 'weaker' | 'reversed', where: string): ObservedDirection {
  const places = effectsByPlace(result);
  const target = predictedPlace(result, where);
  if (target === null) return { agrees: null, text: `“${where}” does not name a level of “${result.modifier.column}”, so the observed direction cannot be matched to it.` };
  let at: { place: string; value: number | null } | undefined;
  let against: { place: string; value: number | null } | undefined;
  if (result.modifier.type === 'continuous') {
    [at, against] = target === 'high' ? [places.at(-1), places[0]] : [places[0], places.at(-1)];
  } else {
    at = places.find((place) => place.place === target);
    against = places.find((place) => place.place === result.modifier.reference);
  }
  if (!at || !against || at.value === null || against.value === null || at === against) {
    return { agrees: null, text: 'The effects needed to read the direction were not estimated.' };
  }
  const name = (place: string) => (result.modifier.type === 'continuous' ? `at ${place}` : `in “${place}”`);
  if (direction === 'reversed') {
    const agrees = Math.sign(at.value) !== 0 && Math.sign(against.value) !== 0 && Math.sign(at.value) !== Math.sign(against.value);
    return { agrees, text: agrees ? `The effect ${name(at.place)} runs the other way to that ${name(against.place)}.` : `The effect ${name(at.place)} runs the same way as ${name(against.place)}.` };
  }
  const stronger = Math.abs(at.value) > Math.abs(against.value);
  const agrees = direction === 'stronger' ? stronger : Math.abs(at.value) < Math.abs(against.value);
  return { agrees, text: `The observed effect is ${stronger ? 'stronger' : 'weaker'} ${name(at.place)} than ${name(against.place)}.` };
}

/** Level names that look like bands of a number: "18-44", "80+", "<65", "65 to 74". */
export function looksBanded(levels: readonly string[]): boolean {
  const band = /^\s*([<>≤≥]=?\s*\d+(\.\d+)?|\d+(\.\d+)?\s*(\+|-|–|to)\s*(\d+(\.\d+)?)?)\s*$/i;
  return levels.length >= 2 && levels.every((level) => band.test(level));
}
