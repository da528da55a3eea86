/**
 * The results page of a continuous intervention with an ordered modifier, rendered on the
 * server from a real engine result (the seeded synthetic cohort of tests/reference/dose),
 * and the server's check of such a specification against the dictionary.
 */
import { readFileSync } from 'node:fs';
import { experimental_AstroContainer as AstroContainer } from 'astro/container';
import { beforeAll, describe, expect, it } from 'vitest';
import { ResultSchema, type Result, type Spec } from '@/engine/boundary/schemas';
import { parseSingleSpec } from '../analyses/screenSpecs';
import { runAnalysis } from '@/engine/index';
import ResultTables from './ResultTables.astro';
import { engineDataOfCsv } from './engineInput';
import { checkSpecAgainstDictionary } from '../analyses/analyses.server';
import type { ColumnProfile, DictionaryEntry } from '../extracts/extracts.schema';

const root = new URL('../../../tests/reference/dose/', import.meta.url);
const fixtures = JSON.parse(readFileSync(new URL('fixtures.json', root), 'utf8')) as Record<string, { spec: unknown }>;

describe('results page of a dose with an ordered modifier', () => {
  let container: AstroContainer;
  let result: Result;
  let spec: Spec;
  beforeAll(async () => {
    container = await AstroContainer.create();
    spec = parseSingleSpec(fixtures['trend-dose-logistic'].spec);
    result = ResultSchema.parse(await runAnalysis(engineDataOfCsv(readFileSync(new URL('cohort.csv', root))), spec, { threads: 0 }));
  });

  it('shows the slopes per level, the additive-measures sentence, the trend test beside the omnibus test, and the prediction note', async () => {
    const html = await container.renderToString(ResultTables, { props: { result, spec } });
    expect(html).toContain('data-testid="additive-not-applicable"');
    expect(html).toContain('do not apply to a continuous intervention');
    expect(html).toContain('data-testid="dose-slopes-table"');
    const mid = result.dose?.slopes.find((slope) => slope.level === 'mid');
    expect(html).toContain(`data-testid="dose-slope-mid" data-estimate="${mid?.estimate}"`);
    expect(html).toContain('data-testid="trend-test"');
    expect(html).toContain('data-testid="omnibus-trend"');
    expect(html).toContain('data-testid="prediction-note"');
    expect(html).not.toContain('data-testid="joint-table"');
  });
});

describe('server check of a dose and an ordered modifier against the dictionary', () => {
  const profile = (name: string, levels: string[] | null): ColumnProfile => ({ name, levels: levels?.map((value) => ({ value, count: 10 })) ?? null, levelsTruncated: false }) as ColumnProfile;
  const dictionary: DictionaryEntry[] = [
    { name: 'readmitted', type: 'binary', description: '' },
    { name: 'minutes', type: 'count', description: '' },
    { name: 'treated', type: 'binary', description: '' },
    { name: 'frailty', type: 'categorical', description: '', ordered: { scores: { low: 1, mid: 2, high: 4 } } },
  ];
  const profiles = [profile('readmitted', ['0', '1']), profile('minutes', null), profile('treated', ['0', '1']), profile('frailty', ['low', 'mid', 'high'])];
  const base = (): Spec => parseSingleSpec({
    outcome: { column: 'readmitted', type: 'binary' }, exposure: { column: 'minutes', type: 'continuous' },
    modifier: { column: 'frailty', type: 'categorical', reference: 'low', ordered: { scores: { low: 1, mid: 2, high: 4 } } },
    covariates: [], model: 'logistic', ci: { level: 0.95, method: 'delta' },
  });
  const refusal = (spec: Spec) => {
    try {
      checkSpecAgainstDictionary(spec, dictionary, profiles);
      return null;
    } catch (error) {
      return error instanceof Error ? error.message : String(error);
    }
  };

  it('accepts the dictionary scores and refuses other scores, a binary column as a dose and the bootstrap', () => {
    expect(refusal(base())).toBeNull();
    expect(refusal({ ...base(), modifier: { ...base().modifier, ordered: { scores: { low: 1, mid: 2, high: 3 } } } })).toBe('The scores of “frailty” must be those confirmed in the extract\'s dictionary.');
    expect(refusal({ ...base(), exposure: { column: 'treated', type: 'continuous' } })).toBe('“treated” is binary; the continuous intervention (a dose) must be continuous or count.');
    expect(refusal({ ...base(), ci: { level: 0.95, method: 'bootstrap' } })).toMatch(/percentile bootstrap is for the additive measures/);
  });
});
