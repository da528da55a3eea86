import { describe, expect, it } from 'vitest';
import type { ScreenBlock, ScreenEntry } from '@/engine/boundary/schemas';
import { specInWords } from '@/features/analyses/specWords';
import { interactionTestInWords, screenSentence, screenStandingInWords } from './subgroupScreenView';

// Invented entries: the sentence only counts p-values against alpha.
const entry = (column: string, p: number, holm: number, bh: number): ScreenEntry => ({
  column, type: 'continuous', reference: null, n: 100, dropped: 0, strata: [], slopes: [],
  interaction: { test: 'likelihood-ratio', statistic: 1, df: 1, df2: null, p }, pAdjusted: { holm, bh },
});

describe('subgroup screen in words', () => {
  it('counts the modifiers examined and the tests below alpha before and after adjustment', () => {
    const screen: ScreenBlock = {
      examined: 5,
      modifiers: [entry('a', 0.004, 0.02, 0.01), entry('b', 0.03, 0.12, 0.05), entry('c', 0.2, 0.6, 0.25), entry('d', 0.5, 1, 0.5), entry('e', 0.9, 1, 0.9)],
    };
    expect(screenSentence(screen, 0.05)).toBe(
      'Five modifiers were examined; two interaction tests fell below 5 % before adjustment, one after Holm\'s adjustment and one after Benjamini-Hochberg\'s. With five modifiers tested, about 0.25 would fall below 5 % by chance alone when none modifies the effect.',
    );
    expect(screenSentence({ examined: 2, modifiers: [entry('a', 0.5, 1, 0.5), entry('b', 0.7, 1, 0.7)] }, 0.05)).toMatch(/^Two modifiers were examined; no interaction test fell below 5 %\./);
  });

  it('is exploratory unless every modifier was prespecified, naming those that were not', () => {
    const standings = [{ column: 'age_band', planned: true, reason: '' }, { column: 'sex', planned: false, reason: '' }, { column: 'site', planned: false, reason: '' }];
    const words = screenStandingInWords(standings, false);
    expect(words.exploratory).toBe(true);
    expect(words.text).toContain('“sex” and “site” were not prespecified');
    expect(screenStandingInWords(standings.map((standing) => ({ ...standing, planned: true })), false).exploratory).toBe(false);
    expect(screenStandingInWords(standings, true).exploratory).toBe(false);
  });

  it('names the interaction test', () => {
    expect(interactionTestInWords({ test: 'F', statistic: 2.5, df: 2, df2: 90, p: 0.08 })).toMatch(/^F test, F 2\.5\d* on 2 and 90 df$/);
    expect(interactionTestInWords({ test: 'likelihood-ratio', statistic: 3, df: 1, df2: null, p: 0.08 })).toMatch(/^likelihood-ratio test, χ² 3/);
  });

  it('describes a screen specification', () => {
    const words = specInWords({
      outcome: { column: 'readmitted_30d', type: 'binary' },
      exposure: { column: 'call_back', reference: '0' },
      modifiers: [{ column: 'age_band', type: 'categorical', reference: '18-44' }, { column: 'comorbidity_score', type: 'continuous' }],
      covariates: [],
      model: 'logistic',
      ci: { level: 0.95, method: 'delta' },
    });
    expect(words).toContain('Subgroup screen over 2 modifiers, each in a logistic regression model of its own');
    expect(words).toContain('age_band (reference 18-44) and comorbidity_score (continuous)');
    expect(words).toContain('Holm and Benjamini-Hochberg adjustment across the 2 modifiers');
  });
});
