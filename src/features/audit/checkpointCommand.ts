/**
 * `npm run -s audit:checkpoint`: prints a checkpoint of the audit chain's head as JSON,
 * for an operator to keep outside the database (a write-once store, the governance
 * team's records; e.g. from cron: `npm run -s audit:checkpoint >> checkpoints.jsonl`).
 *
 * `npm run -s audit:checkpoint -- --verify FILE`: checks the chain, and that it still holds
 * the checkpoint in FILE unchanged; exits 0 when both hold, 1 when not, 2 on bad input.
 * FILE may hold one checkpoint, or one per line (the newest line is used).
 * Both are audit events without an actor (the operator acts outside the application).
 */
import { readFileSync } from 'node:fs';
import { sequelize, withIdentity } from '@/lib/server/db';
import { recordAudit, takeCheckpoint, verifyAuditChain } from './audit.server';
import { parseCheckpointText, type AuditCheckpoint } from './audit.schema';

function readCheckpoint(file: string): AuditCheckpoint {
  const read = parseCheckpointText(readFileSync(file, 'utf8'));
  if ('problem' in read) throw new Error(`${file} cannot be used: ${read.problem}.`);
  return read.checkpoint;
}

async function main(args: string[]): Promise<number> {
  const at = args.indexOf('--verify');
  if (at >= 0) {
    const file = args[at + 1];
    if (!file) throw new Error('--verify needs the path of a checkpoint file.');
    const checkpoint = readCheckpoint(file);
    const report = await withIdentity(null, async (t) => {
      const result = await verifyAuditChain(t, checkpoint);
      await recordAudit(t, {
        action: 'audit.verified', actorId: null,
        details: { by: 'command line', checked: result.checked, intact: result.intact, checkpointPosition: checkpoint.position, checkpointHolds: result.checkpoint?.holds ?? null },
      });
      return result;
    });
    process.stdout.write(`${JSON.stringify(report)}\n`);
    return report.intact ? 0 : 1;
  }
  const checkpoint = await withIdentity(null, async (t) => {
    const taken = await takeCheckpoint(t);
    if (!taken) throw new Error('The audit trail holds no events yet.');
    await recordAudit(t, { action: 'audit.checkpoint-exported', actorId: null, details: { by: 'command line', position: taken.position, hash: taken.hash } });
    return taken;
  });
  process.stdout.write(`${JSON.stringify(checkpoint)}\n`);
  return 0;
}

try {
  process.exitCode = await main(process.argv.slice(2));
} catch (error) {
  process.stderr.write(`${JSON.stringify({ error: error instanceof Error ? error.message : String(error) })}\n`);
  process.exitCode = 2;
} finally {
  await sequelize.close();
}
