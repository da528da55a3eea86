import { describe, expect, it } from 'vitest';
import { z } from 'zod';
import { ingestExtract } from './extracts';
import { ExtractRefusalError } from './extractRefusal';
import { ColumnProfile, ConfirmVersionBody, Finding, RefusalReason, VersionStatus } from './extracts.schema';
import { chunked } from './testSupport';

describe('extract API schemas', () => {
  it('accept what the pipeline produces: profiles, findings and refusal reasons', async () => {
    const csv = 'outcome,band,los,contact\n1,a,2.5,x@example.org\n0,b,3,y@example.org\n1,a,,z@example.org\n';
    const result = await ingestExtract(chunked(csv, 8));
    expect(z.array(ColumnProfile).parse(result.profile)).toEqual(result.profile);
    expect(result.findings.length).toBeGreaterThan(0);
    expect(z.array(Finding).parse(result.findings)).toEqual(result.findings);
    const reason = new ExtractRefusalError('ragged-row', 'Line 4: ...', 4).toJSON();
    expect(RefusalReason.parse(reason)).toEqual(reason);
    const status = { status: 'refused', reasons: [], findings: result.findings };
    expect(VersionStatus.parse(status)).toEqual(status);
  });

  it('validate the confirm body: a signed name, and only analysable types', () => {
    expect(ConfirmVersionBody.parse({ attestation: { signedName: ' A. Analyst ' } })).toEqual({ attestation: { signedName: 'A. Analyst' } });
    const withColumns = ConfirmVersionBody.parse({ attestation: { signedName: 'A' }, columns: [{ name: 'los', type: 'continuous' }] });
    expect(withColumns.columns?.[0]).toEqual({ name: 'los', type: 'continuous', description: '' });
    expect(ConfirmVersionBody.safeParse({ attestation: { signedName: '  ' } }).success).toBe(false);
    expect(ConfirmVersionBody.safeParse({ attestation: { signedName: 'A' }, columns: [{ name: 'dob', type: 'date-like' }] }).success).toBe(false);
  });
});
