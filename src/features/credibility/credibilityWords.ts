/** The credibility assessment in words, for the panel, the board and the brief (pure). */
import type { Result } from '@/engine/boundary/schemas';
import type { CredibilityItem, CredibilityView } from './credibility.schema';
import { PRIOR_LABEL, RATIONALE_LABEL, type Overall } from './credibilityRule';

export const CREDIBILITY_RULE_TEXT =
  "Crossgrain's own rule, informed by the published criteria for subgroup claims (Schandelmaier et al., CMAJ 2020; Sun et al., BMJ 2010), not those instruments' scoring: " +
  'start at high and step down one level for each of: not named in advance; no direction predicted, or the opposite direction observed; ' +
  'an interaction test that fails the adjustment for the modifiers examined (two steps if it misses the significance level outright); ' +
  'a numeric modifier analysed in categories; the other direction for a related outcome; a weak or absent rationale; prior evidence against. ' +
  'Very low is the floor. Items that do not apply or are not yet rated cost nothing.';

const formatP = (p: number | null) => (p === null ? 'not computed' : p < 0.001 ? '< 0.001' : p.toFixed(3));
const date = (value: string) => value.slice(0, 10);
const TEST_NAME: Record<string, string> = { 'likelihood-ratio': 'Likelihood-ratio test', F: 'F test', wald: 'Wald test', 'wald-robust': 'Wald test (robust)' };
const trim = (value: number) => String(Number(value.toPrecision(6)));

/** Every item, computed ones first, each with its question, its answer and where it stands. */
export function credibilityItems(result: Result, computed: CredibilityView['computed'], clinician: CredibilityView['clinician'], observedText: string | null): CredibilityItem[] {
  const items: CredibilityItem[] = [];
  const add = (key: string, question: string, answer: string, standing: CredibilityItem['standing'], source: CredibilityItem['source'] = 'computed') =>
    items.push({ key, question, answer, standing, source });
  const { prespecified, direction, modifiersExamined, interactionTest: test } = computed;
  const modifier = `“${result.modifier.column}”`;

  add('prespecified', 'Was the modifier named before the data?', prespecified.value
    ? `Yes: ${prespecified.source === 'register' ? 'registered before the data arrived,' : 'declared prespecified with the analysis'} on ${date(prespecified.at ?? '')}.`
    : `No: ${modifier} was not named in advance of these data, so the finding is exploratory.`, prespecified.value ? 'for' : 'against');

  if (!direction.predicted) add('direction', 'Was a direction predicted, and did it come true?', 'No direction was predicted in advance.', 'against');
  else {
    const said = `Predicted: a ${direction.predicted === 'reversed' ? 'reversed' : direction.predicted} effect${direction.where ? ` in ${direction.where}` : ''}.`;
    add('direction', 'Was a direction predicted, and did it come true?', `${said} ${observedText ?? ''}${direction.agrees === true ? ' This agrees with the prediction.' : direction.agrees === false ? ' This is the opposite of the prediction.' : ''}`.trim(),
      direction.agrees === false ? 'against' : direction.agrees === true ? 'for' : 'not-applicable');
  }

  add('within-study', 'Is the comparison made within one study?', `Yes: the levels of ${modifier} are compared inside the same extract and the same model, with the same covariates, so differences between studies or data sources cannot explain the contrast.`, 'for');

  add('modifiers-examined', 'How many modifiers has the initiative examined for this outcome?',
    `${modifiersExamined.count} (${modifiersExamined.columns.map((c) => `“${c}”`).join(', ') || modifier}) for “${result.outcome.column}”, counting every finished analysis of the initiative; the interaction test below is adjusted for this number.`,
    modifiersExamined.count <= 1 ? 'for' : 'not-applicable');

  add('interaction-test', 'Does the interaction test hold after adjusting for that number?',
    `${TEST_NAME[test.test] ?? test.test}: p ${formatP(test.p)}; adjusted for ${modifiersExamined.count} modifier${modifiersExamined.count === 1 ? '' : 's'} (Bonferroni, p × ${modifiersExamined.count}, the strictest step of Holm's procedure): p ${formatP(test.adjustedP)}, ` +
    `${test.holdsAdjusted ? `below alpha ${trim(test.alpha)}, so it holds` : test.holdsUnadjusted ? `not below alpha ${trim(test.alpha)}, so it does not hold after adjustment` : `so it does not hold; the p before adjustment is not below alpha ${trim(test.alpha)} either`}.`,
    test.holdsAdjusted ? 'for' : 'against');

  const numeric = computed.continuousModifier;
  add('continuous-modifier', 'Was a numeric modifier analysed as a number?', numeric === 'continuous'
    ? `Yes: ${modifier} was analysed as continuous, without cut-points.`
    : numeric === 'number-in-categories'
      ? `No: ${modifier} records a number${(result.modifier.levels?.length ?? 0) > 0 ? ' (or bands of one)' : ''} but was analysed in categories; the cut-points may shape the finding.`
      : `Does not apply: ${modifier} is not a number.`, numeric === 'continuous' ? 'for' : numeric === 'number-in-categories' ? 'against' : 'not-applicable');

  const related = computed.relatedOutcomes;
  add('related-outcomes', 'Is the effect consistent across related outcomes?', related.length === 0
    ? 'No related outcomes analysed: no other analysis of the initiative has this modifier and intervention with another outcome.'
    : related.map((r) => `“${r.outcome}”: ${r.consistent ? 'the effect differs the same way' : 'the effect differs the other way'}`).join('; ') + '.',
    related.length === 0 ? 'not-applicable' : related.every((r) => r.consistent) ? 'for' : 'against');

  const by = clinician ? ` (${clinician.ratedBy.name}, ${date(clinician.ratedAt)})` : '';
  add('rationale', 'Is there a clinical or biological reason for the difference?', clinician
    ? `${RATIONALE_LABEL[clinician.rationale]}${by}.${clinician.rationaleNote ? ` ${clinician.rationaleNote}` : ''}`
    : 'Not rated yet by a clinician.', !clinician ? 'not-rated' : clinician.rationale === 'weak' || clinician.rationale === 'none' ? 'against' : 'for', 'clinician');
  add('prior-evidence', 'Does it agree with earlier evidence?', clinician
    ? `${PRIOR_LABEL[clinician.priorEvidence]}${by}.${clinician.priorEvidenceNote ? ` ${clinician.priorEvidenceNote}` : ''}`
    : 'Not rated yet by a clinician.', !clinician ? 'not-rated' : clinician.priorEvidence === 'contradicts' ? 'against' : clinician.priorEvidence === 'supports' ? 'for' : 'not-applicable', 'clinician');
  return items;
}

/** The brief's paragraph "How credible is the subgroup claim": the rating and its reasons, no counts. */
export function credibilityParagraph(overall: Overall): string {
  const reasons = overall.reasons.length === 0
    ? 'Every item the rating looks at speaks for the claim.'
    : `It steps down because: ${overall.reasons.map((reason) => reason.replace(/\.$/, '').replace(/^./, (c) => c.toLowerCase())).join('; ')}.`;
  const provisional = overall.provisional ? ' Provisional: a clinician has not yet rated the clinical rationale and the prior evidence.' : '';
  return `${overall.label}. ${reasons}${provisional} This is Crossgrain's own rating, informed by published criteria for subgroup claims; it does not replace clinical judgement.`;
}
