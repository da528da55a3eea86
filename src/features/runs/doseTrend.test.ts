/**
 * A continuous intervention (dose), an ordered modifier and the profile predictions
 * through the product: the dictionary's order scores, the analysis form (kinds of
 * intervention, refusals, the scores carried into the spec), the model equation and the
 * words, the results view, the CSV, the profile plot, the brief's methods paragraph and
 * the audit words. Results come from the engine on the seeded synthetic cohort of
 * tests/reference/dose (make-dose-fixtures.R; its numbers are checked against base R in
 * tests/reference/dose-trend-predictions.test.ts). Expected texts are the product's own.
 */
import { readFileSync } from 'node:fs';
import { beforeAll, describe, expect, it } from 'vitest';
import { ResultSchema, type Result, type Spec } from '@/engine/boundary/schemas';
import { runAnalysis } from '@/engine/index';
import { engineDataOfCsv } from './engineInput';
import { resultCsv } from './resultCsv';
import { doseTrendView } from './doseTrendView';
import { profileFigure } from './plots/plotFigures';
import { declaredOrder, parseScores } from '../extracts/orderedScores';
import type { ColumnProfile } from '../extracts/extracts.schema';
import { draftToSpec } from '../analyses/specValidation';
import { defaultDraft, formChoices, reviseDraft } from '../analyses/specForm';
import { column } from '../analyses/testSupport';
import { equationText, modelEquation } from '../analyses/modelEquation';
import { computationSummary, specInWords } from '../analyses/specWords';
import { buildBriefContent, methodsParagraph } from '../briefs/briefContent';
import { briefCounts } from '../briefs/briefCounts';
import { FACTS } from '../briefs/briefTestSupport';
import { specChanges } from '../audit/auditWords';

const root = new URL('../../../tests/reference/dose/', import.meta.url);
const data = engineDataOfCsv(readFileSync(new URL('cohort.csv', root)));
const fixtures = JSON.parse(readFileSync(new URL('fixtures.json', root), 'utf8')) as Record<string, { spec: Spec }>;
const SCORES = { low: 1, mid: 2, high: 4 };

const COLUMNS = [
  column('readmitted', 'binary', ['0', '1']),
  column('stay', 'continuous', null, { min: 0, max: 20, mean: 7, sd: 2, median: 7 }),
  column('minutes', 'count', null, { min: 0, max: 120, mean: 60, sd: 35, median: 60 }),
  column('treated', 'binary', ['0', '1']),
  { ...column('frailty', 'categorical', ['low', 'high', 'mid']), ordered: SCORES },
  column('age', 'count', null, { min: 40, max: 100, mean: 72, sd: 9, median: 72 }),
  column('sex', 'categorical', ['F', 'M']),
];

function doseDraft() {
  let draft = defaultDraft().spec;
  draft = reviseDraft(COLUMNS, draft, { outcome: { ...draft.outcome, column: 'readmitted' } });
  draft = reviseDraft(COLUMNS, draft, { exposure: { ...draft.exposure, type: 'continuous' } });
  draft = reviseDraft(COLUMNS, draft, { exposure: { ...draft.exposure, column: 'minutes' } });
  draft = reviseDraft(COLUMNS, draft, { modifier: { ...draft.modifier, column: 'frailty', reference: 'low' } });
  return reviseDraft(COLUMNS, draft, { covariates: ['age', 'sex'] });
}

describe('dictionary: ordered columns with scores', () => {
  const profile = { name: 'frailty', levels: [{ value: 'low', count: 1 }, { value: 'mid', count: 1 }, { value: 'high', count: 1 }, { value: 'unknown', count: 1 }], levelsTruncated: false } as ColumnProfile;
  it('keeps a score for every level (declared missing codes take none) and refuses gaps, strangers and equal scores', () => {
    const problems: { path: string; message: string }[] = [];
    const entry = { name: 'frailty', type: 'categorical' as const, description: '', ordered: { scores: SCORES } };
    expect(declaredOrder(profile, entry, ['unknown'], 'p', problems)).toEqual({ scores: SCORES });
    expect(problems).toEqual([]);
    declaredOrder(profile, { ...entry, ordered: { scores: { low: 1, mid: 2 } } }, ['unknown'], 'p', problems);
    expect(problems.pop()?.message).toBe('Give a score to every level of “frailty”: “high” has none.');
    declaredOrder(profile, { ...entry, ordered: { scores: { ...SCORES, unknown: 9 } } }, ['unknown'], 'p', problems);
    expect(problems.pop()?.message).toMatch(/has no level “unknown”/);
    declaredOrder(profile, { ...entry, ordered: { scores: { low: 1, mid: 1, high: 1 } } }, ['unknown'], 'p', problems);
    expect(problems.pop()?.message).toMatch(/all equal/);
    declaredOrder(profile, { ...entry, type: 'continuous' }, [], 'p', problems);
    expect(problems.pop()?.message).toMatch(/Only a categorical column can be ordered/);
  });
  it('reads typed scores', () => {
    expect(parseScores('low = 1, mid=2 ,high = 4')).toEqual(SCORES);
    expect(parseScores('')).toEqual({});
    expect(parseScores('low 1')).toBeNull();
    expect(parseScores('low = x')).toBeNull();
  });
});

describe('analysis form: a dose and an ordered modifier', () => {
  it('offers continuous and count columns for a dose, only delta intervals, and carries the dictionary scores into the spec', () => {
    const draft = doseDraft();
    const choices = formChoices(COLUMNS, draft);
    expect(choices.interventions.map((c) => c.name)).toEqual(['stay', 'minutes', 'age']);
    expect(choices.ciMethods).toEqual(['delta']);
    expect(choices.modifierScores).toEqual(SCORES);
    const converted = draftToSpec(COLUMNS, draft);
    expect(converted.ok).toBe(true);
    if (!converted.ok) return;
    expect(converted.spec.exposure).toEqual({ column: 'minutes', type: 'continuous' });
    expect(converted.spec.modifier.ordered).toEqual({ scores: { low: 1, high: 4, mid: 2 } });
    const off = draftToSpec(COLUMNS, { ...draft, modifier: { ...draft.modifier, trend: false } });
    expect(off.ok && off.spec.modifier.ordered).toBeUndefined();
  });
  it('refuses the bootstrap, MOVER, preventive recoding and a binary column as a dose, saying why', () => {
    const draft = doseDraft();
    const bootstrap = draftToSpec(COLUMNS, { ...draft, ciMethod: 'bootstrap' });
    expect(!bootstrap.ok && bootstrap.errors['ci.method']).toMatch(/do not apply to a continuous intervention/);
    const mover = draftToSpec(COLUMNS, { ...draft, ciMethod: 'mover' });
    expect(!mover.ok && mover.errors['ci.method']).toMatch(/MOVER is for RERI/);
    const preventive = draftToSpec(COLUMNS, { ...draft, preventive: true });
    expect(!preventive.ok && preventive.errors.preventive).toMatch(/Turn off preventive recoding/);
    const binary = draftToSpec(COLUMNS, { ...draft, exposure: { ...draft.exposure, column: 'treated' } });
    expect(!binary.ok && binary.errors['exposure.column']).toBe('treated is not a continuous or count column; a dose needs numbers.');
  });
  it('writes the dose as a plain term in the equation, notes the trend model, and says so in words', () => {
    const converted = draftToSpec(COLUMNS, doseDraft());
    if (!converted.ok) throw new Error('draft invalid');
    const equation = modelEquation(converted.spec, COLUMNS);
    expect(equationText(equation)).toMatch(/^logit\(P\(readmitted = 1\)\) = β0 \+ β1·minutes \+ /);
    expect(equationText(equation)).toContain('β4·minutes×[frailty = high]');
    expect(equation.notes.join(' ')).toContain('minutes is a continuous dose');
    expect(equation.notes.join(' ')).toContain('Test for trend: a second fit replaces the product terms with one term minutes×score(frailty), scores low 1 · mid 2 · high 4.');
    expect(specInWords(converted.spec)).toContain('(a continuous dose: slopes per unit)');
    const titles = computationSummary(converted.spec, COLUMNS).map((item) => item.title);
    expect(titles).toContain('Slope within each stratum');
    expect(titles).toContain('Test for trend');
    expect(titles).not.toContain('Joint effects');
    expect(titles).not.toContain('Interaction on the additive scale');
  });
});

describe('results, CSV, plot, brief and audit of a dose with an ordered modifier', () => {
  let result: Result;
  let spec: Spec;
  beforeAll(async () => {
    spec = { ...fixtures['trend-dose-logistic'].spec };
    result = ResultSchema.parse(await runAnalysis(data, spec, { threads: 0 }));
  });

  it('the view gives slopes per level, the additive-measures sentence, the trend test and the prediction note', () => {
    const view = doseTrendView(result);
    expect(view.dose?.slopes.map((row) => row.level)).toEqual(['low', 'mid', 'high']);
    expect(view.dose?.slopes[1].slope.estimate).toBe(result.dose?.slopes[1].estimate);
    expect(view.additiveNote).toMatch(/^The additive measures \(RERI, AP, S and the joint table\) do not apply to a continuous intervention/);
    expect(view.trend?.scores).toBe('low 1 · mid 2 · high 4');
    expect(view.trend?.likelihoodRatio).toMatch(/^likelihood-ratio χ² = /);
    expect(view.predictionNote).toMatch(/age at its mean, 7\d\.\d\d; sex at its most common level, F/);
  });

  it('the CSV carries the slopes, the sentence, the trend test and the predictions with their covariate values', () => {
    const csv = resultCsv(result, spec);
    expect(csv).toContain('dose-slope,mid,,slope of minutes per unit (log-odds scale)');
    expect(csv).toContain('additive,,,not applicable');
    expect(csv).toMatch(/trend,,,"minutes × score\(frailty\): change per unit of score/);
    expect(csv).toMatch(/prediction-covariate,age,,mean,7\d\.\d+/);
    expect(csv).toMatch(/prediction,high,minutes at mean \+ 1 SD,predicted risk,0\.\d+/);
    expect(csv).not.toMatch(/^additive,[^,]*,,RERI,/m);
  });

  it('the profile plot draws the engine\'s predictions and says which covariate values they hold', () => {
    const figure = profileFigure({ ...result, model: { link: result.model.link, coefficients: result.model.coefficients } });
    expect(figure.data).toHaveLength(3);
    const first = figure.data[0] as { y: number[] };
    expect(first.y[0]).toBeCloseTo((result.predictions?.lines[0].points[0].estimate as number) * 100, 12);
    expect(figure.caption).toContain('Predicted values hold the covariates at stated values: age at its mean');
  });

  it('the brief\'s forest plot shows the effect per unit within each level from the strata', () => {
    const content = buildBriefContent(result, spec, FACTS, { title: 'Dose', summary: 'Summary.', plot: 'forest', ownCautions: [] });
    expect(content.plot?.axisLabel).toBe('odds ratio per unit of minutes (95 % CI)');
    expect(content.plot?.points.map((point) => point.label)).toEqual(['low', 'mid', 'high']);
    expect(content.plot?.points[2].estimate).toBe(result.strata.find((stratum) => stratum.level === 'high')?.effect.estimate);
    expect(content.interactionTest).toContain('Test for trend across the ordered levels of frailty: Wald p');
  });

  it('the brief\'s methods paragraph explains the dose, the trend test and the predictions', () => {
    const text = methodsParagraph(result, spec, FACTS, briefCounts(result, FACTS.threshold));
    expect(text).toContain('minutes was analysed as a continuous dose');
    expect(text).toContain('The additive measures (RERI, AP, S) were not computed');
    expect(text).toContain('(low 1 · mid 2 · high 4), tested by Wald and likelihood-ratio tests');
    expect(text).toContain('Predicted values hold the covariates at stated values');
  });

  it('audit words name the kind of intervention and a changed trend score', () => {
    const before = { exposure: { column: 'minutes', type: 'binary' }, modifier: { ordered: { scores: { low: 1, mid: 2 } } } };
    const after = { exposure: { column: 'minutes', type: 'continuous' }, modifier: { ordered: { scores: { low: 1, mid: 3 } } } };
    expect(specChanges(before, after)).toEqual([
      'the kind of intervention (binary or a continuous dose) from binary to continuous',
      'the trend score of modifier level mid from 2 to 3',
    ]);
  });
});
