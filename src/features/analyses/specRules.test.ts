/**
 * The form's choice rules: a choice never changes another field; impossible combinations
 * are disabled with the reason; the summary panel (draftToSpec) calls a combination
 * runnable exactly when the rule check that saving applies (specRuleProblems) accepts it.
 */
import { describe, expect, it } from 'vitest';
import { formChoices, reviseDraft, type SpecDraft } from './specForm';
import { MEASURES, MODELS, specRuleProblems, type OutcomeType } from './specRules';
import { draftToSpec } from './specValidation';
import { CALL_BACK, callBackDraft } from './testSupport';

/** The call-back draft with a continuous outcome (length of stay), for the other outcome type. */
function continuousDraft(): SpecDraft {
  const draft = callBackDraft();
  return reviseDraft(CALL_BACK, draft, { outcome: { type: 'continuous', column: 'length_of_stay_days', event: '' }, model: 'linear', effectMeasure: 'MD' });
}

const draftFor = (type: OutcomeType) => (type === 'binary' ? callBackDraft() : continuousDraft());

describe('choices never silently change another field', () => {
  it('keeps the model when the measure changes and the measure when the model changes', () => {
    for (const type of ['binary', 'continuous'] as const) {
      for (const model of MODELS) {
        const draft = draftFor(type);
        const next = reviseDraft(CALL_BACK, draft, { model });
        expect({ ...next, model: draft.model }).toEqual(draft);
        expect(next.model).toBe(model);
      }
      for (const effectMeasure of MEASURES) {
        const draft = draftFor(type);
        const next = reviseDraft(CALL_BACK, draft, { effectMeasure });
        expect({ ...next, effectMeasure: draft.effectMeasure }).toEqual(draft);
      }
    }
  });

  it('does not switch to linear on "risk difference", nor back to odds ratios on logistic (issue 12 as reported)', () => {
    const rd = reviseDraft(CALL_BACK, callBackDraft(), { effectMeasure: 'RD' });
    expect(rd.model).toBe('logistic');
    const logistic = reviseDraft(CALL_BACK, { ...callBackDraft(), model: 'log-binomial', effectMeasure: 'RR' }, { model: 'logistic' });
    expect(logistic.effectMeasure).toBe('RR');
  });
});

describe('disabled choices carry their reason', () => {
  it('disables linear for a binary outcome and every other model for a continuous one', () => {
    const binary = formChoices(CALL_BACK, callBackDraft());
    expect(binary.models.find((m) => m.value === 'linear')?.disabledReason).toBe('A binary outcome needs a logistic, log-binomial or modified Poisson model.');
    expect(binary.models.filter((m) => m.disabledReason).map((m) => m.value)).toEqual(['linear', 'poisson']);
    expect(binary.models.find((m) => m.value === 'poisson')?.disabledReason).toBe('The Poisson model needs a count outcome.');
    const continuous = formChoices(CALL_BACK, continuousDraft());
    expect(continuous.models.filter((m) => !m.disabledReason).map((m) => m.value)).toEqual(['linear']);
    expect(continuous.models.find((m) => m.value === 'logistic')?.disabledReason).toBe('A continuous outcome needs the linear model.');
  });

  it('disables the measures the chosen model does not give, naming the models that do', () => {
    const logistic = Object.fromEntries(formChoices(CALL_BACK, callBackDraft()).measures.map((m) => [m.value, m.disabledReason ?? null]));
    expect(logistic.OR).toBeNull();
    expect(logistic.RR).toBe('Logistic regression gives the odds ratio; choose Log-binomial regression or Poisson regression with robust variance (modified Poisson) first.');
    expect(logistic.RD).toBe('No model open to a binary outcome gives the risk difference.');
    expect(logistic.MD).toBe('A binary outcome has no mean difference.');
    const poisson = formChoices(CALL_BACK, { ...callBackDraft(), model: 'modified-poisson', effectMeasure: 'RR' });
    expect(poisson.measures.filter((m) => !m.disabledReason).map((m) => m.value)).toEqual(['RR']);
  });
});

describe('the summary agrees with what saving accepts', () => {
  it('converts a draft exactly when the shared rule check has no problem, for every outcome type, model and measure', () => {
    let runnable = 0;
    for (const type of ['binary', 'continuous'] as const) {
      for (const model of MODELS) {
        for (const effectMeasure of MEASURES) {
          const draft = { ...draftFor(type), model, effectMeasure };
          const converted = draftToSpec(CALL_BACK, draft);
          const problems = specRuleProblems({ outcome: { column: draft.outcome.column, type }, model, effectMeasure });
          expect(converted.ok, `${type} ${model} ${effectMeasure}`).toBe(problems.length === 0);
          // Whatever the choices show as enabled for the current draft is what converts.
          const choices = formChoices(CALL_BACK, draft);
          const enabled = !choices.models.find((m) => m.value === model)?.disabledReason && !choices.measures.find((m) => m.value === effectMeasure)?.disabledReason;
          expect(enabled, `${type} ${model} ${effectMeasure}`).toBe(converted.ok);
          if (converted.ok) runnable += 1;
        }
      }
    }
    // binary: logistic/OR, log-binomial/RR, modified Poisson/RR; continuous: linear/MD (specRules.measureFor, the engine's validateSpec).
    expect(runnable).toBe(4);
  });
});
