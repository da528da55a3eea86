/**
 * A paged, sortable look at an extract version's rows. Paging and sorting happen on the
 * server (GET …/rows); every page viewed is recorded in the audit trail, which the panel
 * says before anything is shown.
 */
import { keepPreviousData, useQuery } from '@tanstack/react-query';
import {
  FlexRender,
  rowPaginationFeature,
  rowSortingFeature,
  tableFeatures,
  useTable,
  type ColumnDef,
  type PaginationState,
  type SortingState,
} from '@tanstack/react-table';
import { useMemo, useState } from 'react';
import { apiFetch } from '@/lib/client/api';
import { QueryRoot } from '@/components/ui/QueryRoot';
import { SortableHeader } from '@/components/ui/SortableHeader';
import type { RowsPage } from './columns.server';

const features = tableFeatures({ rowSortingFeature, rowPaginationFeature });
type Row = (string | number | null)[];

function Preview({ extractId, versionId, columns }: Props) {
  const [opened, setOpened] = useState(false);
  const [sorting, setSorting] = useState<SortingState>([]);
  const [pagination, setPagination] = useState<PaginationState>({ pageIndex: 0, pageSize: 25 });
  const sort = sorting[0];
  const query = useQuery({
    queryKey: ['rows', versionId, pagination, sort],
    enabled: opened,
    placeholderData: keepPreviousData,
    queryFn: () => {
      const params = new URLSearchParams({ page: String(pagination.pageIndex + 1), pageSize: String(pagination.pageSize) });
      if (sort) {
        params.set('sort', sort.id);
        params.set('direction', sort.desc ? 'desc' : 'asc');
      }
      return apiFetch<RowsPage>(`/api/extracts/${extractId}/versions/${versionId}/rows?${params}`);
    },
  });
  const columnDefs = useMemo<ColumnDef<typeof features, Row>[]>(
    () =>
      columns.map((name, index) => ({
        id: name,
        header: name,
        accessorFn: (row: Row) => row[index],
        cell: (info) => {
          const value = info.getValue() as string | number | null;
          return value === null ? <span className="text-ink-500 italic">missing</span> : String(value);
        },
      })),
    [columns],
  );
  const data = useMemo(() => query.data?.rows ?? [], [query.data]);
  const table = useTable({
    features,
    columns: columnDefs,
    data,
    state: { sorting, pagination },
    onSortingChange: (updater) => {
      setSorting(updater);
      setPagination((p) => ({ ...p, pageIndex: 0 }));
    },
    onPaginationChange: setPagination,
    manualSorting: true,
    manualPagination: true,
    rowCount: query.data?.total ?? 0,
    enableMultiSort: false,
  });

  if (!opened) {
    return (
      <div className="card p-5">
        <p className="text-sm text-ink-700">Showing rows is a view of row-level data and is recorded in the audit trail with your name.</p>
        <button type="button" className="btn btn-secondary mt-3" onClick={() => setOpened(true)}>Show rows</button>
      </div>
    );
  }
  if (query.isError) return <p role="alert" className="text-brick-700">Could not load rows: {query.error.message}</p>;
  return (
    <div data-testid="rows-preview">
      <div className="card overflow-x-auto">
        <table className="data-table w-full text-sm">
          <thead>
            {table.getHeaderGroups().map((group) => (
              <tr key={group.id}>
                {group.headers.map((header) => (
                  <SortableHeader key={header.id} sorted={header.column.getIsSorted()} onToggle={header.column.getToggleSortingHandler()}>
                    <FlexRender header={header} />
                  </SortableHeader>
                ))}
              </tr>
            ))}
          </thead>
          <tbody>
            {table.getRowModel().rows.map((row) => (
              <tr key={row.id}>
                {row.getAllCells().map((cell) => <td key={cell.id} className="tabular-nums"><FlexRender cell={cell} /></td>)}
              </tr>
            ))}
          </tbody>
        </table>
      </div>
      <div className="flex items-center gap-3 mt-3 text-sm">
        <button type="button" className="btn btn-secondary" onClick={() => table.previousPage()} disabled={!table.getCanPreviousPage()}>Previous</button>
        <span aria-live="polite">
          Page {pagination.pageIndex + 1} of {Math.max(1, table.getPageCount())} · {(query.data?.total ?? 0).toLocaleString('en-GB')} rows
          {query.isFetching && ' · loading…'}
        </span>
        <button type="button" className="btn btn-secondary" onClick={() => table.nextPage()} disabled={!table.getCanNextPage()}>Next</button>
        <label className="ml-auto flex items-center gap-2">Rows per page
          <select className="field-input w-auto" value={pagination.pageSize} onChange={(e) => setPagination({ pageIndex: 0, pageSize: Number(e.target.value) })}>
            {[10, 25, 50, 100].map((n) => <option key={n} value={n}>{n}</option>)}
          </select>
        </label>
      </div>
    </div>
  );
}

interface Props {
  extractId: string;
  versionId: string;
  columns: string[];
}

export default function RowsPreview(props: Props) {
  return (
    <QueryRoot>
      <Preview {...props} />
    </QueryRoot>
  );
}
