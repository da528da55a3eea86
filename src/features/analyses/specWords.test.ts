import { describe, expect, it } from 'vitest';
import { draftToSpec } from './specValidation';
import { computationSummary, specInWords } from './specWords';
import { CALL_BACK, callBackDraft } from './testSupport';
import { CALL_BACK_DEMO_SPEC as CALL_BACK_SPEC_FOR_WORDS } from './demoSpecs';

describe('words', () => {
  it('says the specification in plain English with the short descriptions', () => {
    const result = draftToSpec(CALL_BACK, callBackDraft());
    if (!result.ok) throw new Error('draft should convert');
    expect(specInWords(result.spec, { columns: CALL_BACK })).toBe(
      'Logistic regression of 30-day readmission on Call-back within 72 hours (reference 0), its product with age_band (reference 18-44), ' +
        'adjusted for sex, comorbidity_score and site; effects as odds ratios; 95 % delta-method intervals; tests at the 5 % level; ' +
        'Holm adjustment across 4 strata.',
    );
  });

  it('names the bootstrap, the slopes and the missing adjustment', () => {
    const words = specInWords({
      outcome: { column: 'y', type: 'continuous' },
      exposure: { column: 'x', reference: 'no' },
      modifier: { column: 'm', type: 'continuous' },
      covariates: [],
      model: 'linear',
      ci: { level: 0.9, method: 'bootstrap', replicates: 5000, seed: 42 },
    });
    expect(words).toBe(
      'Linear regression of y on x (reference no), its product with m as a continuous modifier, with no adjustment for other covariates; ' +
        'effects as mean differences; 90 % percentile-bootstrap intervals from 5,000 replicates (seed 42); tests at the 10 % level; ' +
        'the effect across m, marked at the mean and one standard deviation either side, with Johnson-Neyman boundaries.',
    );
  });

  it('lists what will be computed, with the counts that follow from the levels', () => {
    const result = draftToSpec(CALL_BACK, { ...callBackDraft(), ciMethod: 'bootstrap' });
    if (!result.ok) throw new Error('draft should convert');
    const items = computationSummary(result.spec, CALL_BACK);
    const byTitle = Object.fromEntries(items.map((item) => [item.title, item.detail]));
    // 4 age bands × 2 arms = 8 joint cells.
    expect(byTitle['Joint effects']).toMatch(/^All 8 combinations/);
    expect(byTitle['Effect within each stratum']).toContain('the 4 levels of age_band (18-44, 45-64, 65-79, 80+)');
    expect(byTitle['Interaction on the additive scale']).toContain('percentile bootstrap');
    expect(byTitle.Bootstrap).toContain('2,000 resamples with seed 1');
    expect(byTitle['Crude cross-check']).toContain('Mantel-Haenszel');
    expect(byTitle['Crude cross-check']).toContain('2 × 2 table of each level');
    expect(byTitle.Power).toBe('The smallest interaction these data could detect with 80 % power, and the power for an interaction as large as the main effect.');
  });

  it('names the points a continuous modifier is marked at, with the names clinicians give them', () => {
    const spec = { ...CALL_BACK_SPEC_FOR_WORDS, modifier: { column: 'comorbidity_score', type: 'continuous' as const, slopesAt: { kind: 'values' as const, values: [2, 5], names: ['mild', ''] } } };
    expect(specInWords(spec)).toContain('the effect across comorbidity_score, marked at 2 (mild) and 5, with Johnson-Neyman boundaries');
    const percentiles = { ...spec, modifier: { ...spec.modifier, slopesAt: { kind: 'percentiles' as const, percentiles: [1, 22, 50] } } };
    expect(specInWords(percentiles)).toContain('marked at the 1st, 22nd and 50th percentiles');
  });
});
