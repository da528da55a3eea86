/**
 * The register of prespecified modifiers (Plan tab): every entry with its predicted
 * direction, who registered it and when; analysts add entries and withdraw them with a
 * reason (a confirmation step; the entry stays, marked). Analyses whose modifier was
 * registered before their data are marked planned, the others exploratory.
 */
import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { useState, type SubmitEvent } from 'react';
import { HydratedFieldset } from '@/components/ui/HydratedFieldset';
import { QueryRoot } from '@/components/ui/QueryRoot';
import { errorText } from '@/lib/client/errorText';
import { apiFetch } from '@/lib/client/api';
import { DIRECTION_LABEL, DIRECTIONS, type Direction, type RegisterEntryView } from './planning.schema';
import { predictionText } from './planWords';

interface Props {
  initiativeId: string;
  canRegister: boolean;
  /** Column names of the initiative's extracts, offered as suggestions. */
  columns: string[];
}

const EMPTY = { modifierColumn: '', outcomeColumn: '', direction: 'stronger' as Direction, where: '', rationale: '' };

function Register({ initiativeId, canRegister, columns }: Props) {
  const base = `/api/initiatives/${initiativeId}/prespecified-modifiers`;
  const client = useQueryClient();
  const entries = useQuery({ queryKey: ['register', initiativeId], queryFn: () => apiFetch<RegisterEntryView[]>(base) });
  const [form, setForm] = useState(EMPTY);
  const [withdrawing, setWithdrawing] = useState<string | null>(null);
  const [reason, setReason] = useState('');
  const add = useMutation({
    mutationFn: () => apiFetch<{ id: string }>(base, { method: 'POST', body: form }),
    onSuccess: async () => { setForm(EMPTY); await client.invalidateQueries({ queryKey: ['register', initiativeId] }); },
  });
  const withdraw = useMutation({
    mutationFn: (entryId: string) => apiFetch<RegisterEntryView[]>(`${base}/${entryId}/withdraw`, { method: 'POST', body: { reason } }),
    onSuccess: (data) => { client.setQueryData(['register', initiativeId], data); setWithdrawing(null); setReason(''); },
  });
  const onAdd = (event: SubmitEvent<HTMLFormElement>) => { event.preventDefault(); add.mutate(); };
  return (
    <div className="grid gap-4">
      <h2 className="text-lg" id="register-heading">Register of prespecified modifiers</h2>
      <p className="text-sm text-ink-700 max-w-3xl">
        Name each modifier you mean to examine, and what you expect, before the data arrive. An analysis whose modifier was registered before its extract was uploaded is marked
        planned; every other analysis is marked exploratory. Entries are never edited; a withdrawn entry stays here with its reason.
      </p>
      {entries.isPending ? <p className="text-sm text-ink-500">Loading…</p> : entries.error ? (
        <p role="alert" className="field-error">Could not load the register: {entries.error.message}</p>
      ) : entries.data.length === 0 ? (
        <div className="card p-5 text-sm text-ink-700" data-testid="register-empty">Nothing registered yet.</div>
      ) : (
        <div className="card overflow-x-auto">
          <table className="data-table w-full text-sm" data-testid="register-table" aria-labelledby="register-heading">
            <thead><tr><th scope="col">Prediction</th><th scope="col">Why</th><th scope="col">Registered</th><th scope="col">State</th></tr></thead>
            <tbody>
              {entries.data.map((entry) => (
                <tr key={entry.id} className={entry.withdrawn ? 'text-ink-500' : ''}>
                  <td>{predictionText(entry)}</td>
                  <td className="max-w-sm whitespace-pre-wrap">{entry.rationale}</td>
                  <td>{entry.registeredAt.slice(0, 16).replace('T', ' ')} UTC<br /><span className="text-ink-500">{entry.registeredBy.name}</span></td>
                  <td>
                    {entry.withdrawn ? (
                      <span>Withdrawn {entry.withdrawn.at.slice(0, 10)} by {entry.withdrawn.by}: “{entry.withdrawn.reason}”</span>
                    ) : withdrawing === entry.id ? (
                      <div className="grid gap-1.5 min-w-56" onKeyDown={(e) => { if (e.key === 'Escape') setWithdrawing(null); }}>
                        <label className="field-label" htmlFor={`withdraw-${entry.id}`}>Why is it withdrawn?</label>
                        <textarea id={`withdraw-${entry.id}`} rows={2} className="field-input" value={reason} onChange={(e) => setReason(e.target.value)} autoFocus />
                        <div className="flex gap-2">
                          <button type="button" className="btn btn-secondary" disabled={withdraw.isPending} onClick={() => withdraw.mutate(entry.id)}>Withdraw</button>
                          <button type="button" className="btn btn-secondary" onClick={() => setWithdrawing(null)}>Keep it</button>
                        </div>
                        {withdraw.error && <p role="alert" className="field-error">{errorText(withdraw.error)}</p>}
                      </div>
                    ) : (
                      <span className="flex items-center gap-2">In force
                        {canRegister && <button type="button" className="btn btn-secondary" onClick={() => { withdraw.reset(); setReason(''); setWithdrawing(entry.id); }}
                          aria-label={`Withdraw the entry for ${entry.modifierColumn}`}>Withdraw…</button>}
                      </span>
                    )}
                  </td>
                </tr>
              ))}
            </tbody>
          </table>
        </div>
      )}
      {canRegister && (
        <form onSubmit={onAdd} className="card p-5 grid gap-2 max-w-2xl" aria-label="Register a modifier">
          <h3 className="font-semibold">Register a modifier</h3>
          <HydratedFieldset>
            <datalist id="register-columns">{columns.map((column) => <option key={column} value={column} />)}</datalist>
            <label className="field-label" htmlFor="register-modifier">Modifier column</label>
            <input id="register-modifier" list="register-columns" className="field-input" value={form.modifierColumn} onChange={(e) => setForm({ ...form, modifierColumn: e.target.value })} />
            <label className="field-label" htmlFor="register-outcome">Outcome column (leave empty for any outcome)</label>
            <input id="register-outcome" list="register-columns" className="field-input" value={form.outcomeColumn} onChange={(e) => setForm({ ...form, outcomeColumn: e.target.value })} />
            <label className="field-label" htmlFor="register-direction">Predicted direction</label>
            <select id="register-direction" className="field-input" value={form.direction} onChange={(e) => setForm({ ...form, direction: DIRECTIONS.find((d) => d === e.target.value) ?? 'none' })}>
              {DIRECTIONS.map((direction) => <option key={direction} value={direction}>{DIRECTION_LABEL[direction]}</option>)}
            </select>
            {form.direction !== 'none' && (
              <>
                <label className="field-label" htmlFor="register-where">Where (a level, or "higher values")</label>
                <input id="register-where" className="field-input" value={form.where} onChange={(e) => setForm({ ...form, where: e.target.value })} placeholder="patients aged 75 and over" />
              </>
            )}
            <label className="field-label" htmlFor="register-rationale">Clinical or biological reason</label>
            <textarea id="register-rationale" rows={3} className="field-input" value={form.rationale} onChange={(e) => setForm({ ...form, rationale: e.target.value })} />
            <div><button type="submit" className="btn btn-primary" disabled={add.isPending}>Register, stamped now</button></div>
          </HydratedFieldset>
          {add.error && <p role="alert" className="field-error">{errorText(add.error)}</p>}
          {add.isSuccess && <p role="status" className="text-sm text-estuary-700">Registered.</p>}
        </form>
      )}
    </div>
  );
}

export default function PrespecRegister(props: Props) {
  return <QueryRoot><Register {...props} /></QueryRoot>;
}
