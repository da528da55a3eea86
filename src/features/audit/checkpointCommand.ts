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
import { sequelize, withIdentity } from '../../lib/server/db';
import { recordAudit, takeCheckpoint, verifyAuditChain } from './audit.server';
import { AuditCheckpoint } from './audit.schema';

function readCheckpoint(file: string): AuditCheckpoint {
  const lines = readFileSync(file, 'utf8').split('\n').map((line) => line.trim()).filter(Boolean);
  const text = lines.length > 1 && lines.every((line) => line.startsWith('{') && line.endsWith('}')) ? lines.at(-1)! : lines.join('\n');
  let raw: unknown;
  try {
    raw = JSON.parse(text);
  } catch {
    throw new Error(`${file} is not JSON; a checkpoint file holds the JSON that audit:checkpoint printed.`);
  }
  const parsed = AuditCheckpoint.safeParse(raw);
  if (!parsed.success) throw new Error(`${file} is not a Crossgrain audit checkpoint: ${parsed.error.issues.map((issue) => `${issue.path.join('.') || 'file'}: ${issue.message}`).join('; ')}`);
  return parsed.data;
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
