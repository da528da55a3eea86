/**
 * The initiative's extracts as a table that keeps up: it starts from the list the page was
 * rendered with and fetches the list again whenever an upload on the page is stored.
 */
import { useQuery } from '@tanstack/react-query';
import { useEffect } from 'react';
import { apiFetch } from '@/lib/client/api';
import { useHydrated } from '@/lib/client/useHydrated';
import { QueryRoot } from '@/components/ui/QueryRoot';
import type { ExtractListItem } from './extracts.server';
import { EXTRACTS_CHANGED_EVENT } from './extractsEvents';

interface Props {
  initiativeId: string;
  initial: ExtractListItem[];
  canUpload: boolean;
}

const STATUS_LABEL: Record<string, string> = { 'needs-review': 'Awaiting confirmation', ready: 'Ready' };

function Table({ initiativeId, initial, canUpload }: Props) {
  const list = useQuery({
    queryKey: ['extracts', initiativeId],
    queryFn: () => apiFetch<ExtractListItem[]>(`/api/initiatives/${initiativeId}/extracts`),
    initialData: initial,
    staleTime: Infinity,
  });
  const { refetch } = list;
  const hydrated = useHydrated();
  useEffect(() => {
    const refresh = () => void refetch();
    window.addEventListener(EXTRACTS_CHANGED_EVENT, refresh);
    return () => window.removeEventListener(EXTRACTS_CHANGED_EVENT, refresh);
  }, [refetch]);
  const extracts = list.data;
  if (extracts.length === 0) {
    return (
      <div className="card p-6 text-ink-700" data-testid="extracts-empty" data-hydrated={hydrated}>
        <p className="font-semibold">No extracts yet.</p>
        <p className="text-sm mt-1">{canUpload ? 'Upload a de-identified CSV from your data warehouse to begin.' : 'An analyst of this initiative uploads extracts.'}</p>
      </div>
    );
  }
  return (
    <div className="card overflow-x-auto">
      <table className="data-table w-full text-sm" data-testid="extracts-table" data-hydrated={hydrated}>
        <thead><tr><th>Extract</th><th>Latest version</th><th>Rows</th><th>Status</th><th>Updated (UTC)</th></tr></thead>
        <tbody>
          {extracts.map((e) => (
            <tr key={e.id} className={e.archivedAt ? 'text-ink-500' : undefined}>
              <td><a className="font-semibold" href={`/extracts/${e.id}`}>{e.name}</a>{e.archivedAt && <span className="badge ml-2">archived</span>}</td>
              <td>{e.latestVersion ? `v${e.latestVersion}` : '—'}</td>
              <td className="tabular-nums">{e.rows?.toLocaleString('en-GB') ?? '—'}</td>
              <td>{e.latestStatus ? (STATUS_LABEL[e.latestStatus] ?? e.latestStatus) : '—'}</td>
              <td>{e.updatedAt.slice(0, 16).replace('T', ' ')}</td>
            </tr>
          ))}
        </tbody>
      </table>
    </div>
  );
}

export default function ExtractsTable(props: Props) {
  return (
    <QueryRoot>
      <Table {...props} />
    </QueryRoot>
  );
}
