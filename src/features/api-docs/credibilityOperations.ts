/** The credibility endpoints of the OpenAPI catalogue (apiCatalogue.ts): how credible a run's subgroup claim is. */
import type { Operation } from './operation';
import { CredibilityBody, CredibilityView } from '../credibility/credibility.schema';

export const CREDIBILITY_OPERATIONS: Operation[] = [
  { method: 'GET', path: '/api/runs/{runId}/credibility', tag: 'Review', summary: "The credibility of a run's subgroup claim: computed items, the clinician's ratings and the overall rating", auth: 'session', response: CredibilityView, status: 200,
    description: 'Every member of the initiative (404 otherwise). The computed items come from Crossgrain\'s own records and cannot be edited: prespecification (the register or the analysis\'s declaration), the predicted direction and whether the result agrees, the within-study comparison, the modifiers examined for the outcome, the interaction test with a Bonferroni adjustment for that number, how a numeric modifier was analysed, and related outcomes. The overall rating (high, moderate, low, very low) follows Crossgrain\'s rule, stated in `rule`. 409 for a run without a result or a verifying re-run.' },
  { method: 'PUT', path: '/api/runs/{runId}/credibility', tag: 'Review', summary: 'Rate the clinical rationale and the prior evidence, each with a note (clinicians)', auth: 'session', body: CredibilityBody, response: CredibilityView, status: 200,
    description: 'Clinicians of the initiative who may decide on the run (never a run they started): 403 otherwise, 404 for non-members, 400 for a bad body (nothing stored). Audited as `credibility.rated` with the values before and after.' },
];
