import type { ReactNode } from 'react';

/**
 * A column header that sorts when pressed (a button, so Enter and Space work), with
 * aria-sort telling assistive technology the current order.
 */
export function SortableHeader({
  sorted,
  canSort = true,
  onToggle,
  children,
}: {
  sorted: false | 'asc' | 'desc';
  canSort?: boolean;
  onToggle: ((event: unknown) => void) | undefined;
  children: ReactNode;
}) {
  return (
    <th aria-sort={sorted === 'asc' ? 'ascending' : sorted === 'desc' ? 'descending' : undefined}>
      {canSort ? (
        <button type="button" className="inline-flex items-center gap-1 uppercase tracking-wide font-semibold cursor-pointer" onClick={onToggle}>
          {children}
          <span aria-hidden="true" className="text-ink-500">{sorted === 'asc' ? '▲' : sorted === 'desc' ? '▼' : '↕'}</span>
        </button>
      ) : (
        children
      )}
    </th>
  );
}
