import { useState } from 'react';
import { Link, useSearchParams } from 'react-router';
import { useLab, useRuns } from '../api/queries.js';
import { LATTICE_PRESETS, RUN_STATUSES, type ListRunsQueryInput, type Run, type RunStatus } from '../api/contract.js';
import { useActiveLab, useSignedIn } from '../auth/useSignedIn.js';
import { backgroundOfSpec, latticeName, latticeOfSpec, runStatusWord } from '../labels.js';
import { formatDate } from '../format.js';
import {
  Button, Count, EmptyState, ErrorPanel, LinkButton, PageHeading, Pager, ProgressBar, SelectField, SkeletonTable,
  SortableTable, StatusBadge, Thumbnail, type Column, type SortState,
} from '../ui/index.js';
import { runPicture } from '../thumbnails.js';
import { usePhoneWidth } from '../ui/phoneWidth.js';
import { NewRunForm } from './NewRunForm.js';
import { RunsOrderField, RunsStacked } from './RunsStacked.js';

const PAGE_SIZE = 25;
type SortKey = NonNullable<ListRunsQueryInput['sort']>;
const SORT_KEYS: readonly SortKey[] = ['createdAt', 'finishedAt', 'title', 'status', 'chips'];

const columns: Column<Run>[] = [
  {
    key: 'picture',
    header: <span className="sr-only">Picture</span>,
    // the picture and the cell's padding
    width: '8rem',
    cell: (r) => (
      // a larger target for the mouse; hidden from the keyboard and screen readers, whose one link per row is the title
      <Link to={`/runs/${r.id}`} tabIndex={-1} aria-hidden="true" className="block w-fit">
        <Thumbnail picture={runPicture(r)} alt={`Picture of ${r.title}`} />
      </Link>
    ),
  },
  {
    key: 'title',
    header: 'Run',
    serverSort: true,
    cell: (r) => (
      <Link to={`/runs/${r.id}`} className="block min-w-40 font-medium text-ink no-underline hover:text-press">
        {r.title}
      </Link>
    ),
  },
  { key: 'chips', header: 'n (grains)', serverSort: true, align: 'right', cell: (r) => <Count n={r.spec.chips} stacked /> },
  {
    key: 'lattice',
    header: 'Lattice · background',
    cell: (r) => (
      <div className="min-w-36">
        <p>{latticeOfSpec(r.spec.lattice)}</p>
        <p className="text-xs text-ink-soft">{backgroundOfSpec(r.spec.background)}</p>
      </div>
    ),
  },
  {
    key: 'status',
    header: 'Status',
    serverSort: true,
    width: '10.5rem',
    cell: (r) =>
      r.status === 'computing' || r.status === 'rendering' ? (
        <ProgressBar compact progress={r.progress} stage={r.stage ?? runStatusWord(r.status)} startedAt={r.startedAt} />
      ) : (
        <StatusBadge status={r.status} />
      ),
  },
  { key: 'toppled', header: 'Toppled sites', align: 'right', cell: (r) => <StatCell value={r.stats?.toppledSites ?? null} /> },
  { key: 'topplings', header: 'Topplings', align: 'right', cell: (r) => <StatCell value={r.stats ? BigInt(r.stats.totalTopplings) : null} /> },
  {
    // sorts by creation time; the author filter sits above the table
    key: 'createdAt',
    header: 'Author · created',
    serverSort: true,
    cell: (r) => (
      <div className="whitespace-nowrap">
        <p>{r.author.name}</p>
        <p className="text-xs text-ink-soft">{formatDate(r.createdAt)}</p>
      </div>
    ),
  },
];

function StatCell({ value }: { value: number | bigint | null }) {
  // Exact and grouped; the power of ten is kept for n, so these columns stay narrow enough to scan.
  return value === null ? <span className="text-ink-faint">—</span> : <Count n={value} showPower={false} />;
}

export function RunsList() {
  const me = useSignedIn();
  const lab = useActiveLab();
  const [params, setParams] = useSearchParams();
  const [composing, setComposing] = useState(false);
  // a phone reads the runs as stacked rows, ordered by a select instead of the table's headings
  const phone = usePhoneWidth();

  const status = (RUN_STATUSES as readonly string[]).includes(params.get('status') ?? '') ? (params.get('status') as RunStatus) : undefined;
  const lattice = params.get('lattice') || undefined;
  const author = params.get('author') || undefined;
  const sort = (SORT_KEYS as readonly string[]).includes(params.get('sort') ?? '') ? (params.get('sort') as SortKey) : 'createdAt';
  const order = params.get('order') === 'asc' ? 'asc' : 'desc';
  const page = Math.max(1, Number(params.get('page') ?? 1) || 1);

  const runs = useRuns({ labId: lab?.id, status, lattice, author, sort, order, page, pageSize: PAGE_SIZE });
  const members = useLab(lab?.id);

  function set(updates: Record<string, string | undefined>) {
    const next = new URLSearchParams(params);
    for (const [k, v] of Object.entries(updates)) {
      if (v) next.set(k, v);
      else next.delete(k);
    }
    if (!('page' in updates)) next.delete('page');
    setParams(next);
  }

  if (!lab) {
    return (
      <div>
        <PageHeading title="Runs" />
        <EmptyState title="You are not in a lab yet" action={<LinkButton to="/lab">Go to the lab page</LinkButton>}>
          Runs belong to a lab and draw on its compute budget. Accept an invitation or start a lab of your own.
        </EmptyState>
      </div>
    );
  }

  const filtered = Boolean(status || lattice || author);
  return (
    <div>
      <PageHeading
        overline={lab.name}
        title="Runs"
        lede={`Every run of the lab, newest first. ${phone ? 'Filter and order' : 'Sort by a column heading; filter'} to find one run among many.`}
        actions={
          composing ? null : phone && me.user.emailVerified ? (
            // the form's columns need a tablet: on a phone it opens as its own page, laid out as on a tablet
            <LinkButton to="/runs/new">New run</LinkButton>
          ) : (
            <Button onClick={() => setComposing(true)} disabled={!me.user.emailVerified} title={me.user.emailVerified ? undefined : 'confirm your e-mail first'}>
              New run
            </Button>
          )
        }
      />
      {composing ? <NewRunForm labId={lab.id} onClose={() => setComposing(false)} /> : null}

      {/* on a phone the filters and the order share a two-column grid across the screen */}
      <div className="mb-5 flex flex-wrap items-end gap-4 max-sm:grid max-sm:grid-cols-2 max-sm:gap-3">
        <SelectField label="Status" value={status ?? ''} onChange={(e) => set({ status: e.target.value })} fieldClassName="w-44 max-sm:w-auto max-sm:min-w-0">
          <option value="">any status</option>
          {RUN_STATUSES.map((s) => (
            <option key={s} value={s}>
              {runStatusWord(s)}
            </option>
          ))}
        </SelectField>
        <SelectField label="Lattice" value={lattice ?? ''} onChange={(e) => set({ lattice: e.target.value })} fieldClassName="w-48 max-sm:w-auto max-sm:min-w-0">
          <option value="">any lattice</option>
          {[...LATTICE_PRESETS, 'periodic'].map((l) => (
            <option key={l} value={l}>
              {latticeName(l)}
            </option>
          ))}
        </SelectField>
        <SelectField label="Author" value={author ?? ''} onChange={(e) => set({ author: e.target.value })} fieldClassName="w-56 max-sm:w-auto max-sm:min-w-0">
          <option value="">anyone in the lab</option>
          {(members.data?.members ?? []).map((m) => (
            <option key={m.userId} value={m.userId}>
              {m.name}
            </option>
          ))}
        </SelectField>
        {phone ? <RunsOrderField sort={sort} order={order} onChange={(s, o) => set({ sort: s, order: o })} className="min-w-0" /> : null}
        {filtered ? (
          <Button tone="quiet" className="max-sm:col-span-2" onClick={() => set({ status: undefined, lattice: undefined, author: undefined })}>
            Clear filters
          </Button>
        ) : null}
      </div>

      {runs.isPending ? (
        <SkeletonTable rows={6} columns={9} />
      ) : runs.isError ? (
        <ErrorPanel error={runs.error} />
      ) : runs.data.runs.length === 0 ? (
        filtered ? (
          <EmptyState title="No runs match these filters" action={<Button tone="quiet" onClick={() => set({ status: undefined, lattice: undefined, author: undefined })}>Clear filters</Button>}>
            Widen the status, lattice or author to see more.
          </EmptyState>
        ) : (
          <EmptyState
            title="No runs yet"
            action={
              me.user.emailVerified && !composing ? (
                phone ? <LinkButton to="/runs/new">Start the first run</LinkButton> : <Button onClick={() => setComposing(true)}>Start the first run</Button>
              ) : undefined
            }
          >
            A run places n grains at the origin of a lattice over a background and topples until every site is stable.
            {me.user.emailVerified ? null : ' Confirm your e-mail address to start one.'}
          </EmptyState>
        )
      ) : (
        <>
          {phone ? (
            <RunsStacked runs={runs.data.runs} />
          ) : (
            <SortableTable
              caption="runs"
              columns={columns}
              rows={runs.data.runs}
              rowKey={(r) => r.id}
              sort={{ key: sort, order }}
              onSort={(s: SortState) => set({ sort: s.key, order: s.order })}
            />
          )}
          <Pager page={runs.data.page} pageSize={runs.data.pageSize} total={runs.data.total} unit="runs" onPage={(p) => set({ page: String(p) })} />
        </>
      )}
    </div>
  );
}
