import { describe, expect, it } from 'vitest';
import { ResultSchema, SpecSchema } from '@/engine/boundary/schemas.js';
import { runAnalysis } from '@/engine/index.js';
import type { AnalysisSpec } from '@/engine/types.js';
import { loadDataset } from './support/loadFixtures.js';

const infert = loadDataset('infert');
const spec: AnalysisSpec = {
  outcome: { column: 'case', type: 'binary' },
  exposure: { column: 'induced_any', reference: '0' },
  modifier: { column: 'education', type: 'categorical', reference: '6-11yrs' },
  covariates: [{ column: 'age', type: 'continuous' }, { column: 'parity', type: 'continuous' }],
  model: 'logistic',
  ci: { level: 0.95, method: 'delta' },
};

describe('warnings with stable codes', () => {
  it('names the stratum with no events (separation) and sparse strata, and flags a common outcome', async () => {
    // R datasets::infert: education 0-5yrs has 4 unexposed women, none of them cases.
    const result = await runAnalysis(infert, spec);
    const separation = result.warnings.find((w) => w.code === 'SEPARATION');
    expect(separation).toMatchObject({ column: 'education', level: '0-5yrs' });
    expect(separation!.message).toContain('education=0-5yrs, induced_any=0');
    expect(result.warnings.some((w) => w.code === 'SPARSE_STRATUM' && w.level === '0-5yrs')).toBe(true);
    // infert: 83 cases of 248 rows, 33% > 10% (methods.md: "say over 10 %").
    expect(result.warnings.map((w) => w.code)).toContain('COMMON_OUTCOME_OR_RERI');
    expect(ResultSchema.safeParse(result).success).toBe(true);
  });
  it('falls back from log-binomial to modified Poisson when the log-binomial fails, and says so', async () => {
    // With spontaneous as the modifier and education as a covariate, R's glm(binomial(log))
    // does not converge from (log ȳ, 0, …) (see make-fixtures.R); the engine falls back.
    const result = await runAnalysis(infert, {
      ...spec,
      model: 'log-binomial',
      modifier: { column: 'spontaneous', type: 'categorical', reference: '0' },
      covariates: [...spec.covariates, { column: 'education', type: 'categorical', reference: '6-11yrs' }],
    });
    expect(result.model.requestedFamily).toBe('log-binomial');
    expect(result.model.family).toBe('modified-poisson');
    expect(result.model.standardErrors).toBe('HC0');
    expect(result.warnings.map((w) => w.code)).toContain('LOG_BINOMIAL_FALLBACK');
  });
  it('continuous modifier: slopes at chosen percentiles and 100 band points', async () => {
    const result = await runAnalysis(infert, {
      ...spec,
      modifier: { column: 'age', type: 'continuous', centre: 'mean', slopesAt: { kind: 'percentiles', percentiles: [25, 50, 75] } },
      covariates: [{ column: 'parity', type: 'continuous' }],
    });
    expect(result.slopes!.map((s) => s.label)).toEqual(['25th percentile', '50th percentile', '75th percentile']);
    expect(result.band).toHaveLength(100);
    expect(result.band![0].x).toBe(result.modifier.observed![0]);
    expect(result.band![99].x).toBe(result.modifier.observed![1]);
    expect(result.johnsonNeyman!.observed).toEqual(result.modifier.observed);
    expect(result.strata).toEqual([]);
    expect(ResultSchema.safeParse(result).success).toBe(true);
  });
  it('continuous modifier: named values keep their names, and the spread says where the data lie', async () => {
    const result = await runAnalysis(infert, {
      ...spec,
      modifier: { column: 'age', type: 'continuous', slopesAt: { kind: 'values', values: [25, 31, 38], names: ['young', '', 'older'] } },
      covariates: [{ column: 'parity', type: 'continuous' }],
    });
    expect(result.slopes!.map((s) => [s.label, s.at])).toEqual([['young', 25], ['at 31', 31], ['older', 38]]);
    // R 4.2.2: quantile(infert$age, c(0.05, 0.95), type = 7) → 24, 40
    expect(result.spread!.p5).toBe(24);
    expect(result.spread!.p95).toBe(40);
    // R 4.2.2: as.vector(table(cut(infert$age, seq(min(infert$age), max(infert$age), length.out = 11), right = FALSE, include.lowest = TRUE)))
    expect(result.spread!.bins.map((bin) => bin.n)).toEqual([12, 18, 30, 54, 36, 18, 45, 17, 9, 9]);
    expect(ResultSchema.safeParse(result).success).toBe(true);
  });
  it('refuses a list of names that does not match the values', () => {
    const parsed = SpecSchema.safeParse({ ...spec, modifier: { column: 'age', type: 'continuous', slopesAt: { kind: 'values', values: [25, 31], names: ['young'] } } });
    expect(parsed.success).toBe(false);
  });
});
