/** The administrators' people page: a sortable, filterable list, invitations, deactivation. */
import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { useMemo, useState, type SyntheticEvent } from 'react';
import { ApiError, apiFetch } from '@/lib/client/api';
import { DataTable, type DataColumn } from '@/components/ui/DataTable';
import { QueryRoot } from '@/components/ui/QueryRoot';
import { HydratedFieldset } from '@/components/ui/HydratedFieldset';
import type { InitiativeItem, UserListItem } from './admin.schema';

const ROLE_LABEL = { analyst: 'Analyst', clinician: 'Clinician', auditor: 'Auditor' } as const;
const STATUS_STYLE: Record<UserListItem['status'], string> = {
  active: 'bg-reed-50 border-reed-100 text-reed-700',
  invited: 'bg-ochre-50 border-ochre-100 text-ochre-700',
  deactivated: 'bg-linen-100 border-linen-300 text-ink-500',
};

function formatDate(value: string | null): string {
  if (!value) return '—';
  return new Date(value).toLocaleString('en-GB', { dateStyle: 'medium', timeStyle: 'short', timeZone: 'UTC' }) + ' UTC';
}

function InviteForm({ initiatives }: { initiatives: InitiativeItem[] }) {
  const client = useQueryClient();
  const [email, setEmail] = useState('');
  const [displayName, setDisplayName] = useState('');
  const [initiativeId, setInitiativeId] = useState('');
  const [role, setRole] = useState<keyof typeof ROLE_LABEL>('analyst');
  const [isAdmin, setIsAdmin] = useState(false);
  const invite = useMutation({
    mutationFn: () =>
      apiFetch<{ userId: string; mailed: boolean }>('/api/admin/users', {
        method: 'POST',
        body: { email, displayName, isAdmin, membership: initiativeId ? { initiativeId, role } : undefined },
      }),
    onSuccess: () => {
      setEmail('');
      setDisplayName('');
      void client.invalidateQueries({ queryKey: ['admin-users'] });
    },
  });
  const error = invite.error instanceof ApiError ? invite.error : null;
  const submit = (event: SyntheticEvent) => {
    event.preventDefault();
    invite.mutate();
  };
  return (
    <form onSubmit={submit} className="card p-5 mb-6 grid gap-4 md:grid-cols-6 items-end" aria-labelledby="invite-heading" noValidate>
      <HydratedFieldset>
      <h2 id="invite-heading" className="md:col-span-6 text-lg">Invite a person</h2>
      <div className="md:col-span-2">
        <label className="field-label" htmlFor="invite-email">E-mail address</label>
        <input id="invite-email" className="field-input" type="email" value={email} onChange={(e) => setEmail(e.target.value)} required aria-invalid={Boolean(error?.fieldMessage('email'))} />
        {error?.fieldMessage('email') && <p className="field-error">{error.fieldMessage('email')}</p>}
      </div>
      <div className="md:col-span-2">
        <label className="field-label" htmlFor="invite-name">Name</label>
        <input id="invite-name" className="field-input" value={displayName} onChange={(e) => setDisplayName(e.target.value)} required />
        {error?.fieldMessage('displayName') && <p className="field-error">{error.fieldMessage('displayName')}</p>}
      </div>
      <div>
        <label className="field-label" htmlFor="invite-initiative">Initiative</label>
        <select id="invite-initiative" className="field-input" value={initiativeId} onChange={(e) => setInitiativeId(e.target.value)}>
          <option value="">None yet</option>
          {initiatives.map((i) => <option key={i.id} value={i.id}>{i.name}</option>)}
        </select>
      </div>
      <div>
        <label className="field-label" htmlFor="invite-role">Role there</label>
        <select id="invite-role" className="field-input" value={role} disabled={!initiativeId} onChange={(e) => setRole(e.target.value as keyof typeof ROLE_LABEL)}>
          {Object.entries(ROLE_LABEL).map(([value, label]) => <option key={value} value={value}>{label}</option>)}
        </select>
      </div>
      <label className="md:col-span-3 flex items-center gap-2 text-sm">
        <input type="checkbox" checked={isAdmin} onChange={(e) => setIsAdmin(e.target.checked)} />
        Administrator (manages people and initiatives; sees no cohort data unless also a member)
      </label>
      <div className="md:col-span-3 flex items-center gap-3 justify-end">
        {invite.isSuccess && (
          <p role="status" className="text-sm text-reed-700" data-testid="invite-result">
            {invite.data?.mailed ? 'Invitation sent.' : 'Account created, but the e-mail could not be sent. Try again later.'}
          </p>
        )}
        {error && !error.details && <p role="alert" className="text-sm text-brick-700">{error.message}</p>}
        <button type="submit" className="btn btn-primary" disabled={invite.isPending}>
          {invite.isPending ? 'Sending…' : 'Send invitation'}
        </button>
      </div>
    </HydratedFieldset>
    </form>
  );
}

function StatusAction({ user, currentUserId }: { user: UserListItem; currentUserId: string }) {
  const client = useQueryClient();
  const change = useMutation({
    mutationFn: (status: 'active' | 'deactivated') => apiFetch(`/api/admin/users/${user.id}`, { method: 'PATCH', body: { status } }),
    onSuccess: () => void client.invalidateQueries({ queryKey: ['admin-users'] }),
  });
  if (user.id === currentUserId) return <span className="text-xs text-ink-500">You</span>;
  if (!user.activated) return <InvitationActions user={user} />;
  const deactivate = user.status === 'active';
  return (
    <span className="inline-flex items-center gap-2">
      <button
        type="button"
        className="btn btn-secondary"
        disabled={change.isPending}
        onClick={() => {
          if (deactivate && !window.confirm(`Deactivate ${user.displayName}? They are signed out everywhere at once.`)) return;
          change.mutate(deactivate ? 'deactivated' : 'active');
        }}
      >
        {deactivate ? 'Deactivate' : 'Reactivate'}
      </button>
      {change.error && <span role="alert" className="text-xs text-brick-700">{change.error.message}</span>}
    </span>
  );
}

/**
 * For a person who never accepted: send a new link (the old one stops working), or revoke
 * the invitation (the link stops working; the person stays listed as "invitation revoked").
 */
function InvitationActions({ user }: { user: UserListItem }) {
  const client = useQueryClient();
  const refresh = () => void client.invalidateQueries({ queryKey: ['admin-users'] });
  const resend = useMutation({
    mutationFn: () => apiFetch<{ mailed: boolean }>(`/api/admin/users/${user.id}/invitation`, { method: 'POST', body: {} }),
    onSuccess: refresh,
  });
  const revoke = useMutation({ mutationFn: () => apiFetch(`/api/admin/users/${user.id}/invitation`, { method: 'DELETE' }), onSuccess: refresh });
  const open = user.status === 'invited';
  return (
    <span className="inline-flex flex-wrap items-center gap-2">
      <button type="button" className="btn btn-secondary" disabled={resend.isPending} onClick={() => resend.mutate()} aria-label={`${open ? 'Send a new link' : 'Invite again'} to ${user.displayName}`}>
        {open ? 'Send a new link' : 'Invite again'}
      </button>
      {open && (
        <button
          type="button"
          className="btn btn-secondary"
          disabled={revoke.isPending}
          aria-label={`Revoke ${user.displayName}’s invitation`}
          onClick={() => {
            if (!window.confirm(`Revoke the invitation of ${user.displayName}? Their link stops working at once.`)) return;
            revoke.mutate();
          }}
        >
          Revoke
        </button>
      )}
      {resend.isSuccess && (
        <span role="status" className="text-xs text-reed-700">
          {resend.data.mailed ? 'New link sent; the old one no longer works.' : 'New link made, but the e-mail could not be sent.'}
        </span>
      )}
      {(resend.error ?? revoke.error) && <span role="alert" className="text-xs text-brick-700">{(resend.error ?? revoke.error)?.message}</span>}
    </span>
  );
}

function People({ currentUserId }: { currentUserId: string }) {
  const users = useQuery({ queryKey: ['admin-users'], queryFn: () => apiFetch<UserListItem[]>('/api/admin/users') });
  const initiatives = useQuery({ queryKey: ['admin-initiatives'], queryFn: () => apiFetch<InitiativeItem[]>('/api/admin/initiatives') });
  const columns = useMemo<DataColumn<UserListItem>[]>(
    () => [
      { accessorKey: 'displayName', header: 'Name', cell: (info) => <span className="font-semibold">{info.getValue() as string}</span> },
      { accessorKey: 'email', header: 'E-mail' },
      {
        accessorKey: 'status',
        header: 'Status',
        cell: (info) => {
          const status = info.getValue() as UserListItem['status'];
          const revoked = status === 'deactivated' && !info.row.original.activated;
          return <span className={`badge ${STATUS_STYLE[status]}`}>{revoked ? 'invitation revoked' : status}</span>;
        },
      },
      {
        id: 'access',
        header: 'Roles',
        accessorFn: (user) => [user.isAdmin ? 'Administrator' : '', ...user.memberships.map((m) => `${ROLE_LABEL[m.role]} · ${m.initiativeName}`)].filter(Boolean).join('; '),
        cell: (info) => {
          const user = info.row.original;
          return (
            <ul className="space-y-0.5">
              {user.isAdmin && <li className="text-estuary-700 font-semibold">Administrator</li>}
              {user.memberships.map((m) => <li key={m.membershipId}>{ROLE_LABEL[m.role]} · {m.initiativeName}</li>)}
              {!user.isAdmin && user.memberships.length === 0 && <li className="text-ink-500">No initiative</li>}
            </ul>
          );
        },
      },
      { accessorKey: 'lastSignInAt', header: 'Last sign-in', cell: (info) => formatDate(info.getValue() as string | null) },
      { id: 'actions', header: '', enableSorting: false, cell: (info) => <StatusAction user={info.row.original} currentUserId={currentUserId} /> },
    ],
    [currentUserId],
  );
  if (users.isPending) return <p className="text-ink-500" role="status">Loading people…</p>;
  if (users.isError) return <p role="alert" className="text-brick-700">Could not load people: {users.error.message}</p>;
  return (
    <>
      <InviteForm initiatives={initiatives.data ?? []} />
      <DataTable
        data={users.data}
        columns={columns}
        filterLabel="Filter people"
        emptyMessage="Nobody here yet. Invite the first person above."
        initialSort={[{ id: 'displayName', desc: false }]}
        testId="people-table"
      />
    </>
  );
}

export default function PeopleAdmin({ currentUserId }: { currentUserId: string }) {
  return (
    <QueryRoot>
      <People currentUserId={currentUserId} />
    </QueryRoot>
  );
}
