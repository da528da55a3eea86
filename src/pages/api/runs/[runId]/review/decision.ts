import { confirmSigner } from '@/features/auth/signature.server';
import { decideReview, reviewedRun, reviewOf } from '@/features/review/review.server';
import { DecisionBody } from '@/features/review/review.schema';
import { readableRun, storedResultDigest } from '@/features/runs/runAccess';
import { authorize } from '@/lib/server/authorize';
import { conflict } from '@/lib/server/errors';
import { clientAddress, endpoint, json, parseBody, requireUser, uuidParam } from '@/lib/server/http';

/**
 * POST /api/runs/{runId}/review/decision: a clinician signs a submitted run off or sends it
 * back (a note saying why is required); never on a run they started. Either decision is an
 * electronic signature: the signer's password again and a stated meaning, from a browser
 * session (never an API token); the step is bound to the result's digest. A wrong password
 * records no step and counts toward sign-in throttling. Answers the review.
 */
export const POST = endpoint(async (context) => {
  const user = requireUser(context.locals);
  const runId = uuidParam(context.params.runId, 'That run');
  const { decision, note, meaning, password } = await parseBody(context.request, DecisionBody);
  const address = clientAddress(context);
  // Who may decide is checked first, so the password is only ever tried by someone allowed to sign.
  const run = await context.locals.db(async (t) => {
    const found = await readableRun(t, user, runId);
    authorize(user, 'decide', 'Run', { initiativeId: found.initiativeId, startedBy: found.startedBy.id });
    return found;
  });
  await confirmSigner(user, context.locals.session, password, address, { runId, initiativeId: run.initiativeId });
  return json(
    await context.locals.db(async (t) => {
      const current = await readableRun(t, user, runId);
      authorize(user, 'decide', 'Run', { initiativeId: current.initiativeId, startedBy: current.startedBy.id });
      // The signature names the numbers it signs: the digest of the result as stored.
      const resultDigest = current.status === 'succeeded' ? await storedResultDigest(t, runId) : null;
      if (current.status === 'succeeded' && !resultDigest) throw conflict('This run has no stored result to sign.');
      await decideReview(t, { id: user.id, clientAddress: address }, reviewedRun(current), decision, note, { meaning, resultDigest: resultDigest ?? '' });
      return reviewOf(t, runId);
    }),
  );
});
