import { totalmem } from 'node:os';
import { BYTES_PER_CELL, EstimateError, estimateRun, type ArrayBackgroundInfo, type RunEstimate } from '../../../shared/estimate.js';
import type { RunSpec } from '../../../shared/run-spec.js';
import { badRequest } from '../http/http-error.js';

const gib = (b: number) => (b / 2 ** 30).toLocaleString('en-US', { maximumFractionDigits: 1 });

/** The estimator's own refusals (an unknown lattice preset) are the client's 400. */
export function estimateOrRefuse(spec: RunSpec, upload?: ArrayBackgroundInfo): RunEstimate {
  try {
    return estimateRun(spec, upload);
  } catch (err) {
    if (err instanceof EstimateError) throw badRequest(`spec: ${err.message}`);
    throw err;
  }
}

/**
 * A run whose working memory (the estimator's prediction, shared/estimate.ts) exceeds the memory of
 * the machine could never finish: farm workers stop a run at the same budget (their memory over
 * BYTES_PER_CELL, renderer/src/farm/farm-worker.ts). Refused with both numbers, by the estimate as
 * the author types and at submission before a row, a reservation or a job exists, and before its
 * price is looked at: a cost beyond any lab's means is only a consequence of the size. The limit is
 * this machine's memory: farm workers run on machines at least as large as the API's
 * (infra/deploy/README.md).
 */
export function refuseIfTooLarge(estimate: Pick<RunEstimate, 'bytes' | 'cells' | 'shape'>, limitBytes = totalmem()): void {
  if (estimate.bytes <= limitBytes) return;
  throw badRequest(
    `spec: this run needs about ${gib(estimate.bytes)} GiB of working memory (a ${estimate.shape.map((s) => s.toLocaleString('en-US')).join(' × ')} domain, ` +
      `${estimate.cells.toLocaleString('en-US')} cells at ${BYTES_PER_CELL} bytes each), more than the ${gib(limitBytes)} GiB ` +
      `of the machines that compute it; use fewer grains`,
    [{ path: 'spec', message: `needs about ${gib(estimate.bytes)} GiB of working memory; the machines have ${gib(limitBytes)} GiB` }],
  );
}
