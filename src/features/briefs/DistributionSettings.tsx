/**
 * The analyst's brief settings on an initiative's Briefs tab: the small-cell threshold,
 * the paper size, and the distribution list (add and remove people).
 */
import { useMutation } from '@tanstack/react-query';
import { useState, type SubmitEvent } from 'react';
import { HydratedFieldset } from '@/components/ui/HydratedFieldset';
import { QueryRoot } from '@/components/ui/QueryRoot';
import { apiFetch } from '@/lib/client/api';
import { errorText } from '@/lib/client/errorText';

interface Props {
  initiativeId: string;
  cellThreshold: number;
  pageSize: 'A4' | 'LETTER';
  recipients: { id: string; name: string; email: string }[];
}

function Settings(props: Props) {
  const base = `/api/initiatives/${props.initiativeId}`;
  const [threshold, setThreshold] = useState(String(props.cellThreshold));
  const [pageSize, setPageSize] = useState(props.pageSize);
  const [name, setName] = useState('');
  const [email, setEmail] = useState('');
  const reload = () => window.location.reload();
  const save = useMutation({ mutationFn: () => apiFetch(`${base}/brief-settings`, { method: 'PUT', body: { cellThreshold: Number(threshold), pageSize } }), onSuccess: reload });
  const add = useMutation({ mutationFn: () => apiFetch(`${base}/brief-recipients`, { method: 'POST', body: { name, email } }), onSuccess: reload });
  const remove = useMutation({ mutationFn: (id: string) => apiFetch(`${base}/brief-recipients/${id}`, { method: 'DELETE' }), onSuccess: reload });
  const onSave = (event: SubmitEvent<HTMLFormElement>) => { event.preventDefault(); save.mutate(); };
  const onAdd = (event: SubmitEvent<HTMLFormElement>) => { event.preventDefault(); add.mutate(); };
  return (
    <div className="grid gap-6 md:grid-cols-2">
      <form onSubmit={onSave} className="grid gap-2 content-start" aria-labelledby="settings-heading">
        <h3 id="settings-heading" className="font-semibold">Settings</h3>
        <HydratedFieldset>
          <label className="field-label" htmlFor="cell-threshold">Small-cell threshold (counts from 1 to one less are suppressed)</label>
          <input id="cell-threshold" type="number" min={2} max={100} className="field-input" value={threshold} onChange={(e) => setThreshold(e.target.value)} />
          <label className="field-label" htmlFor="page-size">Paper size of the PDF</label>
          <select id="page-size" className="field-input" value={pageSize} onChange={(e) => setPageSize(e.target.value === 'LETTER' ? 'LETTER' : 'A4')}>
            <option value="A4">A4</option><option value="LETTER">US Letter</option>
          </select>
          <div><button type="submit" className="btn btn-secondary" disabled={save.isPending}>Save the settings</button></div>
        </HydratedFieldset>
        {save.error && <p role="alert" className="field-error">{errorText(save.error)}</p>}
      </form>
      <div className="grid gap-2 content-start">
        <h3 className="font-semibold">Distribution list</h3>
        {props.recipients.length === 0 ? <p className="text-sm text-ink-500">Nobody yet.</p> : (
          <ul className="text-sm grid gap-1" data-testid="distribution-list">
            {props.recipients.map((person) => (
              <li key={person.id} className="flex items-center justify-between gap-2">
                <span>{person.name} &lt;{person.email}&gt;</span>
                <button type="button" className="btn btn-secondary" onClick={() => remove.mutate(person.id)} aria-label={`Remove ${person.name}`}>Remove</button>
              </li>
            ))}
          </ul>
        )}
        <form onSubmit={onAdd} className="grid gap-2">
          <HydratedFieldset>
            <label className="field-label" htmlFor="recipient-name">Name</label>
            <input id="recipient-name" className="field-input" value={name} onChange={(e) => setName(e.target.value)} />
            <label className="field-label" htmlFor="recipient-email">E-mail address</label>
            <input id="recipient-email" type="email" className="field-input" value={email} onChange={(e) => setEmail(e.target.value)} />
            <div><button type="submit" className="btn btn-secondary" disabled={add.isPending}>Add to the list</button></div>
          </HydratedFieldset>
          {(add.error ?? remove.error) && <p role="alert" className="field-error">{errorText(add.error ?? remove.error ?? new Error(''))}</p>}
        </form>
      </div>
    </div>
  );
}

export default function DistributionSettings(props: Props) {
  return <QueryRoot><Settings {...props} /></QueryRoot>;
}
