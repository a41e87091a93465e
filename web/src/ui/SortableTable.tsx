import { useMemo, useState, type ReactNode } from 'react';
import { ScrollFrame } from './ScrollFrame.js';

export type SortOrder = 'asc' | 'desc';
export interface SortState {
  key: string;
  order: SortOrder;
}

export interface Column<T> {
  key: string;
  header: ReactNode;
  cell: (row: T) => ReactNode;
  /** value compared when sorting in the browser; leave out for columns that do not sort */
  sortValue?: (row: T) => string | number | null;
  /** for server-sorted tables: this column sorts by the given API key */
  serverSort?: boolean;
  align?: 'left' | 'right';
  width?: string;
}

interface SortableTableProps<T> {
  columns: Column<T>[];
  rows: T[];
  rowKey: (row: T) => string;
  /** Server-side sorting: pass the current state and a handler; otherwise the table sorts locally. */
  sort?: SortState;
  onSort?: (next: SortState) => void;
  initialSort?: SortState;
  caption?: string;
  dense?: boolean;
}

/** Dense, scannable rows; headers are buttons that toggle ascending/descending. */
export function SortableTable<T>({ columns, rows, rowKey, sort, onSort, initialSort, caption, dense = true }: SortableTableProps<T>) {
  const [localSort, setLocalSort] = useState<SortState | undefined>(initialSort);
  const server = Boolean(onSort);
  const current = server ? sort : localSort;

  const sorted = useMemo(() => {
    if (server || !current) return rows;
    const col = columns.find((c) => c.key === current.key);
    if (!col?.sortValue) return rows;
    const dir = current.order === 'asc' ? 1 : -1;
    return [...rows].sort((a, b) => {
      const va = col.sortValue!(a);
      const vb = col.sortValue!(b);
      if (va === vb) return 0;
      if (va === null) return 1;
      if (vb === null) return -1;
      return (va < vb ? -1 : 1) * dir;
    });
  }, [rows, columns, current, server]);

  function toggle(key: string) {
    const next: SortState = current?.key === key ? { key, order: current.order === 'asc' ? 'desc' : 'asc' } : { key, order: 'asc' };
    if (onSort) onSort(next);
    else setLocalSort(next);
  }

  const pad = dense ? 'px-3 py-2' : 'px-4 py-3';
  return (
    <ScrollFrame className="rounded-lg border border-rule bg-sheet">
      <table className="w-full border-collapse text-sm">
        {caption ? <caption className="sr-only">{caption}</caption> : null}
        <thead>
          <tr className="border-b border-rule bg-paper/70 text-left">
            {columns.map((c) => {
              const sortable = server ? c.serverSort : Boolean(c.sortValue);
              const active = current?.key === c.key;
              return (
                <th
                  key={c.key}
                  scope="col"
                  style={c.width ? { width: c.width } : undefined}
                  aria-sort={active ? (current!.order === 'asc' ? 'ascending' : 'descending') : undefined}
                  className={`${pad} text-xs font-semibold uppercase tracking-wide text-ink-soft ${c.align === 'right' ? 'text-right' : ''}`}
                >
                  {sortable ? (
                    <button
                      type="button"
                      onClick={() => toggle(c.key)}
                      className={`inline-flex items-center gap-1 uppercase tracking-wide hover:text-ink ${active ? 'text-ink' : ''}`}
                    >
                      {c.header}
                      <SortMark state={active ? current!.order : undefined} />
                    </button>
                  ) : (
                    c.header
                  )}
                </th>
              );
            })}
          </tr>
        </thead>
        <tbody>
          {sorted.map((row) => (
            <tr key={rowKey(row)} className="border-b border-rule-soft last:border-0 hover:bg-paper/50">
              {columns.map((c) => (
                // right-aligned cells hold numbers with their units ("0 credits", "3.38 MB"): one line each, the column widens instead
                <td key={c.key} className={`${pad} align-middle ${c.align === 'right' ? 'whitespace-nowrap text-right tnum' : ''}`}>
                  {c.cell(row)}
                </td>
              ))}
            </tr>
          ))}
        </tbody>
      </table>
    </ScrollFrame>
  );
}

function SortMark({ state }: { state?: SortOrder }) {
  return (
    <svg aria-hidden="true" viewBox="0 0 8 12" className="h-3 w-2">
      <path d="M4 1 7 5H1z" fill="currentColor" opacity={state === 'asc' ? 1 : 0.25} />
      <path d="M4 11 1 7h6z" fill="currentColor" opacity={state === 'desc' ? 1 : 0.25} />
    </svg>
  );
}

/**
 * The count beside the pager: "41–60 of 213 runs" across pages, and plainly "4 runs" or "1 figure"
 * when everything is on one page (a range "1–1 of 1" says nothing more).
 */
export function pagerSummary(page: number, pageSize: number, total: number, unit: string): string {
  const noun = total === 1 ? unit.replace(/s$/, '') : unit;
  if (total <= pageSize && page === 1) return `${total.toLocaleString('en-US')} ${noun}`;
  const from = (page - 1) * pageSize + 1;
  const to = Math.min(total, page * pageSize);
  return `${from.toLocaleString('en-US')}–${to.toLocaleString('en-US')} of ${total.toLocaleString('en-US')} ${noun}`;
}

/** Previous / next with "41–60 of 213 runs"; on a single page only the count. */
export function Pager({ page, pageSize, total, unit, onPage }: { page: number; pageSize: number; total: number; unit: string; onPage: (p: number) => void }) {
  const pages = Math.max(1, Math.ceil(total / pageSize));
  return (
    // wraps only where the count and the buttons cannot share a phone's line
    <nav aria-label="pages" className="mt-3 flex flex-wrap items-center justify-between gap-y-2 text-sm text-ink-soft">
      <span className="tnum">{pagerSummary(page, pageSize, total, unit)}</span>
      {pages === 1 && page === 1 ? null : (
        <span className="flex items-center gap-2">
          <button type="button" className="rounded border border-rule bg-sheet px-3 py-1 disabled:opacity-40" disabled={page <= 1} onClick={() => onPage(page - 1)}>
            Previous
          </button>
          <span className="tnum px-1">
            page {page} of {pages}
          </span>
          <button type="button" className="rounded border border-rule bg-sheet px-3 py-1 disabled:opacity-40" disabled={page >= pages} onClick={() => onPage(page + 1)}>
            Next
          </button>
        </span>
      )}
    </nav>
  );
}
