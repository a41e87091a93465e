import { groupThousands, powerOfTen } from './numbers.js';
import { formatDuration } from '../../../shared/duration.js';
import { stageWords } from '../engine/stage-words.js';
import type { RunStatsJson } from '../../../shared/run-stats.js';
import { certificateLine } from '../../../shared/certificate-words.js';

/**
 * The object printed by --json: the engine's statistics in their JSON form (bigint counts as decimal
 * strings, see shared/run-stats.ts) plus what the command did. Field names are a scripting contract.
 */
export interface RunReport extends RunStatsJson {
  sources: { at: number[]; chips: number }[];
  /** the --background argument as given (constant:0 when omitted) */
  background: string;
  engineVersion: string;
  files: { heights: string | null; odometer: string | null; sidecar: string | null };
  /** with --checkpoint: whether this invocation continued from the file, and how often it saved */
  checkpoint?: { file: string; resumed: boolean; saves: number };
}

/** The short human summary: numbers grouped by thousands, n also as a power of ten. */
export function formatReport(r: RunReport): string {
  const lines: string[] = [];
  const row = (label: string, value: string) => lines.push(`${label.padEnd(17)}${value}`);
  row('lattice', `${r.lattice}, background ${r.background}`);
  row('grains', `n = ${groupThousands(r.chips)} (${powerOfTen(Number(r.chips))}) at the origin` + (r.sources.length ? ` + ${r.sources.length} more source(s)` : ''));
  row('toppled sites', groupThousands(r.toppledSites));
  row('topplings', groupThousands(r.totalTopplings));
  row('origin odometer', groupThousands(r.originOdometer));
  const radius = r.radiusOverSqrtN === null ? '' : ` (${r.radiusOverSqrtN.toFixed(3)} √n)`;
  row('radius', `${r.radiusEuclidean.toFixed(2)} Euclidean${radius}, ${groupThousands(r.radiusLinf)} max-norm`);
  row('array', `${r.shape.map(groupThousands).join(' × ')} cells, origin at [${r.origin.join(', ')}]`);
  row('heights', r.heightCounts.map((c, h) => `${h}: ${groupThousands(c)}`).join('   ') + '  (toppled sites)');
  row('certificate', certificateLine(r.certificate));
  row('time', `${r.seconds.toFixed(r.seconds < 10 ? 3 : 1)} s` + (r.checkpoint?.resumed ? ` since continuing from ${r.checkpoint.file}` : ''));
  const written = [r.files.heights, r.files.sidecar, r.files.odometer].filter((f): f is string => f !== null);
  if (written.length) row('wrote', written.join(', '));
  return lines.join('\n');
}

/** What the engine reports while it works; the fast path adds its level and an estimate of the time left. */
export interface ProgressReport {
  stage: string;
  fraction: number;
  toppledSites: number;
  level?: number;
  levels?: number;
  secondsLeft?: number | null;
}

/**
 * One --progress line. The plain engine's fraction is the share of grains fed in so far; the fast
 * path's is its estimate of the work done, so the line says which, and the level and time left when known.
 */
export function progressLine(p: ProgressReport): string {
  const percent = `${(100 * p.fraction).toFixed(1)}%`;
  if (p.levels === undefined || p.level === undefined) return `${stageWords(p.stage)}: ${percent} of grains fed, ${groupThousands(p.toppledSites)} sites toppled`;
  const left = p.secondsLeft === null || p.secondsLeft === undefined || p.fraction >= 1 ? '' : `, about ${formatDuration(p.secondsLeft)} left`;
  return `${stageWords(p.stage)}, level ${p.level + 1} of ${p.levels}: ${percent} of the estimated work${left}, ${groupThousands(p.toppledSites)} sites toppled`;
}
