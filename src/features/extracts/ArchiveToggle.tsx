/** Archive or restore an extract; archiving hides it from new analyses and deletes nothing. */
import { useMutation } from '@tanstack/react-query';
import { apiFetch } from '@/lib/client/api';
import { QueryRoot } from '@/components/ui/QueryRoot';

function Toggle({ extractId, archived }: { extractId: string; archived: boolean }) {
  const change = useMutation({
    mutationFn: () => apiFetch(`/api/extracts/${extractId}/archive`, { method: 'POST', body: { archived: !archived } }),
    onSuccess: () => window.location.reload(),
  });
  return (
    <span className="inline-flex items-center gap-2">
      <button
        type="button"
        className="btn btn-secondary"
        disabled={change.isPending}
        onClick={() => {
          if (!archived && !window.confirm('Archive this extract? It disappears from new analyses; its versions and every run on them stay. You can restore it at any time.')) return;
          change.mutate();
        }}
      >
        {archived ? 'Restore extract' : 'Archive extract'}
      </button>
      {change.error && <span role="alert" className="text-sm text-brick-700">{change.error.message}</span>}
    </span>
  );
}

export default function ArchiveToggle(props: { extractId: string; archived: boolean }) {
  return (
    <QueryRoot>
      <Toggle {...props} />
    </QueryRoot>
  );
}
