import { useEffect, useState } from 'react';
import { Link, useNavigate, useParams } from 'react-router';
import { useMutation, useQueryClient } from '@tanstack/react-query';
import { api } from '../api/client.js';
import { keys, useRun, useRunEvents, useRunJson } from '../api/queries.js';
import { useSignedIn } from '../auth/useSignedIn.js';
import { HeightBarsPlot, RadialProfilePlot } from '../plots/RunPlots.js';
import type { Run, RunResponse, RunStatus } from '../api/contract.js';
import { backgroundOfSpec, drawingOfSpec, latticeOfSpec, runEndedText, runStatusHeading, runStatusWord } from '../labels.js';
import { formatDateTime, formatDuration } from '../format.js';
import { RunStatsTable } from './RunStatsTable.js';
import { RunCertificate } from './RunCertificate.js';
import { statsNote } from '../runStats.js';
import { scaleSymbol } from '../../../shared/natural-scale.js';
import { isRunMissing, RunNotFound } from './RunNotFound.js';
import { Button, Count, ErrorPanel, FactList, FormError, LinkButton, Notice, PageHeading, ProgressBar, Section, SkeletonBlock, StatusBadge } from '../ui/index.js';

const ACTIVE: readonly RunStatus[] = ['queued', 'computing', 'rendering'];

export function RunPage() {
  const { id = '' } = useParams();
  // server-sent events once the run is known to be working (never for a finished run or one out of
  // reach, whose stream would only end at once or answer 404); polling only when the stream is down
  const [working, setWorking] = useState(false);
  const live = useRunEvents(id, working);
  const run = useRun(id, live);
  const status = run.data?.run.status;
  useEffect(() => setWorking(status !== undefined && ACTIVE.includes(status)), [status]);
  if (run.isPending) return <SkeletonBlock lines={8} />;
  if (run.isError) {
    if (isRunMissing(run.error)) return <RunNotFound />;
    return <ErrorPanel error={run.error} />;
  }
  return <RunDetail run={run.data.run} />;
}

function RunDetail({ run }: { run: Run }) {
  const qc = useQueryClient();
  const navigate = useNavigate();
  const me = useSignedIn();
  const cancel = useMutation({
    mutationFn: () => api<RunResponse>('POST', `/api/runs/${run.id}/cancel`),
    onSuccess: (r) => qc.setQueryData(keys.run(run.id), r),
  });
  const rerun = useMutation({
    mutationFn: () => api<RunResponse>('POST', `/api/runs/${run.id}/rerun`, {}),
    onSuccess: (r) => {
      void qc.invalidateQueries({ queryKey: ['runs'] });
      void navigate(`/runs/${r.run.id}`);
    },
  });
  // the arrays (and run.json with the radial profile) exist once the computation is done
  const expired = run.artifactsExpiredAt !== null;
  const computed = !expired && (run.status === 'finished' || (run.status === 'rendering' && run.stats !== null));
  const runJson = useRunJson({ kind: 'run', id: run.id }, computed);
  const active = ACTIVE.includes(run.status);
  // computing again is charged to the run's lab, so only its members may (a site admin looking in may not)
  const member = me.labs.some((l) => l.id === run.labId);
  const spec = run.spec;
  const wall = run.startedAt && run.finishedAt ? (Date.parse(run.finishedAt) - Date.parse(run.startedAt)) / 1000 : null;
  const ended = runEndedText(run, formatDateTime);
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
          // on a phone the words flow on beside the badge instead of standing as a column next to it
          <span className="flex items-center gap-3 max-sm:block">
            <StatusBadge status={run.status} /> by {run.author.name} · created {formatDateTime(run.createdAt)}
            {ended ? ` · ${ended}` : ''}
          </span>
        }
        actions={
          <>
            {run.status === 'finished' && !expired ? <LinkButton to={`/runs/${run.id}/view`}>Deep zoom</LinkButton> : null}
            <LinkButton tone="quiet" to={`/runs/new?from=${run.id}`}>
              Duplicate
            </LinkButton>
            {active ? (
              <Button tone="danger" busy={cancel.isPending} busyLabel="Cancelling…" onClick={() => confirm('Cancel this run? Work done so far is discarded.') && cancel.mutate()}>
                Cancel run
              </Button>
            ) : member ? (
              <Button tone="quiet" busy={rerun.isPending} busyLabel="Queueing…" onClick={() => rerun.mutate()}>
                Re-run
              </Button>
            ) : null}
          </>
        }
      />
      {cancel.isError ? <FormError error={cancel.error} /> : null}
      {rerun.isError ? <FormError error={rerun.error} /> : null}
      {run.seriesId ? (
        <p className="-mt-4 mb-6 text-sm">
          Part of a series: <Link to={`/series/${run.seriesId}`}>all grain counts side by side</Link>
        </p>
      ) : null}
      {active ? (
        <Section title={run.status === 'queued' ? 'Waiting for a worker' : 'In progress'}>
          <ProgressBar progress={run.progress} stage={run.stage ?? runStatusWord(run.status)} startedAt={run.startedAt} />
        </Section>
      ) : run.status === 'finished' ? (
        <Section title={runStatusHeading('finished')} description={wall !== null ? `Computed and drawn in ${formatDuration(wall)} of farm time.` : undefined}>
          <ProgressBar progress={1} stage={runStatusWord('finished')} startedAt={run.startedAt} />
        </Section>
      ) : null}
      {run.status === 'failed' ? (
        <ErrorPanel title="The run failed" error={new Error(run.error ?? 'the worker gave no reason')} />
      ) : null}
      {run.status === 'cancelled' ? <Notice tone="warning" title={runStatusHeading('cancelled')}>This run was stopped before it finished.</Notice> : null}
      {expired ? (
        <Notice tone="warning" title="Expired — artifacts removed">
          No published figure used this run, so its arrays and tiles were deleted on {formatDateTime(run.artifactsExpiredAt)} at the end of the storage period.
          The specification and statistics stay: Re-run computes it again.
        </Notice>
      ) : null}

      {run.stats ? (
        <Section title="Certificate" description="Checked by the engine on the final state before the result was stored.">
          <RunCertificate certificate={run.stats.certificate} />
        </Section>
      ) : null}

      <div className="grid grid-cols-1 gap-8 lg:grid-cols-2">
        <Section title="Specification">
          <FactList
            items={[
              { term: 'Grains at the origin (n)', value: <Count n={spec.chips} unit="grains" /> },
              { term: 'Lattice', value: latticeOfSpec(spec.lattice) },
              { term: 'Background', value: backgroundOfSpec(spec.background) },
              { term: 'Drawn', value: drawingOfSpec(spec) },
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
        <Section title="Statistics" description={statsNote(run.status, Boolean(run.stats))}>
          <RunStatsTable stats={run.stats} wallSeconds={wall} />
        </Section>
      </div>
      {run.stats ? (
        <div className="grid grid-cols-1 gap-8 md:grid-cols-2">
          <Section title="Toppled sites by final height" description="Only sites that toppled at least once are counted.">
            <HeightBarsPlot heightCounts={run.stats.heightCounts} />
          </Section>
          <Section title="Radial profile" description={`Mean final height of toppled sites against the rescaled distance |x|/${scaleSymbol(run.stats.shape.length)} from the origin.`}>
            {runJson.data?.radialProfile ? (
              <RadialProfilePlot profile={runJson.data.radialProfile} grains={Number(run.stats.grainsIn)} dimension={run.stats.shape.length} />
            ) : runJson.isError ? (
              <p className="text-sm text-ink-faint">{(runJson.error as Error).message}</p>
            ) : expired ? (
              <p className="text-sm text-ink-faint">The profile was stored with the run’s arrays, which have been removed.</p>
            ) : runJson.data ? (
              <p className="text-sm text-ink-faint">This run was computed before the worker recorded radial profiles.</p>
            ) : (
              <SkeletonBlock lines={4} />
            )}
          </Section>
        </div>
      ) : null}
    </div>
  );
}
