/**
 * Makes a confirmed extract version from CSV text through the same code an upload uses
 * (read, screen, profile, store, confirm), as the given analyst.
 */
import { randomUUID } from 'node:crypto';
import { readExtractColumns, reviewExtractColumns } from '@/features/extracts/extracts';
import type { DictionaryEntry } from '@/features/extracts/extracts.schema';
import { confirmVersion, storeVersion } from '@/features/extracts/extracts.server';
import { sequelize, withIdentity } from '@/lib/server/db';

export async function makeReadyExtract(
  analystId: string,
  initiativeId: string,
  csv: string,
  options: { name?: string; types?: Record<string, DictionaryEntry['type']> } = {},
): Promise<{ extractId: string; versionId: string }> {
  const start = { initiativeId, extractId: randomUUID(), versionId: randomUUID(), name: options.name ?? 'Test extract (synthetic)', newExtract: true };
  const read = await readExtractColumns([Buffer.from(csv)]);
  const review = reviewExtractColumns(read.columns);
  if (review.refused) throw new Error(`test extract refused: ${review.refusals.map((r) => r.message).join('; ')}`);
  await withIdentity(analystId, async (t) => {
    await sequelize.query(
      `INSERT INTO extract_intakes (id, extract_id, initiative_id, name, new_extract, uploaded_by, status, stage)
       VALUES (:versionId, :extractId, :initiativeId, :name, true, :userId, 'processing', 'storing')`,
      { replacements: { ...start, userId: analystId }, transaction: t },
    );
    const actor = { id: analystId, clientAddress: 'test' };
    await storeVersion(sequelize, t, actor, start, read, review.profile, review.findings);
    await confirmVersion(t, { ...actor, displayName: 'Test analyst' }, start.extractId, start.versionId, {
      attestation: { signedName: 'Test analyst' },
      columns: review.profile.map((p) => ({ name: p.name, type: options.types?.[p.name] ?? (p.inferredType as DictionaryEntry['type']), description: '' })),
    });
  });
  return { extractId: start.extractId, versionId: start.versionId };
}
