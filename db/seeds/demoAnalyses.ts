/**
 * The demo analyses, so that a first look at `npm start` finds results to read: one
 * analysis per demo initiative on its synthetic extract, run once through the same code
 * the job worker uses, and the call-back run submitted for review, so the demo clinician
 * finds it waiting on the review board. Everything is done as the demo analyst, through
 * the product's own functions (row-level security and the audit trail apply). Idempotent:
 * a demo analysis that exists (by its title, in its initiative) is left alone. `npm start` calls it; the test
 * suite does not (its tests create their own analyses).
 */
import { QueryTypes } from 'sequelize';
import { createAnalysis } from '@/features/analyses/analyses.server';
import { CALL_BACK_DEMO_SPEC, UP_AND_ABOUT_DEMO_SPEC } from '@/features/analyses/demoSpecs';
import { reviewedRun, submitForReview } from '@/features/review/review.server';
import { executeRun } from '@/features/runs/executeRun';
import { getRun, startRun } from '@/features/runs/runs.server';
import { sequelize, withIdentity } from '@/lib/server/db';
import type { Spec } from '@/engine/boundary/schemas';
import { DEMO_USERS, demoEmail } from './demo';

interface DemoAnalysis {
  initiativeSlug: string;
  title: string;
  question: string;
  spec: Spec;
  submitNote?: string;
}

const DEMO_ANALYSES: DemoAnalysis[] = [
  {
    initiativeSlug: 'call-back-72h',
    title: 'Readmissions by age band (demo)',
    question: 'Does the 72-hour call-back prevent more readmissions in older patients than in younger ones?',
    spec: CALL_BACK_DEMO_SPEC,
    submitNote: 'Demo: the age-band gradient is ready for a clinical read.',
  },
  {
    initiativeSlug: 'up-and-about',
    title: 'Length of stay by frailty (demo)',
    question: 'Does early mobility shorten stays more for frailer patients?',
    spec: UP_AND_ABOUT_DEMO_SPEC,
  },
];

/** Creates, runs and (where set) submits the demo analyses; answers how many were created. */
export async function seedDemoAnalyses(): Promise<number> {
  const analyst = DEMO_USERS.find((u) => u.role === 'analyst');
  if (!analyst) return 0;
  const [user] = await sequelize.query<{ id: string }>('SELECT id FROM users WHERE email = :email', {
    replacements: { email: demoEmail(analyst.local) }, type: QueryTypes.SELECT,
  });
  if (!user) return 0;
  const actor = { id: user.id, clientAddress: 'demo-seed' };
  let created = 0;
  for (const demo of DEMO_ANALYSES) {
    const queued = await withIdentity(user.id, async (t) => {
      const [initiative] = await sequelize.query<{ id: string; analyses: string; version_id: string | null }>(
        `SELECT i.id, (SELECT count(*) FROM analyses a WHERE a.initiative_id = i.id AND a.title = :title) AS analyses,
                (SELECT v.id FROM extract_versions v WHERE v.initiative_id = i.id AND v.status = 'ready' ORDER BY v.confirmed_at LIMIT 1) AS version_id
           FROM initiatives i WHERE i.slug = :slug`,
        { replacements: { slug: demo.initiativeSlug, title: demo.title }, type: QueryTypes.SELECT, transaction: t },
      );
      if (!initiative || Number(initiative.analyses) > 0 || !initiative.version_id) return null;
      const { id } = await createAnalysis(t, actor, {
        initiativeId: initiative.id, extractVersionId: initiative.version_id, title: demo.title, question: demo.question, prespecified: true, spec: demo.spec,
      });
      // Executed below, in this process. The run's job stays queued; a worker that takes it
      // later finds the run no longer queued and leaves it as it is.
      return (await startRun(t, actor, id)).runId;
    });
    if (!queued) continue;
    created += 1;
    const status = await executeRun(queued, user.id, { threads: 0, workerName: 'demo-seed' });
    if (status !== 'succeeded') throw new Error(`The demo analysis "${demo.title}" ended ${status}`);
    if (demo.submitNote) {
      await withIdentity(user.id, async (t) => {
        const run = await getRun(t, queued, { withResult: false });
        if (!run) throw new Error('The demo run vanished');
        await submitForReview(t, actor, reviewedRun(run), demo.submitNote);
      });
    }
  }
  return created;
}
