import { databaseAnswers } from '@/lib/server/db';
import { endpoint, json } from '@/lib/server/http';
import { APP_VERSION } from '@/lib/server/version';

/** GET /api/health: the app's version and whether the database answers. */
export const GET = endpoint(async () => {
  const database = await databaseAnswers();
  return json({ status: database ? 'ok' : 'degraded', version: APP_VERSION, database: database ? 'up' : 'down' }, database ? 200 : 503);
});
