import { estimateSecondsLeft, formatDuration, formatPercent } from '../format.js';

interface ProgressBarProps {
  /** 0..1 */
  progress: number;
  stage?: string | null;
  /** ISO time the work started, for the time-left estimate */
  startedAt?: string | null;
  compact?: boolean;
}

/** Stage, percent and an honest time-left estimate (none until there is enough progress to extrapolate). */
export function ProgressBar({ progress, stage, startedAt, compact }: ProgressBarProps) {
  const started = startedAt ? new Date(startedAt).getTime() : NaN;
  const elapsed = Number.isNaN(started) ? NaN : (Date.now() - started) / 1000;
  const left = estimateSecondsLeft(progress, elapsed);
  const pct = formatPercent(progress);
  return (
    <div className={compact ? 'min-w-36' : 'w-full'}>
      <div
        role="progressbar"
        aria-valuemin={0}
        aria-valuemax={100}
        aria-valuenow={Math.floor(progress * 100)}
        aria-label={stage ?? 'progress'}
        className={`overflow-hidden rounded-full bg-rule-soft ${compact ? 'h-1.5' : 'h-2.5'}`}
      >
        <div className="h-full rounded-full bg-press transition-[width] duration-700" style={{ width: `${Math.min(100, progress * 100)}%` }} />
      </div>
      {compact ? (
        <div className="mt-1 flex justify-between gap-2 whitespace-nowrap text-[11px] text-ink-soft">
          <span className="truncate">
            {stage ?? 'working'} · <span className="tnum">{pct}</span>
          </span>
          <span className="tnum">{left === null ? '' : `${formatDuration(left)} left`}</span>
        </div>
      ) : (
        <div className="mt-1.5 flex justify-between gap-3 text-xs text-ink-soft">
          <span>
            {stage ?? 'working'} · <span className="tnum">{pct}</span>
          </span>
          {/* at 100% the stage names the state: no second word for it */}
          <span className="tnum">{progress >= 1 ? '' : left === null ? 'estimating time left' : `about ${formatDuration(left)} left`}</span>
        </div>
      )}
    </div>
  );
}
