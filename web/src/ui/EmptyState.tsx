import type { ReactNode } from 'react';

/** A calm blank sheet with one sentence of why and, when there is one, the next step. */
export function EmptyState({ title, children, action }: { title: ReactNode; children?: ReactNode; action?: ReactNode }) {
  return (
    <div className="rounded-lg border border-dashed border-rule bg-sheet/60 px-8 py-12 text-center">
      <EmptyMark />
      <p className="mt-4 text-base font-semibold text-ink">{title}</p>
      {children ? <div className="mx-auto mt-2 max-w-md text-sm text-ink-soft">{children}</div> : null}
      {action ? <div className="mt-5 flex flex-wrap justify-center gap-3">{action}</div> : null}
    </div>
  );
}

/** A small stack of grains, drawn rather than fetched. */
function EmptyMark() {
  return (
    <svg aria-hidden="true" viewBox="0 0 48 32" className="mx-auto h-8 w-12 text-rule">
      {[[20, 4], [14, 12], [26, 12], [8, 20], [20, 20], [32, 20], [2, 28], [14, 28], [26, 28], [38, 28]].map(([x, y]) => (
        <rect key={`${x}-${y}`} x={x} y={y} width="8" height="4" rx="1" fill="currentColor" />
      ))}
    </svg>
  );
}
