import type { ReactNode } from 'react';

/** A sheet on the paper: titled block with optional actions on the right. */
export function Section({ title, description, actions, children, className = '' }: {
  title?: ReactNode;
  description?: ReactNode;
  actions?: ReactNode;
  children: ReactNode;
  className?: string;
}) {
  return (
    <section className={`rounded-xl border border-rule bg-sheet px-7 py-6 max-sm:px-4 max-sm:py-5 shadow-[0_1px_0_rgba(0,0,0,0.03)] ${className}`}>
      {title || actions ? (
        <div className="mb-5 flex items-start justify-between gap-6">
          <div>
            {title ? <h2 className="text-lg font-semibold text-ink">{title}</h2> : null}
            {description ? <p className="mt-1 text-sm text-ink-soft">{description}</p> : null}
          </div>
          {actions ? <div className="flex shrink-0 gap-2">{actions}</div> : null}
        </div>
      ) : null}
      {children}
    </section>
  );
}

/** Term/definition pairs, e.g. a run's spec. */
export function FactList({ items }: { items: { term: ReactNode; value: ReactNode }[] }) {
  return (
    // on a phone each term sits above its value: side by side the terms would leave the values a sliver
    <dl className="grid grid-cols-[minmax(9rem,auto)_minmax(0,1fr)] gap-x-8 gap-y-2.5 text-sm max-sm:grid-cols-1 max-sm:gap-y-0 max-sm:[&>div:first-child>dt]:mt-0">
      {items.map((it, i) => (
        <div key={i} className="contents">
          <dt className="text-ink-soft max-sm:mt-3 max-sm:text-xs">{it.term}</dt>
          <dd className="min-w-0 break-words text-ink">{it.value}</dd>
        </div>
      ))}
    </dl>
  );
}
