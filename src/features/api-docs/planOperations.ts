/** The planning endpoints of the OpenAPI catalogue (apiCatalogue.ts): the plan before the data and the register of prespecified modifiers. */
import { z } from 'zod';
import type { Operation } from './operation';
import { PlanCheckBody, PlanFiguresView, RegisterBody, RegisterEntryView, SavedPlanView, SavePlanBody, WithdrawBody } from '../planning/planning.schema';

const Plans = z.object({ current: SavedPlanView.nullable(), history: z.array(SavedPlanView) });

export const PLAN_OPERATIONS: Operation[] = [
  { method: 'GET', path: '/api/initiatives/{initiativeId}/plan', tag: 'Plans', summary: 'The plan in force and the earlier ones', auth: 'session', response: Plans, status: 200 },
  { method: 'PUT', path: '/api/initiatives/{initiativeId}/plan', tag: 'Plans', summary: 'Save a new plan (analysts); earlier plans stay as history', auth: 'session', body: SavePlanBody, response: Plans, status: 200 },
  { method: 'POST', path: '/api/initiatives/{initiativeId}/plan/check', tag: 'Plans', summary: 'The calculator: rows for 80 % and 90 % power, power at given rows, and optionally a seeded simulation', auth: 'session', body: PlanCheckBody, response: PlanFiguresView, status: 200,
    description: 'The closed form is the normal approximation for the saturated intervention × modifier design; the simulation draws 1,000 data sets with the engine\'s seeded generator and counts how often the interaction\'s Wald test rejects. Saves nothing.' },
  { method: 'GET', path: '/api/initiatives/{initiativeId}/prespecified-modifiers', tag: 'Plans', summary: 'The register of prespecified modifiers, oldest first', auth: 'session', response: z.array(RegisterEntryView), status: 200 },
  { method: 'POST', path: '/api/initiatives/{initiativeId}/prespecified-modifiers', tag: 'Plans', summary: 'Register a modifier with its predicted direction, stamped now (analysts)', auth: 'session', body: RegisterBody, response: z.object({ id: z.uuid() }), status: 201 },
  { method: 'POST', path: '/api/initiatives/{initiativeId}/prespecified-modifiers/{entryId}/withdraw', tag: 'Plans', summary: 'Withdraw an entry with a reason; it stays on the register, marked (analysts)', auth: 'session', body: WithdrawBody, response: z.array(RegisterEntryView), status: 200 },
];
