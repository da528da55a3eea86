/** "Draft a brief" on a signed-off run's results page (analysts): title and summary, then the brief's page. */
import { useMutation } from '@tanstack/react-query';
import { useState, type SubmitEvent } from 'react';
import { HydratedFieldset } from '@/components/ui/HydratedFieldset';
import { QueryRoot } from '@/components/ui/QueryRoot';
import { apiFetch } from '@/lib/client/api';
import { errorText } from '@/lib/client/errorText';

function Form({ runId }: { runId: string }) {
  const [title, setTitle] = useState('');
  const [summary, setSummary] = useState('');
  const draft = useMutation({
    mutationFn: () => apiFetch<{ id: string }>(`/api/runs/${encodeURIComponent(runId)}/briefs`, { method: 'POST', body: { title, summary } }),
    onSuccess: ({ id }) => window.location.assign(`/briefs/${encodeURIComponent(id)}`),
  });
  const onSubmit = (event: SubmitEvent<HTMLFormElement>) => {
    event.preventDefault();
    draft.mutate();
  };
  return (
    <form onSubmit={onSubmit} className="grid gap-2 max-w-2xl" data-testid="draft-brief-form">
      <HydratedFieldset>
        <label className="field-label" htmlFor="new-brief-title">Title</label>
        <input id="new-brief-title" className="field-input" value={title} onChange={(e) => setTitle(e.target.value)} maxLength={200} />
        <label className="field-label" htmlFor="new-brief-summary">Short summary</label>
        <textarea id="new-brief-summary" className="field-input" rows={3} value={summary} onChange={(e) => setSummary(e.target.value)} maxLength={4000} />
        <div><button type="submit" className="btn btn-primary" disabled={draft.isPending || draft.isSuccess} data-testid="draft-brief">Draft the brief</button></div>
      </HydratedFieldset>
      {draft.error && <p role="alert" className="field-error" data-testid="draft-brief-error">{errorText(draft.error)}</p>}
    </form>
  );
}

export default function DraftBriefForm(props: { runId: string }) {
  return <QueryRoot><Form {...props} /></QueryRoot>;
}
