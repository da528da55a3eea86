/** Lets an auditor recompute the audit trail's hash chain and see whether it is intact. */
import { useMutation } from '@tanstack/react-query';
import { apiFetch } from '../../lib/client/api';
import { QueryRoot } from '../../components/ui/QueryRoot';

interface ChainReport {
  checked: number;
  intact: boolean;
  headPosition: number | null;
  headHash: string | null;
  broken: { position: number; eventId: number; reason: string } | null;
}

function Check() {
  const verify = useMutation({ mutationFn: () => apiFetch<ChainReport>('/api/audit/verify', { method: 'POST', body: {} }) });
  const report = verify.data;
  return (
    <div>
      <button type="button" className="btn btn-secondary" onClick={() => verify.mutate()} disabled={verify.isPending}>
        {verify.isPending ? 'Checking…' : 'Verify the audit trail'}
      </button>
      {verify.error && <p role="alert" className="field-error">{verify.error.message}</p>}
      {report && (
        <p role="status" data-testid="chain-report" className={`mt-2 text-sm ${report.intact ? 'text-reed-700' : 'text-brick-700 font-semibold'}`}>
          {report.intact
            ? `Intact: all ${report.checked.toLocaleString('en-GB')} events link up and match their hashes. Head at position ${report.headPosition}, hash ${report.headHash?.slice(0, 16)}…`
            : `Broken at position ${report.broken?.position} (event ${report.broken?.eventId}): ${report.broken?.reason}. ${report.checked.toLocaleString('en-GB')} events before it are intact.`}
        </p>
      )}
    </div>
  );
}

export default function ChainCheck() {
  return (
    <QueryRoot>
      <Check />
    </QueryRoot>
  );
}
