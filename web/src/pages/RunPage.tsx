import { Link, useParams } from 'react-router';
import { useMutation, useQueryClient } from '@tanstack/react-query';
import { api } from '../api/client.js';
import { keys, useRun } from '../api/queries.js';
import type { Run, RunResponse, RunStatus } from '../api/contract.js';
import { isStatus } from '../api/ApiError.js';
import { backgroundOfSpec, latticeOfSpec } from '../labels.js';
import { formatDateTime } from '../format.js';
import { RunStatsTable } from './RunStatsTable.js';
import { Button, Count, EmptyState, ErrorPanel, FactList, FormError, Notice, PageHeading, ProgressBar, Section, SkeletonBlock, StatusBadge } from '../ui/index.js';

const ACTIVE: readonly RunStatus[] = ['queued', 'computing', 'rendering'];

export function RunPage() {
  const { id = '' } = useParams();
  const run = useRun(id);
  if (run.isPending) return <SkeletonBlock lines={8} />;
  if (run.isError) {
    if (isStatus(run.error, 404) || isStatus(run.error, 400)) {
      return (
        <EmptyState title="No run at this address" action={<Link to="/runs">Back to runs</Link>}>
          It may belong to another lab, or the link is mistyped.
        </EmptyState>
      );
    }
    return <ErrorPanel error={run.error} />;
  }
  return <RunDetail run={run.data.run} />;
}

function RunDetail({ run }: { run: Run }) {
  const qc = useQueryClient();
  const cancel = useMutation({
    mutationFn: () => api<RunResponse>('POST', `/api/runs/${run.id}/cancel`),
    onSuccess: (r) => qc.setQueryData(keys.run(run.id), r),
  });
  const active = ACTIVE.includes(run.status);
  const spec = run.spec;
  const wall = run.startedAt && run.finishedAt ? (Date.parse(run.finishedAt) - Date.parse(run.startedAt)) / 1000 : null;
  return (
    <div className="space-y-8">
      <PageHeading
        overline={
          <Link to="/runs" className="text-ink-faint no-underline hover:text-press">
            ← Runs
          </Link>
        }
        title={run.title}
        lede={
          <span className="flex items-center gap-3">
            <StatusBadge status={run.status} /> by {run.author.name} · created {formatDateTime(run.createdAt)}
            {run.finishedAt ? ` · finished ${formatDateTime(run.finishedAt)}` : run.startedAt ? ` · started ${formatDateTime(run.startedAt)}` : ''}
          </span>
        }
        actions={
          active ? (
            <Button tone="danger" busy={cancel.isPending} busyLabel="Cancelling…" onClick={() => confirm('Cancel this run? Work done so far is discarded.') && cancel.mutate()}>
              Cancel run
            </Button>
          ) : null
        }
      />
      {cancel.isError ? <FormError error={cancel.error} /> : null}
      {active ? (
        <Section title={run.status === 'queued' ? 'Waiting for a worker' : 'In progress'}>
          <ProgressBar progress={run.progress} stage={run.stage ?? (run.status === 'queued' ? 'queued' : run.status)} startedAt={run.startedAt} />
        </Section>
      ) : null}
      {run.status === 'failed' ? (
        <ErrorPanel title="The run failed" error={new Error(run.error ?? 'the worker gave no reason')} />
      ) : null}
      {run.status === 'cancelled' ? <Notice tone="warning" title="Cancelled">This run was stopped before it finished.</Notice> : null}

      <div className="grid grid-cols-2 gap-8">
        <Section title="Specification">
          <FactList
            items={[
              { term: 'Grains at the origin (n)', value: <Count n={spec.chips} unit="grains" /> },
              { term: 'Lattice', value: latticeOfSpec(spec.lattice) },
              { term: 'Background', value: backgroundOfSpec(spec.background) },
              {
                term: 'Further sources',
                value: spec.sources.length ? (
                  <ul className="space-y-0.5">
                    {spec.sources.map((s, i) => (
                      <li key={i}>
                        <Count n={s.chips} unit="grains" /> at <span className="font-mono text-[13px]">({s.at.join(', ')})</span>
                      </li>
                    ))}
                  </ul>
                ) : (
                  <span className="text-ink-faint">none</span>
                ),
              },
              { term: 'Run id', value: <span className="font-mono text-xs">{run.id}</span> },
            ]}
          />
        </Section>
        <Section title="Statistics" description={run.status === 'finished' ? undefined : 'Filled in when the run finishes.'}>
          <RunStatsTable stats={run.stats} wallSeconds={wall} />
        </Section>
      </div>
    </div>
  );
}
