/** Personal API tokens on the profile page: create (the secret is shown once), list, revoke. */
import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { useState, type SyntheticEvent } from 'react';
import { ApiError, apiFetch } from '@/lib/client/api';
import { QueryRoot } from '@/components/ui/QueryRoot';
import { HydratedFieldset } from '@/components/ui/HydratedFieldset';
import type { ApiTokenItem } from './apiTokens.server';

function Tokens() {
  const client = useQueryClient();
  const tokens = useQuery({ queryKey: ['api-tokens'], queryFn: () => apiFetch<ApiTokenItem[]>('/api/me/tokens') });
  const [name, setName] = useState('');
  const [secret, setSecret] = useState<string | null>(null);
  const create = useMutation({
    mutationFn: () => apiFetch<{ token: string; item: ApiTokenItem }>('/api/me/tokens', { method: 'POST', body: { name } }),
    onSuccess: (created) => {
      setSecret(created.token);
      setName('');
      void client.invalidateQueries({ queryKey: ['api-tokens'] });
    },
  });
  const revoke = useMutation({
    mutationFn: (id: string) => apiFetch(`/api/me/tokens/${id}`, { method: 'DELETE' }),
    onSuccess: () => void client.invalidateQueries({ queryKey: ['api-tokens'] }),
  });
  const error = create.error instanceof ApiError ? create.error : null;
  const submit = (event: SyntheticEvent) => {
    event.preventDefault();
    create.mutate();
  };
  const active = (tokens.data ?? []).filter((t) => !t.revokedAt);
  return (
    <section className="card p-5" aria-labelledby="tokens-heading">
      <h2 id="tokens-heading" className="text-lg">Personal API tokens</h2>
      <p className="text-sm text-ink-700 mt-1">
        Scripts send a token as <code>Authorization: Bearer …</code> and act with your own roles. Every use is recorded in the audit trail.
        See the <a href="/api-reference">API reference</a>.
      </p>
      {secret && (
        <div role="status" className="mt-4 border border-ochre-100 bg-ochre-50 rounded-sm p-3 text-sm" data-testid="new-token">
          <p className="font-semibold text-ochre-700">Copy this token now: it is shown only once.</p>
          <code className="block mt-2 break-all bg-white border border-linen-300 rounded-sm px-2 py-1" data-testid="token-secret">{secret}</code>
          <div className="flex gap-2 mt-2">
            <button type="button" className="btn btn-secondary" onClick={() => void navigator.clipboard?.writeText(secret)}>Copy</button>
            <button type="button" className="btn btn-secondary" onClick={() => setSecret(null)}>I have stored it</button>
          </div>
        </div>
      )}
      <form onSubmit={submit} className="flex flex-wrap items-end gap-3 mt-4" noValidate>
        <HydratedFieldset>
        <div className="min-w-72">
          <label className="field-label" htmlFor="token-name">Name (what uses it)</label>
          <input id="token-name" className="field-input" value={name} onChange={(e) => setName(e.target.value)} placeholder="e.g. nightly warehouse export" />
          {error?.fieldMessage('name') && <p className="field-error">{error.fieldMessage('name')}</p>}
        </div>
        <button className="btn btn-primary" type="submit" disabled={create.isPending}>Create token</button>
      </HydratedFieldset>
      </form>
      {tokens.isPending ? (
        <p role="status" className="text-ink-500 mt-4">Loading tokens…</p>
      ) : active.length === 0 ? (
        <p className="text-ink-500 mt-4 text-sm">You have no active tokens.</p>
      ) : (
        <table className="data-table w-full text-sm mt-4">
          <thead><tr><th>Name</th><th>Starts with</th><th>Created</th><th>Last used</th><th /></tr></thead>
          <tbody>
            {active.map((t) => (
              <tr key={t.id}>
                <td className="font-semibold">{t.name}</td>
                <td><code>{t.prefix}…</code></td>
                <td>{new Date(t.createdAt).toLocaleString('en-GB', { timeZone: 'UTC' })} UTC</td>
                <td>{t.lastUsedAt ? `${new Date(t.lastUsedAt).toLocaleString('en-GB', { timeZone: 'UTC' })} UTC` : 'Never'}</td>
                <td className="text-right">
                  <button type="button" className="btn btn-secondary" onClick={() => { if (window.confirm(`Revoke “${t.name}”? Scripts using it stop working at once.`)) revoke.mutate(t.id); }}>
                    Revoke
                  </button>
                </td>
              </tr>
            ))}
          </tbody>
        </table>
      )}
    </section>
  );
}

export default function ApiTokens() {
  return (
    <QueryRoot>
      <Tokens />
    </QueryRoot>
  );
}
