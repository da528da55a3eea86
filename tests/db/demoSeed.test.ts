/**
 * The demo data that `npm start` loads: the synthetic extracts, and the demo analyses run
 * once through the worker's code, with the call-back run waiting for review. Loading twice
 * changes nothing. The demo cohort's generator sets the truth for the frailty analysis
 * (src/features/extracts/demoCohorts.ts: product-term coefficient -0.35 days per frailty
 * point), so the stored estimate must recover it (simulation check, truth set by the
 * generator; tolerance 3 standard errors).
 */
import { afterAll, describe, expect, it } from 'vitest';
import { QueryTypes } from 'sequelize';
import { seedDemo } from '../../db/seed';
import { seedDemoAnalyses } from '../../db/seeds/demoAnalyses';
import { seedDemoExtracts } from '../../db/seeds/demoExtracts';
import { closeOwnerDb, ownerDb } from '../support/factories';

afterAll(async () => {
  await closeOwnerDb();
});

describe('the demo analyses', () => {
  it('are created and run once, with the call-back run submitted for review', async () => {
    await seedDemo(ownerDb());
    await seedDemoExtracts();
    const first = await seedDemoAnalyses();
    expect(await seedDemoAnalyses()).toBe(0);
    const runs = await ownerDb().query<{ title: string; status: string; kind: string | null; result: { model: { coefficients: { term: string; estimate: number; se: number }[] } } }>(
      `SELECT a.title, r.status, r.result,
              (SELECT s.kind FROM review_steps s WHERE s.run_id = r.id ORDER BY s.id DESC LIMIT 1) AS kind
         FROM analyses a JOIN runs r ON r.analysis_id = a.id WHERE a.title LIKE '%(demo)' ORDER BY a.title`,
      { type: QueryTypes.SELECT },
    );
    expect(first).toBe(2);
    expect(runs.map((r) => [r.title, r.status, r.kind])).toEqual([
      ['Length of stay by frailty (demo)', 'succeeded', null],
      ['Readmissions by age band (demo)', 'succeeded', 'submitted'],
    ]);
    const product = runs[0].result.model.coefficients.find((c) => c.term.includes('×'))!;
    expect(Math.abs(product.estimate - -0.35)).toBeLessThan(3 * product.se);
  });
});
