import { withUnit } from './counts.js';
import type { Certificate } from './run-stats.js';

/**
 * A run's exactness certificate (shared/run-stats.ts) in words: the run page lists each check, the
 * figure reader and the CLI print one line. Written once here so every reader sees the same claims.
 */

/** passed, failed, or not computed (stats stored before certificates existed) */
export type CertificateTone = 'passed' | 'failed' | 'none';

export interface CertificateCheck {
  /** short name of the check, as the one-line summary uses it when it holds */
  name: string;
  /** true: holds; false: fails; null: not tested on this run */
  ok: boolean | null;
  /** what was checked (or why not), in a sentence */
  detail: string;
}

export function certificateTone(c: Certificate | null | undefined): CertificateTone {
  if (!c) return 'none';
  return c.passed ? 'passed' : 'failed';
}

export function certificateHeadline(c: Certificate | null | undefined): string {
  const tone = certificateTone(c);
  if (tone === 'passed') return 'Certified exact';
  if (tone === 'failed') return 'Certificate failed';
  return 'No certificate';
}

/** How the odometer was reached, in a phrase: "seeded from coarser solutions, with 2 repair rounds". */
export function methodWords(c: Certificate): string {
  if (c.method === 'legal') return 'legal topplings: only unstable sites toppled';
  if (c.method === 'closed-form') return 'grain by grain in closed form on the line';
  return `seeded from coarser solutions, with ${withUnit(c.repairRounds, 'repair round')}`;
}

/** The same, terse, for one-line summaries. */
function methodShort(c: Certificate): string {
  if (c.method === 'legal') return 'legal topplings';
  if (c.method === 'closed-form') return 'closed form on the line';
  return `seeded, ${withUnit(c.repairRounds, 'repair round')}`;
}

/** Each check of a certificate with its verdict; in the order a reader would ask. */
export function certificateChecks(c: Certificate): CertificateCheck[] {
  const stableOk = c.stable && c.nonNegative;
  return [
    {
      name: stableOk ? 'stable' : 'not stable',
      ok: stableOk,
      detail: stableOk
        ? 'Every final height is below its site’s threshold and none is negative.'
        : [!c.stable ? 'Some final height is at or above its site’s threshold.' : '', !c.nonNegative ? 'Some final height is negative.' : ''].filter(Boolean).join(' '),
    },
    {
      name: c.massConserved ? 'grains conserved' : 'grains not conserved',
      ok: c.massConserved,
      detail: c.massConserved ? 'The final pile holds exactly the grains added on top of the background.' : 'The final pile does not hold the grains added on top of the background.',
    },
    c.odometerMatches === undefined
      ? { name: 'odometer not checked', ok: null, detail: 'The odometer check came after this run: its certificate does not include it.' }
      : {
          name: c.odometerMatches ? 'odometer explained' : 'odometer does not explain the heights',
          ok: c.odometerMatches,
          detail: c.odometerMatches
            ? 'Every height equals its start plus the grains added there, minus what its topplings sent out and plus what its neighbours’ topplings brought in.'
            : 'Some height is not its start plus the grains added, minus what its topplings sent out and plus what its neighbours’ topplings brought in.',
        },
    c.minimal === null
      ? {
          name: 'minimality not tested',
          ok: null,
          detail: 'The graph is not Eulerian (some site has more edges in than out, or fewer), so minimality is not tested; the odometer comes from legal topplings only, which never topple more than needed.',
        }
      : {
          name: c.minimal ? 'minimal' : 'not minimal',
          ok: c.minimal,
          detail: c.minimal
            ? 'No set of toppled sites could topple once less and stay stable, so no smaller odometer exists (the least action principle, arXiv:0901.3805).'
            : `${withUnit(c.peeledSites, 'site')} could topple once less and stay stable (the least action principle, arXiv:0901.3805).`,
        },
  ];
}

/**
 * One line for a run's certificate: "passed: stable, grains conserved, odometer explained, minimal
 * (seeded, 0 repair rounds)"; a failed one names what failed first.
 */
export function certificateLine(c: Certificate | null | undefined): string {
  if (!c) return 'none: computed before certificates existed';
  return `${c.passed ? 'passed' : 'FAILED'}: ${checksSummary(c)}`;
}

/** The reader's one line: "Certified exact — stable, grains conserved, … (seeded, 0 repair rounds)". */
export function certificateSentence(c: Certificate | null | undefined): string {
  if (!c) return 'No certificate: the run was computed before certificates existed.';
  return `${certificateHeadline(c)} — ${checksSummary(c)}`;
}

/** The checks' names, what failed first, and the method: "stable, grains conserved, … (seeded, 0 repair rounds)". */
function checksSummary(c: Certificate): string {
  const checks = certificateChecks(c);
  const ordered = c.passed ? checks : [...checks.filter((k) => k.ok === false), ...checks.filter((k) => k.ok !== false)];
  return `${ordered.map((k) => k.name).join(', ')} (${methodShort(c)})`;
}
