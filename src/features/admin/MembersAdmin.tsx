/** Members of one initiative: add a person with a role, change a role, remove. */
import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { useState } from 'react';
import { apiFetch } from '@/lib/client/api';
import { QueryRoot } from '@/components/ui/QueryRoot';
import { HydratedFieldset } from '@/components/ui/HydratedFieldset';
import type { MemberItem } from './admin.server';
import type { UserListItem } from './admin.schema';

const ROLES = [
  ['analyst', 'Analyst'],
  ['clinician', 'Clinician'],
  ['auditor', 'Auditor'],
] as const;
type RoleValue = (typeof ROLES)[number][0];

function Members({ initiativeId, initiativeName, readersSeeRows, requiredSignOffs }: Props) {
  const client = useQueryClient();
  const key = ['admin-members', initiativeId];
  const members = useQuery({ queryKey: key, queryFn: () => apiFetch<MemberItem[]>(`/api/admin/initiatives/${initiativeId}/members`) });
  const users = useQuery({ queryKey: ['admin-users'], queryFn: () => apiFetch<UserListItem[]>('/api/admin/users') });
  const refresh = () => void client.invalidateQueries({ queryKey: key });
  const setRole = useMutation({
    mutationFn: ({ userId, role }: { userId: string; role: RoleValue }) =>
      apiFetch(`/api/admin/initiatives/${initiativeId}/members`, { method: 'PUT', body: { userId, role } }),
    onSuccess: refresh,
  });
  const remove = useMutation({
    mutationFn: (userId: string) => apiFetch(`/api/admin/initiatives/${initiativeId}/members/${userId}`, { method: 'DELETE' }),
    onSuccess: refresh,
  });
  const [rows, setRows] = useState(readersSeeRows);
  const toggleRows = useMutation({
    mutationFn: (value: boolean) => apiFetch(`/api/admin/initiatives/${initiativeId}`, { method: 'PATCH', body: { readersSeeRows: value } }),
    onSuccess: (_data, value) => setRows(value),
  });
  const [signOffs, setSignOffs] = useState(requiredSignOffs);
  const changeSignOffs = useMutation({
    mutationFn: (value: number) => apiFetch(`/api/admin/initiatives/${initiativeId}`, { method: 'PATCH', body: { requiredSignOffs: value } }),
    onSuccess: (_data, value) => setSignOffs(value),
  });
  const [newUserId, setNewUserId] = useState('');
  const [newRole, setNewRole] = useState<RoleValue>('analyst');
  const memberIds = new Set((members.data ?? []).map((m) => m.userId));
  const candidates = (users.data ?? []).filter((u) => !memberIds.has(u.id) && u.status !== 'deactivated');
  const problem = setRole.error ?? remove.error ?? toggleRows.error ?? changeSignOffs.error;

  return (
    <div className="space-y-6">
      <section className="card p-5" aria-labelledby="settings-heading">
        <h2 id="settings-heading" className="text-lg">Settings</h2>
        <label className="flex items-start gap-2 mt-3 text-sm">
          <input type="checkbox" checked={rows} disabled={toggleRows.isPending} onChange={(e) => toggleRows.mutate(e.target.checked)} />
          <span>
            Clinicians and auditors may preview extract rows. Off by default: they see profiles and data dictionaries only.
          </span>
        </label>
        <label className="flex flex-wrap items-center gap-2 mt-3 text-sm">
          <span>Sign-offs a run needs, from distinct clinicians other than its analyst:</span>
          <select
            className="field-input w-auto"
            value={signOffs}
            disabled={changeSignOffs.isPending}
            onChange={(e) => changeSignOffs.mutate(Number(e.target.value))}
            data-testid="required-sign-offs"
          >
            {[1, 2, 3, 4, 5].map((n) => <option key={n} value={n}>{n}</option>)}
          </select>
        </label>
      </section>
      <section className="card p-5" aria-labelledby="members-heading">
        <h2 id="members-heading" className="text-lg">Members of {initiativeName}</h2>
        {problem && <p role="alert" className="text-sm text-brick-700 mt-2">{problem.message}</p>}
        {members.isPending ? (
          <p role="status" className="text-ink-500 mt-3">Loading members…</p>
        ) : members.isError ? (
          <p role="alert" className="text-brick-700 mt-3">Could not load members: {members.error.message}</p>
        ) : members.data.length === 0 ? (
          <p className="text-ink-500 mt-3">No members yet. Add the team below.</p>
        ) : (
          <table className="data-table w-full text-sm mt-3">
            <thead><tr><th>Name</th><th>E-mail</th><th>Role</th><th /></tr></thead>
            <tbody>
              {members.data.map((m) => (
                <tr key={m.membershipId}>
                  <td className="font-semibold">{m.displayName}{m.status !== 'active' && <span className="badge ml-2">{m.status}</span>}</td>
                  <td>{m.email}</td>
                  <td>
                    <select
                      aria-label={`Role of ${m.displayName}`}
                      className="field-input"
                      value={m.role}
                      onChange={(e) => setRole.mutate({ userId: m.userId, role: e.target.value as RoleValue })}
                    >
                      {ROLES.map(([value, label]) => <option key={value} value={value}>{label}</option>)}
                    </select>
                  </td>
                  <td className="text-right">
                    <button
                      type="button"
                      className="btn btn-secondary"
                      onClick={() => {
                        if (window.confirm(`Remove ${m.displayName} from ${initiativeName}?`)) remove.mutate(m.userId);
                      }}
                    >
                      Remove
                    </button>
                  </td>
                </tr>
              ))}
            </tbody>
          </table>
        )}
        <form
          className="flex flex-wrap items-end gap-3 mt-5"
          onSubmit={(event) => {
            event.preventDefault();
            if (newUserId) setRole.mutate({ userId: newUserId, role: newRole }, { onSuccess: () => setNewUserId('') });
          }}
        >
          <HydratedFieldset>
          <div className="min-w-64">
            <label className="field-label" htmlFor="add-member">Add a person</label>
            <select id="add-member" className="field-input" value={newUserId} onChange={(e) => setNewUserId(e.target.value)}>
              <option value="">Choose…</option>
              {candidates.map((u) => <option key={u.id} value={u.id}>{u.displayName} ({u.email})</option>)}
            </select>
          </div>
          <div>
            <label className="field-label" htmlFor="add-role">Role</label>
            <select id="add-role" className="field-input" value={newRole} onChange={(e) => setNewRole(e.target.value as RoleValue)}>
              {ROLES.map(([value, label]) => <option key={value} value={value}>{label}</option>)}
            </select>
          </div>
          <button className="btn btn-primary" type="submit" disabled={!newUserId || setRole.isPending}>Add member</button>
        </HydratedFieldset>
        </form>
      </section>
    </div>
  );
}

interface Props {
  initiativeId: string;
  initiativeName: string;
  readersSeeRows: boolean;
  requiredSignOffs: number;
}

export default function MembersAdmin(props: Props) {
  return (
    <QueryRoot>
      <Members {...props} />
    </QueryRoot>
  );
}
