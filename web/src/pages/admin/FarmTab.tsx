import type { FarmHealthResponse } from '../../api/contract.js';
import { formatDateTime, groupThousands } from '../../format.js';
import { runStatusWord } from '../../labels.js';
import { Button, EmptyState, ErrorPanel, FormError, ProgressBar, Section, SkeletonTable, SortableTable, type Column } from '../../ui/index.js';
import { workersSummary } from './adminFormat.js';
import { useFarmHealth, useRetryJob } from './adminQueries.js';

type Queue = FarmHealthResponse['queues'][number];
type Worker = FarmHealthResponse['workers'][number];
type Running = FarmHealthResponse['running'][number];
type Failed = FarmHealthResponse['failed'][number];

const queueColumns: Column<Queue>[] = [
  { key: 'queue', header: 'Queue', cell: (q) => <span className="font-mono text-xs">{q.queue}{q.paused ? ' (paused)' : ''}</span>, sortValue: (q) => q.queue },
  { key: 'waiting', header: 'Waiting', align: 'right', cell: (q) => groupThousands(q.waiting), sortValue: (q) => q.waiting },
  { key: 'priority', header: 'By priority', cell: (q) => (q.byPriority.length ? q.byPriority.map((p) => `${p.priority === 0 ? 'none' : p.priority}: ${groupThousands(p.jobs)}`).join(', ') : '—') },
  { key: 'active', header: 'Active', align: 'right', cell: (q) => groupThousands(q.active), sortValue: (q) => q.active },
  { key: 'delayed', header: 'Delayed', align: 'right', cell: (q) => groupThousands(q.delayed), sortValue: (q) => q.delayed },
  { key: 'failed', header: 'Failed', align: 'right', cell: (q) => groupThousands(q.failed), sortValue: (q) => q.failed },
  { key: 'completed', header: 'Completed (kept)', align: 'right', cell: (q) => groupThousands(q.completed), sortValue: (q) => q.completed },
];

const workerColumns: Column<Worker>[] = [
  { key: 'worker', header: 'Worker', cell: (w) => <span className="font-mono text-xs">{w.host}:{w.pid}</span>, sortValue: (w) => `${w.host}:${w.pid}` },
  { key: 'since', header: 'Up since', cell: (w) => formatDateTime(w.startedAt), sortValue: (w) => w.startedAt },
  { key: 'seen', header: 'Last heartbeat', cell: (w) => formatDateTime(w.at), sortValue: (w) => w.at },
  { key: 'doing', header: 'Doing', cell: (w) => (w.active.length ? w.active.map((a) => `${a.queue} ${a.runId ? `run ${a.runId.slice(0, 8)}` : a.jobId}`).join('; ') : 'idle') },
];

const runningColumns: Column<Running>[] = [
  { key: 'title', header: 'Run', cell: (r) => <a href={`/runs/${r.runId}`} className="font-medium">{r.title}</a>, sortValue: (r) => r.title.toLowerCase() },
  { key: 'lab', header: 'Lab', cell: (r) => r.labName, sortValue: (r) => r.labName },
  { key: 'progress', header: 'Progress', cell: (r) => <ProgressBar compact progress={r.progress} stage={r.stage ?? runStatusWord(r.status)} startedAt={r.startedAt} />, sortValue: (r) => r.progress },
  { key: 'worker', header: 'Worker', cell: (r) => <span className="font-mono text-xs">{r.worker ?? '—'}</span>, sortValue: (r) => r.worker },
];

function RetryButton({ job }: { job: Failed }) {
  const retry = useRetryJob();
  return (
    <div>
      <Button size="sm" tone="quiet" busy={retry.isPending} onClick={() => retry.mutate({ queue: job.queue, jobId: job.jobId })}>Retry</Button>
      {retry.isError ? <FormError error={retry.error} /> : null}
    </div>
  );
}

const failedColumns: Column<Failed>[] = [
  { key: 'when', header: 'Failed', cell: (f) => formatDateTime(f.failedAt), sortValue: (f) => f.failedAt },
  { key: 'job', header: 'Job', cell: (f) => <span className="font-mono text-xs">{f.queue} · {f.name}</span>, sortValue: (f) => f.queue },
  { key: 'run', header: 'Run', cell: (f) => (f.runId ? <a href={`/runs/${f.runId}`}>{f.runTitle ?? f.runId.slice(0, 8)}</a> : '—'), sortValue: (f) => f.runTitle },
  { key: 'lab', header: 'Lab', cell: (f) => f.labName ?? '—', sortValue: (f) => f.labName },
  { key: 'error', header: 'Error', cell: (f) => <span className="text-stamp">{f.error}</span> },
  { key: 'attempts', header: 'Attempts', align: 'right', cell: (f) => groupThousands(f.attemptsMade), sortValue: (f) => f.attemptsMade },
  { key: 'retry', header: '', cell: (f) => <RetryButton job={f} /> },
];

export function FarmTab() {
  const farm = useFarmHealth();
  if (farm.isPending) return <SkeletonTable rows={3} columns={6} />;
  if (farm.isError) return <ErrorPanel error={farm.error} />;
  const f = farm.data;
  return (
    <div className="space-y-8">
      <Section title="Queues" description={`As of ${formatDateTime(f.at)}; refreshed every 3 seconds.`}>
        <SortableTable caption="queues" columns={queueColumns} rows={f.queues} rowKey={(q) => q.queue} />
      </Section>
      <Section title="Workers" description={workersSummary(f.workers.length, f.bullWorkers, f.queues.length)}>
        {f.workers.length === 0 ? <EmptyState title="No worker is alive">Start one with the renderer worker; it reports here every few seconds.</EmptyState> : <SortableTable caption="workers" columns={workerColumns} rows={f.workers} rowKey={(w) => `${w.host}:${w.pid}`} />}
      </Section>
      <Section title="Running">
        {f.running.length === 0 ? <EmptyState title="Nothing is running" /> : <SortableTable caption="running jobs" columns={runningColumns} rows={f.running} rowKey={(r) => r.runId} />}
      </Section>
      <Section title="Failed jobs" description="A retry puts the job back on its queue and its run back in the state the job starts from; it is not charged again.">
        {f.failed.length === 0 ? <EmptyState title="No failed jobs" /> : <SortableTable caption="failed jobs" columns={failedColumns} rows={f.failed} rowKey={(j) => `${j.queue}/${j.jobId}`} initialSort={{ key: 'when', order: 'desc' }} />}
      </Section>
    </div>
  );
}
