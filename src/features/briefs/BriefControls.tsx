/**
 * The analyst's controls on a brief's page: while it is a draft, the title, summary, plot
 * and own cautions (saved, then the page reloads to show the preview exactly as it will
 * publish) and Publish; once published, a correction with its note, a retraction with its
 * reason, and sending it by e-mail.
 */
import { useMutation } from '@tanstack/react-query';
import { useState, type SubmitEvent } from 'react';
import { QueryRoot } from '@/components/ui/QueryRoot';
import { HydratedFieldset } from '@/components/ui/HydratedFieldset';
import { apiFetch } from '@/lib/client/api';
import { errorText } from '@/lib/client/errorText';

interface Props {
  briefId: string;
  state: 'draft' | 'published' | 'retracted';
  title: string;
  summary: string;
  plot: 'forest' | 'modifier' | 'none';
  ownCautions: string[];
  continuous: boolean;
  recipients: { name: string; email: string }[];
}

const reload = () => window.location.reload();

function DraftForm(props: Props) {
  const [title, setTitle] = useState(props.title);
  const [summary, setSummary] = useState(props.summary);
  const [plot, setPlot] = useState(props.plot);
  const [cautions, setCautions] = useState(props.ownCautions.join('\n'));
  const body = () => ({ title, summary, plot, ownCautions: cautions.split('\n').map((line) => line.trim()).filter(Boolean) });
  const save = useMutation({ mutationFn: () => apiFetch(`/api/briefs/${props.briefId}`, { method: 'PATCH', body: body() }), onSuccess: reload });
  const publish = useMutation({
    mutationFn: async () => {
      await apiFetch(`/api/briefs/${props.briefId}`, { method: 'PATCH', body: body() });
      return apiFetch<{ version: number }>(`/api/briefs/${props.briefId}/publish`, { method: 'POST', body: {} });
    },
    onSuccess: reload,
  });
  const onSubmit = (event: SubmitEvent<HTMLFormElement>) => {
    event.preventDefault();
    save.mutate();
  };
  const error = save.error ?? publish.error;
  return (
    <form onSubmit={onSubmit} className="grid gap-3" data-testid="brief-draft-form">
      <HydratedFieldset>
        <div><label className="field-label" htmlFor="brief-title">Title</label>
          <input id="brief-title" className="field-input" value={title} onChange={(e) => setTitle(e.target.value)} maxLength={200} required /></div>
        <div><label className="field-label" htmlFor="brief-summary">Summary</label>
          <textarea id="brief-summary" className="field-input" rows={4} value={summary} onChange={(e) => setSummary(e.target.value)} maxLength={4000} required /></div>
        <div><label className="field-label" htmlFor="brief-plot">Plot</label>
          <select id="brief-plot" className="field-input" value={plot} onChange={(e) => setPlot(e.target.value as Props['plot'])}>
            {props.continuous ? <option value="modifier">The effect across the continuous modifier</option> : <option value="forest">The stratum forest plot</option>}
            <option value="none">No plot</option>
          </select></div>
        <div><label className="field-label" htmlFor="brief-cautions">Cautions of your own (one a line; the standard cautions always appear)</label>
          <textarea id="brief-cautions" className="field-input" rows={3} value={cautions} onChange={(e) => setCautions(e.target.value)} /></div>
        <div className="flex flex-wrap gap-2">
          <button type="submit" className="btn btn-secondary" disabled={save.isPending} data-testid="brief-save">Save and preview</button>
          <button type="button" className="btn btn-primary" disabled={publish.isPending} onClick={() => publish.mutate()} data-testid="brief-publish">
            {publish.isPending ? 'Publishing…' : 'Publish version 1'}
          </button>
        </div>
      </HydratedFieldset>
      {error && <p role="alert" className="field-error" data-testid="brief-error">{errorText(error)}</p>}
    </form>
  );
}

function PublishedActions(props: Props) {
  const [note, setNote] = useState('');
  const [summary, setSummary] = useState(props.summary);
  const [reason, setReason] = useState('');
  const [extra, setExtra] = useState('');
  const correct = useMutation({ mutationFn: () => apiFetch(`/api/briefs/${props.briefId}/corrections`, { method: 'POST', body: { note, summary } }), onSuccess: reload });
  const retract = useMutation({ mutationFn: () => apiFetch(`/api/briefs/${props.briefId}/retraction`, { method: 'POST', body: { reason } }), onSuccess: reload });
  const send = useMutation({
    mutationFn: () => apiFetch<{ recipients: number }>(`/api/briefs/${props.briefId}/distribution`, {
      method: 'POST', body: { recipients: extra.split(/[\s,;]+/).map((item) => item.trim()).filter(Boolean) },
    }),
  });
  return (
    <div className="grid gap-6">
      <HydratedFieldset>
        <section aria-labelledby="send-heading" data-testid="brief-send">
          <h3 id="send-heading" className="font-semibold">Send by e-mail</h3>
          <p className="text-sm text-ink-700 mt-1">
            {props.recipients.length > 0 ? `The distribution list: ${props.recipients.map((r) => `${r.name} <${r.email}>`).join(', ')}.` : 'The distribution list is empty.'}{' '}
            Each recipient gets the summary, the link and the PDF.
          </p>
          <label className="field-label mt-2" htmlFor="brief-extra">More recipients for this send (addresses, separated by commas)</label>
          <input id="brief-extra" className="field-input" value={extra} onChange={(e) => setExtra(e.target.value)} />
          <button type="button" className="btn btn-primary mt-2" disabled={send.isPending} onClick={() => send.mutate()} data-testid="brief-send-button">Send the brief</button>
          {send.isSuccess && <p role="status" className="text-sm mt-1" data-testid="brief-sent">Sent to {send.data.recipients} {send.data.recipients === 1 ? 'recipient' : 'recipients'}.</p>}
          {send.error && <p role="alert" className="field-error">{errorText(send.error)}</p>}
        </section>
        <section aria-labelledby="correct-heading">
          <h3 id="correct-heading" className="font-semibold">Publish a correction</h3>
          <label className="field-label mt-2" htmlFor="correction-summary">Summary</label>
          <textarea id="correction-summary" className="field-input" rows={3} value={summary} onChange={(e) => setSummary(e.target.value)} />
          <label className="field-label mt-2" htmlFor="correction-note">What changed (required)</label>
          <input id="correction-note" className="field-input" value={note} onChange={(e) => setNote(e.target.value)} />
          <button type="button" className="btn btn-secondary mt-2" disabled={correct.isPending} onClick={() => correct.mutate()} data-testid="brief-correct">Publish the correction</button>
          {correct.error && <p role="alert" className="field-error">{errorText(correct.error)}</p>}
        </section>
        <section aria-labelledby="retract-heading">
          <h3 id="retract-heading" className="font-semibold">Retract</h3>
          <label className="field-label mt-2" htmlFor="retraction-reason">Reason (shown on every copy)</label>
          <input id="retraction-reason" className="field-input" value={reason} onChange={(e) => setReason(e.target.value)} />
          <button type="button" className="btn btn-secondary mt-2" disabled={retract.isPending} onClick={() => retract.mutate()} data-testid="brief-retract">Retract the brief</button>
          {retract.error && <p role="alert" className="field-error">{errorText(retract.error)}</p>}
        </section>
      </HydratedFieldset>
    </div>
  );
}

export default function BriefControls(props: Props) {
  return <QueryRoot>{props.state === 'draft' ? <DraftForm {...props} /> : props.state === 'published' ? <PublishedActions {...props} /> : null}</QueryRoot>;
}
