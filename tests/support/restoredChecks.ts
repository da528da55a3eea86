/**
 * Run in a separate process pointed at a restored cluster (CROSSGRAIN_DB_PORT): checks the
 * audit chain against a checkpoint taken before the backup, re-runs one run to verify it
 * (as the auditor), and prints one JSON line with what it found.
 * Usage: tsx restoredChecks.ts <checkpoint JSON> <auditorId> <runId>
 */
import { verifyAuditChain } from '@/features/audit/audit.server';
import { parseCheckpointText } from '@/features/audit/audit.schema';
import { executeRun } from '@/features/runs/executeRun';
import { getRun, startVerification } from '@/features/runs/runs.server';
import { sequelize, withIdentity } from '@/lib/server/db';

const [checkpointText, auditorId, runId] = process.argv.slice(2);
const read = parseCheckpointText(checkpointText);
if ('problem' in read) throw new Error(read.problem);
const chain = await withIdentity(null, (t) => verifyAuditChain(t, read.checkpoint));
const { runId: rerunId } = await withIdentity(auditorId, (t) => startVerification(t, { id: auditorId, clientAddress: 'restore-test' }, runId));
const status = await executeRun(rerunId, auditorId, { threads: 0 });
const rerun = await withIdentity(auditorId, (t) => getRun(t, rerunId, { withResult: false }));
process.stdout.write(`${JSON.stringify({ chain, status, verification: rerun?.verification ?? null })}\n`);
await sequelize.close();
process.exit(0);
