/** The auditor's "Re-run to verify" button on a finished run's page. */
import { useMutation } from '@tanstack/react-query';
import { apiFetch } from '@/lib/client/api';
import { useHydrated } from '@/lib/client/useHydrated';
import { QueryRoot } from '@/components/ui/QueryRoot';

function Button({ runId }: { runId: string }) {
  const hydrated = useHydrated();
  const verify = useMutation({
    mutationFn: () => apiFetch<{ runId: string }>(`/api/runs/${encodeURIComponent(runId)}/verify`, { method: 'POST', body: {} }),
    onSuccess: ({ runId: rerunId }) => window.location.assign(`/runs/${encodeURIComponent(rerunId)}`),
  });
  return (
    <div>
      <button type="button" className="btn btn-secondary" onClick={() => verify.mutate()} disabled={!hydrated || verify.isPending || verify.isSuccess} data-testid="verify-run">
        {verify.isPending || verify.isSuccess ? 'Queuing the re-run…' : 'Re-run to verify'}
      </button>
      {verify.error && <p role="alert" className="field-error">{verify.error.message}</p>}
    </div>
  );
}

export default function VerifyButton(props: { runId: string }) {
  return (
    <QueryRoot>
      <Button {...props} />
    </QueryRoot>
  );
}
