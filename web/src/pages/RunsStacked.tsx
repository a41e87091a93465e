import { Link } from 'react-router';
import type { ListRunsQueryInput, Run } from '../api/contract.js';
import { backgroundOfSpec, latticeOfSpec, runStatusWord } from '../labels.js';
import { formatDate } from '../format.js';
import { runPicture } from '../thumbnails.js';
import { Count, ProgressBar, SelectField, StatusBadge, Thumbnail } from '../ui/index.js';

type SortKey = NonNullable<ListRunsQueryInput['sort']>;
type Order = 'asc' | 'desc';

/**
 * The runs on a phone: one stacked row per run instead of the table's nine columns, so the first thing
 * read is each run's state (its progress and time left while it works). The statistics columns stay on
 * the run's own page.
 */
export function RunsStacked({ runs }: { runs: Run[] }) {
  return (
    <ul aria-label="runs" className="divide-y divide-rule-soft rounded-lg border border-rule bg-sheet">
      {runs.map((r) => (
        <li key={r.id} className="flex gap-3 p-3" data-testid="run-row">
          {/* the picture is a larger target for a thumb; the title is the row's one link for screen readers */}
          <Link to={`/runs/${r.id}`} tabIndex={-1} aria-hidden="true" className="shrink-0">
            <Thumbnail picture={runPicture(r)} alt={`Picture of ${r.title}`} size={72} />
          </Link>
          <div className="min-w-0 flex-1">
            <Link to={`/runs/${r.id}`} className="block font-medium leading-snug text-ink no-underline hover:text-press">
              {r.title}
            </Link>
            <div className="mt-1.5">
              {r.status === 'computing' || r.status === 'rendering' ? (
                <ProgressBar compact progress={r.progress} stage={r.stage ?? runStatusWord(r.status)} startedAt={r.startedAt} />
              ) : (
                <StatusBadge status={r.status} />
              )}
            </div>
            <p className="mt-1.5 text-xs text-ink-soft">
              <Count n={r.spec.chips} unit="grains" showPower={false} /> · {latticeOfSpec(r.spec.lattice)} · {backgroundOfSpec(r.spec.background)}
            </p>
            <p className="mt-0.5 text-xs text-ink-faint">
              {r.author.name} · {formatDate(r.createdAt)}
            </p>
          </div>
        </li>
      ))}
    </ul>
  );
}

/** Orders a phone can pick without the table's headings, in words; each is a sort key of the API and a direction. */
const ORDERS: { sort: SortKey; order: Order; words: string }[] = [
  { sort: 'createdAt', order: 'desc', words: 'newest first' },
  { sort: 'createdAt', order: 'asc', words: 'oldest first' },
  { sort: 'finishedAt', order: 'desc', words: 'latest finished first' },
  { sort: 'finishedAt', order: 'asc', words: 'earliest finished first' },
  { sort: 'title', order: 'asc', words: 'title, A to Z' },
  { sort: 'title', order: 'desc', words: 'title, Z to A' },
  { sort: 'status', order: 'asc', words: 'status' },
  { sort: 'status', order: 'desc', words: 'status, reversed' },
  { sort: 'chips', order: 'desc', words: 'most grains first' },
  { sort: 'chips', order: 'asc', words: 'fewest grains first' },
];

/** The table's sortable headings as one select, for the stacked rows. */
export function RunsOrderField({ sort, order, onChange, className }: { sort: SortKey; order: Order; onChange: (sort: SortKey, order: Order) => void; className?: string }) {
  return (
    <SelectField
      label="Order"
      value={`${sort}:${order}`}
      fieldClassName={className}
      onChange={(e) => {
        const picked = ORDERS.find((o) => `${o.sort}:${o.order}` === e.target.value);
        if (picked) onChange(picked.sort, picked.order);
      }}
    >
      {ORDERS.map((o) => (
        <option key={`${o.sort}:${o.order}`} value={`${o.sort}:${o.order}`}>
          {o.words}
        </option>
      ))}
    </SelectField>
  );
}
