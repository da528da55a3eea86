/**
 * The run worker: `npm run worker` (and `npm start`, beside the app). Takes analysis runs
 * from the PostgreSQL-backed queue, one at a time, executes them (executeRun.ts), and
 * sweeps runs whose worker died or whose job is gone. Any number of workers on any number
 * of machines can share the queue.
 */
import { hostname } from 'node:os';
import { sequelize } from '@/lib/server/db';
import { logger } from '@/lib/server/logger';
import { createQueue, startWhenReachable } from '@/lib/server/queue';
import { executeRun } from './executeRun';
import { RUN_QUEUE, type RunJob } from './runQueue';
import { sweepStaleRuns } from './runs.server';
import { mailSettled, sendDigests, sendOverdueNotificationMail } from '../notifications/notificationMail.server';

const SWEEP_MS = 15_000;
/** How often the worker looks for daily notification digests that are due (each person's gap is a day). */
const DIGEST_CHECK_MS = 15 * 60_000;
/** How often the worker sends immediate notification mail that its sender did not (see notificationMail.server.ts). */
const OVERDUE_MAIL_CHECK_MS = 30_000;
const name = `${hostname()}:${process.pid}`;

export async function startWorker(): Promise<{ stop: () => Promise<void> }> {
  const boss = createQueue({ supervise: true });
  await startWhenReachable(boss);
  await boss.work<RunJob>(RUN_QUEUE, { batchSize: 1, pollingIntervalSeconds: 1 }, async ([job]) => {
    logger.info({ runId: job.data.runId, worker: name }, 'run taken');
    const status = await executeRun(job.data.runId, job.data.startedBy, { workerName: name });
    if (status === 'not-queued') logger.info({ runId: job.data.runId }, 'run no longer queued (cancelled, or executed already); nothing to do');
    else logger.info({ runId: job.data.runId, status }, 'run ended');
  });
  const sweep = setInterval(() => {
    sweepStaleRuns().then((ids) => {
      if (ids.length) logger.warn({ runs: ids }, 'runs whose worker stopped or whose job was gone were marked failed');
    }).catch((error: unknown) => logger.warn({ err: error }, 'stale-run sweep failed'));
  }, SWEEP_MS);
  const digests = setInterval(() => {
    sendDigests().then((sent) => {
      if (sent) logger.info({ sent }, 'notification digests sent');
    }).catch((error: unknown) => logger.warn({ err: error }, 'notification digests failed'));
  }, DIGEST_CHECK_MS);
  const overdueMail = setInterval(() => {
    sendOverdueNotificationMail().then((sent) => {
      if (sent) logger.info({ sent }, 'overdue notification e-mails sent');
    }).catch((error: unknown) => logger.warn({ err: error }, 'overdue notification e-mails failed'));
  }, OVERDUE_MAIL_CHECK_MS);
  logger.info({ worker: name }, 'worker ready');
  return {
    stop: async () => {
      clearInterval(sweep);
      clearInterval(digests);
      clearInterval(overdueMail);
      await boss.stop({ graceful: true, timeout: 5_000 });
      await mailSettled();
      await sequelize.close();
    },
  };
}

if (process.argv[1] && import.meta.url.endsWith(process.argv[1].split('/').pop() ?? '')) {
  const worker = await startWorker();
  const stop = () => {
    worker.stop().then(() => process.exit(0)).catch(() => process.exit(1));
  };
  process.on('SIGTERM', stop);
  process.on('SIGINT', stop);
}
