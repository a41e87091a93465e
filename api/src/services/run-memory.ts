import { totalmem } from 'node:os';
import { EstimateError, estimateRun, type RunEstimate } from '../../../shared/estimate.js';
import type { RunSpec } from '../../../shared/run-spec.js';
import { badRequest } from '../http/http-error.js';

const gib = (b: number) => (b / 2 ** 30).toLocaleString('en-US', { maximumFractionDigits: 1 });

/**
 * What the estimate says about a run larger than the machines, so the form can say it before the
 * submit is refused (refuseIfTooLarge); null when the run fits.
 */
export function memoryWarning(estimate: Pick<RunEstimate, 'bytes'>, limitBytes = totalmem()): string | null {
  if (estimate.bytes <= limitBytes) return null;
  return `this run needs about ${gib(estimate.bytes)} GiB of working memory, more than the ${gib(limitBytes)} GiB of the machines that compute it; use fewer grains`;
}

/**
 * A run whose working memory (the estimator's prediction, shared/estimate.ts) exceeds the memory of
 * the machine could never finish; refuse it at submission with the estimate, before a row, a
 * reservation or a job exists. The limit is this machine's memory: farm workers run on machines
 * at least as large as the API's (infra/deploy/README.md).
 */
export function refuseIfTooLarge(spec: RunSpec, limitBytes = totalmem()): void {
  let estimate;
  try {
    estimate = estimateRun(spec);
  } catch (err) {
    if (err instanceof EstimateError) throw badRequest(`spec: ${err.message}`);
    throw err;
  }
  if (estimate.bytes <= limitBytes) return;
  throw badRequest(
    `spec: this run needs about ${gib(estimate.bytes)} GiB of working memory (a ${estimate.shape.join(' × ')} domain, ${estimate.cells.toLocaleString('en-US')} cells), ` +
      `more than the ${gib(limitBytes)} GiB of the machines that compute it; use fewer grains`,
    [{ path: 'spec', message: `needs about ${gib(estimate.bytes)} GiB of working memory; the limit is ${gib(limitBytes)} GiB` }],
  );
}
