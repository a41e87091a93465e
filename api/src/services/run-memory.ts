import { totalmem } from 'node:os';
import { BYTES_PER_CELL, EstimateError, estimateRun, type ArrayBackgroundInfo, type RunEstimate } from '../../../shared/estimate.js';
import type { RunSpec } from '../../../shared/run-spec.js';
import type { EstimateRefusal } from '../../../shared/api/estimates.js';
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
 * BYTES_PER_CELL, renderer/src/farm/farm-worker.ts). Said with both numbers, by the estimate as the
 * author types (an answer, shared/api/estimates.ts) and by the submit's refusal before a row, a
 * reservation or a job exists, and before its price is looked at: a cost beyond any lab's means is
 * only a consequence of the size. The limit is this machine's memory: farm workers run on machines
 * at least as large as the API's (infra/deploy/README.md). Null when the run fits.
 */
export function memoryRefusal(estimate: Pick<RunEstimate, 'bytes' | 'cells' | 'shape'>, limitBytes = totalmem()): (EstimateRefusal & { issue: string }) | null {
  if (estimate.bytes <= limitBytes) return null;
  return {
    reason:
      `this run needs about ${gib(estimate.bytes)} GiB of working memory (a ${estimate.shape.map((s) => s.toLocaleString('en-US')).join(' × ')} domain, ` +
      `${estimate.cells.toLocaleString('en-US')} cells at ${BYTES_PER_CELL} bytes each), more than the ${gib(limitBytes)} GiB ` +
      `of the machines that compute it; use fewer grains`,
    bytes: estimate.bytes,
    limitBytes,
    issue: `needs about ${gib(estimate.bytes)} GiB of working memory; the machines have ${gib(limitBytes)} GiB`,
  };
}

/** The submit's refusal of a run too large for the machines (memoryRefusal), on the spec. */
export function refuseIfTooLarge(estimate: Pick<RunEstimate, 'bytes' | 'cells' | 'shape'>, limitBytes = totalmem()): void {
  const refusal = memoryRefusal(estimate, limitBytes);
  if (refusal) throw badRequest(`spec: ${refusal.reason}`, [{ path: 'spec', message: refusal.issue }]);
}
