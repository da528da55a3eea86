/**
 * Bootstrap accounting on a case where some resamples separate. The data are a hand-built
 * table (no outcome model): 2 × 2 joint cells of intervention × modifier level, one of them
 * (treated, level "B") with only 4 events among 100 rows. Each of the 1,000 draws of a
 * resample picks one of those 4 event rows with probability 4/1000, so the cell ends with no
 * events with probability (1 − 0.004)¹⁰⁰⁰ ≈ e⁻⁴ ≈ 1.8 % (elementary probability), and then the treated/B log odds runs off to −∞ and RERI is not defined
 * (the full-data issue: |RERI| beyond 1e6 in such resamples). Every expected count below is
 * recomputed here from the engine's own resampling streams (replicate r draws
 * Xoshiro128StarStar.forStream(seed, r)), independently of the fitting code.
 */
import { describe, expect, it } from 'vitest';
import { runAnalysis } from '@/engine/index.js';
import { resampleCounts, Xoshiro128StarStar } from '@/engine/random/xoshiro128StarStar.js';
import type { AnalysisSpec, EngineData } from '@/engine/types.js';
import { ResultSchema } from '@/engine/boundary/schemas.js';

/** [treated, level, rows, events] per joint cell. */
const CELLS: [number, number, number, number][] = [
  [0, 0, 300, 30],
  [1, 0, 300, 45],
  [0, 1, 300, 40],
  [1, 1, 100, 4],
];

function buildData(): { data: EngineData; cellOfRow: Int32Array; events: Float64Array } {
  const rows = CELLS.reduce((total, cell) => total + cell[2], 0);
  const treated = new Float64Array(rows);
  const level = new Int32Array(rows);
  const outcome = new Float64Array(rows);
  const cellOfRow = new Int32Array(rows);
  let i = 0;
  CELLS.forEach(([t, m, n, events], cell) => {
    for (let k = 0; k < n; k++, i++) {
      treated[i] = t;
      level[i] = m;
      outcome[i] = k < events ? 1 : 0;
      cellOfRow[i] = cell;
    }
  });
  const data: EngineData = {
    rowCount: rows,
    columns: {
      treated: { kind: 'numeric', values: treated },
      level: { kind: 'categorical', codes: level, levels: ['A', 'B'] },
      event: { kind: 'numeric', values: outcome },
    },
  };
  return { data, cellOfRow, events: outcome };
}

const spec: AnalysisSpec = {
  outcome: { column: 'event', type: 'binary' },
  exposure: { column: 'treated', reference: '0' },
  modifier: { column: 'level', type: 'categorical', reference: 'A' },
  covariates: [],
  model: 'logistic',
  ci: { level: 0.95, method: 'bootstrap', replicates: 2000, seed: 7 },
};

/** Replicates whose resample has a joint cell without events or with only events. */
function separatedReplicates(cellOfRow: Int32Array, events: Float64Array, replicates: number, seed: number): number {
  const counts = new Float64Array(cellOfRow.length);
  let separated = 0;
  for (let r = 0; r < replicates; r++) {
    resampleCounts(Xoshiro128StarStar.forStream(seed, r), cellOfRow.length, counts);
    const rows = [0, 0, 0, 0];
    const hits = [0, 0, 0, 0];
    for (let i = 0; i < counts.length; i++) {
      rows[cellOfRow[i]] += counts[i];
      hits[cellOfRow[i]] += counts[i] * events[i];
    }
    if (rows.some((n, cell) => n > 0 && (hits[cell] === 0 || hits[cell] === n))) separated++;
  }
  return separated;
}

describe('bootstrap accounting', () => {
  it('counts the separated resamples, leaves them out, states the rule and flags the interval', async () => {
    const { data, cellOfRow, events } = buildData();
    const result = await runAnalysis(data, spec, { threads: 0 });
    expect(ResultSchema.safeParse(result).success).toBe(true);
    const bootstrap = result.bootstrap!;
    const expectedSeparated = separatedReplicates(cellOfRow, events, 2000, 7);
    // About e⁻⁴ ≈ 1.8 % of 2,000 (see the header); the exact number from the streams.
    expect(expectedSeparated).toBeGreaterThan(20);
    expect(expectedSeparated).toBeLessThan(60);
    const failures = bootstrap.failures ?? expect.unreachable('the engine records the failures by reason');
    expect(failures.separated, `separated replicates (${expectedSeparated} by the streams)`).toBe(expectedSeparated);
    expect(bootstrap.failed).toBe(failures.separated + failures.notConverged + failures.fitFailed + failures.undefinedMeasure);
    expect(bootstrap.successful + bootstrap.failed).toBe(2000);
    expect(bootstrap.flagged).toBe(bootstrap.failed > 20);
    expect(bootstrap.flagged).toBe(true);
    expect(bootstrap.rule).toMatch(/left out of every percentile interval.*more than 1%/);
    const warning = result.warnings.find((w) => w.code === 'BOOTSTRAP_FAILED_REPLICATES')!;
    expect(warning.message).toContain(`${bootstrap.failed} of 2000 bootstrap replicates`);
    expect(warning.message).toContain(`${expectedSeparated} separated`);
    expect(warning.message).toContain('flagged');
    // The percentile limits come from the resamples where RERI exists: finite and moderate.
    const reri = result.interaction.additive[0].reri!;
    expect(reri.method).toBe('bootstrap');
    expect(Math.abs(reri.lower!)).toBeLessThan(1e3);
    expect(Math.abs(reri.upper!)).toBeLessThan(1e3);
    console.info(`bootstrap accounting: ${bootstrap.failed} of 2000 left out`, bootstrap.failures);
  });

  it('gives the same accounting on two worker threads', async () => {
    const { data } = buildData();
    const inProcess = await runAnalysis(data, { ...spec, ci: { ...spec.ci, replicates: 300 } }, { threads: 0 });
    const threaded = await runAnalysis(data, { ...spec, ci: { ...spec.ci, replicates: 300 } }, { threads: 2 });
    expect(threaded.bootstrap).toEqual(inProcess.bootstrap);
    expect(JSON.stringify(threaded.interaction)).toBe(JSON.stringify(inProcess.interaction));
  });
});
