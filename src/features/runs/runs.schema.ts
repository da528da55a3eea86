import { z } from 'zod';

/** Where a run stands: the one list, also the database's check on analysis_runs.status. */
export const RunStatus = z.enum(['queued', 'running', 'succeeded', 'failed', 'cancelled']);
export type RunStatus = z.infer<typeof RunStatus>;
