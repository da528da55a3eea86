import { beforeAll, describe, expect, it } from 'vitest';
import type { Result, Spec } from '@/engine/boundary/schemas';
import { compareRuns, figureRows, referenceWarnings, specDifferences, type ComparedRun } from './runComparison';
import { comparisonForestFigure, comparisonForestInput } from './plots/comparisonForest';
import { CALL_BACK_SPEC, engineResult } from './testSupport';

/**
 * Expected changes are the differences of the two engine results' own numbers (the
 * figures under comparison are checked against R in the engine's reference tests).
 */
describe('run comparison', () => {
  const changed: Spec = { ...CALL_BACK_SPEC, model: 'modified-poisson', effectMeasure: 'RR', covariates: CALL_BACK_SPEC.covariates.slice(0, 2) };
  const otherReference: Spec = { ...CALL_BACK_SPEC, modifier: { ...CALL_BACK_SPEC.modifier, reference: '45-64' } };
  let before: Result;
  let after: Result;
  let rereferenced: Result;
  const run = (id: string, spec: Spec, result: Result | null): ComparedRun => ({ id, spec, result });
  beforeAll(async () => {
    before = await engineResult('call-back', CALL_BACK_SPEC);
    after = await engineResult('call-back', changed);
    rereferenced = await engineResult('call-back', otherReference);
  });

  it('names the differing specification fields in words', () => {
    expect(specDifferences([CALL_BACK_SPEC, changed])).toEqual([
      { path: 'covariates', label: 'Adjusted for', values: ['sex (reference F), comorbidity_score, prior_admissions, site (reference Tern Valley General)', 'sex (reference F), comorbidity_score'] },
      { path: 'model', label: 'Model', values: ['Logistic regression', 'Poisson regression with robust variance (modified Poisson)'] },
      { path: 'effectMeasure', label: 'Effect measure', values: ['odds ratio', 'risk ratio'] },
    ]);
    expect(specDifferences([CALL_BACK_SPEC, { ...CALL_BACK_SPEC }])).toEqual([]);
    expect(specDifferences([CALL_BACK_SPEC, { ...CALL_BACK_SPEC, preventive: true }])).toEqual([
      { path: 'preventive', label: 'Preventive recoding', values: [CALL_BACK_SPEC.preventive === undefined ? '(default)' : CALL_BACK_SPEC.preventive ? 'yes' : 'no', 'yes'] },
    ]);
  });

  it('shows a change for every figure both runs estimated, even when the specifications differ', () => {
    const rows = figureRows([run('a', CALL_BACK_SPEC, before), run('b', changed, after)]);
    const shared = rows.filter((row) => !row.values.includes('not estimated'));
    expect(shared.length).toBeGreaterThan(10);
    for (const row of shared) expect(row.changes[1], row.label).not.toBeNull();
    const reri = rows.find((row) => row.key === 'reri:80+')!;
    const reriOf = (result: Result) => result.interaction.additive.find((entry) => entry.level === '80+')!.reri!.estimate!;
    expect(reri.changes).toEqual([null, reriOf(after) - reriOf(before)]);
    const p = rows.find((row) => row.key === 'omnibus-p')!;
    expect(p.changes[1]).toBe(after.interaction.omnibus.p! - before.interaction.omnibus.p!);
    const eighty = rows.find((row) => row.key === 'effect:80+')!;
    const stratum = (result: Result) => result.strata.find((entry) => entry.level === '80+')!.effect.estimate!;
    expect(eighty.changes[1]).toBe(stratum(after) - stratum(before));
    expect(eighty.notes[1]).toBe('OR → RR: different measures');
    // The same run against itself moves nothing.
    expect(figureRows([run('a', CALL_BACK_SPEC, before), run('a', CALL_BACK_SPEC, before)]).every((row) => row.changes[1] === 0)).toBe(true);
  });

  it('matches strata by level name and warns when the modifier reference differs', () => {
    const runs = [run('a', CALL_BACK_SPEC, before), run('b', otherReference, rereferenced)];
    expect(referenceWarnings(runs)).toEqual([
      'Run A and run B use different reference levels of the modifier age_band (18-44, 45-64): RERI, AP, S and the interaction ratios are against different strata.',
    ]);
    const rows = figureRows(runs);
    const level = (result: Result, name: string) => result.strata.find((entry) => entry.level === name)!.effect.estimate!;
    for (const name of ['18-44', '45-64', '65-79', '80+']) {
      expect(rows.find((row) => row.key === `effect:${name}`)!.changes[1]).toBe(level(rereferenced, name) - level(before, name));
    }
    expect(referenceWarnings([run('a', CALL_BACK_SPEC, before), run('b', changed, after)])).toEqual([]);
    const flipped: Spec = { ...CALL_BACK_SPEC, exposure: { ...CALL_BACK_SPEC.exposure, reference: '1' } };
    expect(referenceWarnings([run('a', CALL_BACK_SPEC, null), run('b', flipped, null)])[0]).toMatch(/different reference levels of the intervention call_back \(0, 1\)/);
  });

  it('compares four runs against the first, and shows a run without a result as such', () => {
    const comparison = compareRuns([
      run('a', CALL_BACK_SPEC, before), run('b', changed, after), run('c', otherReference, rereferenced), run('d', CALL_BACK_SPEC, null),
    ]);
    expect(comparison.runs.map((r) => r.letter)).toEqual(['A', 'B', 'C', 'D']);
    expect(comparison.specDifferences.find((d) => d.path === 'modifier.reference')!.values).toEqual(['18-44', '18-44', '45-64', '18-44']);
    expect(comparison.referenceWarnings).toHaveLength(1);
    const p = comparison.figures.find((row) => row.key === 'omnibus-p')!;
    expect(p.values[3]).toBe('no result');
    expect(p.changes).toEqual([null, after.interaction.omnibus.p! - before.interaction.omnibus.p!, rereferenced.interaction.omnibus.p! - before.interaction.omnibus.p!, null]);
    for (const row of comparison.figures) expect(row.values).toHaveLength(4);
  });

  it('overlays the strata of each run in one forest plot, one trace per run with its own intervals', () => {
    const figure = comparisonForestFigure([
      { name: 'Run A', result: comparisonForestInput(before) }, { name: 'Run B', result: comparisonForestInput(after) },
      { name: 'Run C', result: comparisonForestInput(rereferenced) }, { name: 'Run D', result: comparisonForestInput(before) },
    ])!;
    expect(figure.data.map((trace) => trace.name)).toEqual(['Run A (OR)', 'Run B (RR)', 'Run C (OR)', 'Run D (OR)']);
    const a = figure.data[0] as { x: number[]; error_x: { array: number[] } };
    const eighty = before.strata.find((entry) => entry.level === '80+')!.effect;
    const index = ['18-44', '45-64', '65-79', '80+'].filter((level) => before.strata.find((s) => s.level === level)?.effect.estimate != null).indexOf('80+');
    expect(a.x[index]).toBe(eighty.estimate);
    expect(a.error_x.array[index]).toBe(eighty.upper! - eighty.estimate!);
    expect((figure.layout.xaxis as { type?: string }).type).toBe('log');
    expect(figure.caption).toMatch(/Run B \(risk ratio\)/);
  });
});
