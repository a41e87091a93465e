/** Grey bars in the shape of what is loading, so the page does not jump when data arrives. */
export function SkeletonLine({ className = '' }: { className?: string }) {
  return <span aria-hidden="true" className={`block h-3 animate-pulse rounded bg-rule-soft ${className}`} />;
}

export function SkeletonTable({ rows = 5, columns = 5 }: { rows?: number; columns?: number }) {
  return (
    <div role="status" aria-label="loading" className="overflow-hidden rounded-lg border border-rule bg-sheet">
      <div className="flex gap-6 border-b border-rule bg-paper/70 px-4 py-3">
        {Array.from({ length: columns }, (_, i) => (
          <SkeletonLine key={i} className="w-20" />
        ))}
      </div>
      {Array.from({ length: rows }, (_, r) => (
        <div key={r} className="flex gap-6 border-b border-rule-soft px-4 py-3.5 last:border-0">
          {Array.from({ length: columns }, (_, c) => (
            <SkeletonLine key={c} className={c === 0 ? 'w-40' : 'w-20'} />
          ))}
        </div>
      ))}
    </div>
  );
}

export function SkeletonBlock({ lines = 4 }: { lines?: number }) {
  return (
    <div role="status" aria-label="loading" className="space-y-3 rounded-lg border border-rule bg-sheet p-6">
      {Array.from({ length: lines }, (_, i) => (
        <SkeletonLine key={i} className={i % 3 === 0 ? 'w-2/3' : 'w-full'} />
      ))}
    </div>
  );
}
