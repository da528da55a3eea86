/**
 * A sortable, filterable table for lists that fit in the browser (people, initiatives).
 * Keyboard: the column headers are buttons (Enter or Space sorts); the filter box
 * narrows every column at once.
 */
import {
  FlexRender,
  columnFilteringFeature,
  createFilteredRowModel,
  createSortedRowModel,
  filterFn_includesString,
  globalFilteringFeature,
  rowSortingFeature,
  sortFn_alphanumeric,
  sortFn_basic,
  sortFn_text,
  tableFeatures,
  useTable,
  type ColumnDef,
  type RowData,
  type SortingState,
} from '@tanstack/react-table';
import { useState } from 'react';
import { SortableHeader } from './SortableHeader';

export const dataTableFeatures = tableFeatures({
  rowSortingFeature,
  columnFilteringFeature,
  globalFilteringFeature,
  sortedRowModel: createSortedRowModel(),
  filteredRowModel: createFilteredRowModel(),
  sortFns: { alphanumeric: sortFn_alphanumeric, text: sortFn_text, basic: sortFn_basic },
  filterFns: { includesString: filterFn_includesString },
});

export type DataColumn<T extends RowData> = ColumnDef<typeof dataTableFeatures, T>;

interface Props<T extends RowData> {
  data: T[];
  columns: DataColumn<T>[];
  /** Label of the filter box, e.g. "Filter people". */
  filterLabel: string;
  emptyMessage: string;
  initialSort?: SortingState;
  testId?: string;
}

export function DataTable<T extends RowData>({ data, columns, filterLabel, emptyMessage, initialSort = [], testId }: Props<T>) {
  const [sorting, setSorting] = useState<SortingState>(initialSort);
  const [globalFilter, setGlobalFilter] = useState('');
  const table = useTable({
    features: dataTableFeatures,
    columns,
    data,
    state: { sorting, globalFilter },
    onSortingChange: setSorting,
    onGlobalFilterChange: setGlobalFilter,
    globalFilterFn: 'includesString',
  });
  const rows = table.getRowModel().rows;
  return (
    <div data-testid={testId}>
      <label className="block max-w-sm mb-3">
        <span className="sr-only">{filterLabel}</span>
        <input
          className="field-input"
          type="search"
          placeholder={`${filterLabel}…`}
          value={globalFilter}
          onChange={(event) => setGlobalFilter(event.target.value)}
          aria-label={filterLabel}
        />
      </label>
      <div className="card overflow-x-auto">
        <table className="data-table w-full text-sm">
          <thead>
            {table.getHeaderGroups().map((group) => (
              <tr key={group.id}>
                {group.headers.map((header) => (
                  <SortableHeader key={header.id} sorted={header.column.getIsSorted()} canSort={header.column.getCanSort()} onToggle={header.column.getToggleSortingHandler()}>
                    {header.isPlaceholder ? null : <FlexRender header={header} />}
                  </SortableHeader>
                ))}
              </tr>
            ))}
          </thead>
          <tbody>
            {rows.length === 0 ? (
              <tr>
                <td colSpan={columns.length} className="text-center text-ink-500 py-6">
                  {globalFilter ? `Nothing matches “${globalFilter}”.` : emptyMessage}
                </td>
              </tr>
            ) : (
              rows.map((row) => (
                <tr key={row.id}>
                  {row.getAllCells().map((cell) => (
                    <td key={cell.id}>
                      <FlexRender cell={cell} />
                    </td>
                  ))}
                </tr>
              ))
            )}
          </tbody>
        </table>
      </div>
      <p className="text-xs text-ink-500 mt-2" aria-live="polite">
        {rows.length} of {data.length} shown
      </p>
    </div>
  );
}
