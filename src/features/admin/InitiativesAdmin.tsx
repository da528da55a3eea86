/** The administrators' initiatives page: the list and the form that creates one. */
import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { useMemo, useState, type SyntheticEvent } from 'react';
import { ApiError, apiFetch } from '@/lib/client/api';
import { DataTable, type DataColumn } from '@/components/ui/DataTable';
import { QueryRoot } from '@/components/ui/QueryRoot';
import { HydratedFieldset } from '@/components/ui/HydratedFieldset';
import type { InitiativeItem } from './admin.schema';

function CreateForm({ defaultOrganisation }: { defaultOrganisation: string }) {
  const client = useQueryClient();
  const [name, setName] = useState('');
  const [organisation, setOrganisation] = useState(defaultOrganisation);
  const [description, setDescription] = useState('');
  const create = useMutation({
    mutationFn: () => apiFetch<InitiativeItem>('/api/admin/initiatives', { method: 'POST', body: { name, organisation, description } }),
    onSuccess: () => {
      setName('');
      setDescription('');
      void client.invalidateQueries({ queryKey: ['admin-initiatives'] });
    },
  });
  const error = create.error instanceof ApiError ? create.error : null;
  const submit = (event: SyntheticEvent) => {
    event.preventDefault();
    create.mutate();
  };
  return (
    <form onSubmit={submit} className="card p-5 mb-6 grid gap-4 md:grid-cols-2" noValidate aria-labelledby="create-heading">
      <HydratedFieldset>
      <h2 id="create-heading" className="md:col-span-2 text-lg">New initiative</h2>
      <div>
        <label className="field-label" htmlFor="initiative-name">Name</label>
        <input id="initiative-name" className="field-input" value={name} onChange={(e) => setName(e.target.value)} placeholder="e.g. Post-discharge calls 2026" />
        {error?.fieldMessage('name') && <p className="field-error">{error.fieldMessage('name')}</p>}
      </div>
      <div>
        <label className="field-label" htmlFor="initiative-organisation">Organisation</label>
        <input id="initiative-organisation" className="field-input" value={organisation} onChange={(e) => setOrganisation(e.target.value)} />
        {error?.fieldMessage('organisation') && <p className="field-error">{error.fieldMessage('organisation')}</p>}
      </div>
      <div className="md:col-span-2">
        <label className="field-label" htmlFor="initiative-description">What the QI programme does, and its question</label>
        <textarea id="initiative-description" className="field-input" rows={2} value={description} onChange={(e) => setDescription(e.target.value)} />
      </div>
      <div className="md:col-span-2 flex justify-end items-center gap-3">
        {create.isSuccess && <p role="status" className="text-sm text-reed-700">Created “{create.data?.name}”. Add its members next.</p>}
        {error && !error.details && <p role="alert" className="text-sm text-brick-700">{error.message}</p>}
        <button className="btn btn-primary" type="submit" disabled={create.isPending}>{create.isPending ? 'Creating…' : 'Create initiative'}</button>
      </div>
    </HydratedFieldset>
    </form>
  );
}

function Initiatives({ defaultOrganisation }: { defaultOrganisation: string }) {
  const initiatives = useQuery({ queryKey: ['admin-initiatives'], queryFn: () => apiFetch<InitiativeItem[]>('/api/admin/initiatives') });
  const columns = useMemo<DataColumn<InitiativeItem>[]>(
    () => [
      {
        accessorKey: 'name',
        header: 'Initiative',
        cell: (info) => <a className="font-semibold" href={`/admin/initiatives/${info.row.original.id}`}>{info.getValue() as string}</a>,
      },
      { accessorKey: 'organisation', header: 'Organisation' },
      { accessorKey: 'memberCount', header: 'Members' },
      {
        accessorKey: 'readersSeeRows',
        header: 'Row previews for readers',
        cell: (info) => ((info.getValue() as boolean) ? 'Allowed' : 'Off'),
      },
    ],
    [],
  );
  if (initiatives.isPending) return <p role="status" className="text-ink-500">Loading initiatives…</p>;
  if (initiatives.isError) return <p role="alert" className="text-brick-700">Could not load initiatives: {initiatives.error.message}</p>;
  return (
    <>
      <CreateForm defaultOrganisation={defaultOrganisation} />
      <DataTable data={initiatives.data} columns={columns} filterLabel="Filter initiatives" emptyMessage="No initiatives yet. Create the first above." initialSort={[{ id: 'name', desc: false }]} />
    </>
  );
}

export default function InitiativesAdmin({ defaultOrganisation }: { defaultOrganisation: string }) {
  return (
    <QueryRoot>
      <Initiatives defaultOrganisation={defaultOrganisation} />
    </QueryRoot>
  );
}
