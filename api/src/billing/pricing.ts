import { creditsFor, estimateRun, type ArrayBackgroundInfo } from '../../../shared/estimate.js';
import type { RunSpec } from '../../../shared/run-spec.js';

/**
 * The cost model (README.md in this folder). Pure functions: the API, the worker and tests all
 * price a run the same way.
 *
 * - Before a run: the estimator's prediction (shared/estimate.ts) of its work, cell updates
 *   (topplings) → farm seconds, and its memory in cells → bytes, priced by `creditsFor`:
 *   one credit per started minute plus one per started GiB, at least one. That is the reservation.
 * - After a run: the same formula on what it used, measured CPU-seconds and bytes stored, capped at
 *   the reservation so a lab never pays more than it was shown.
 */

/** Credits held when a run is submitted. */
export function reservationFor(spec: RunSpec, upload?: ArrayBackgroundInfo): number {
  return estimateRun(spec, upload).credits;
}

export interface ActualUsage {
  /** measured CPU-seconds of the computation */
  seconds: number;
  /** bytes the run's arrays take in the object store */
  bytesStored: number;
}

/** Credits charged for a finished run that held `reserved`. */
export function chargeFor(actual: ActualUsage, reserved: number): number {
  return Math.min(reserved, creditsFor(Math.max(0, actual.seconds), Math.max(0, actual.bytesStored)));
}

/** How a reservation is funded: this month's free allowance first, then the lab's paid credits. */
export function fundingOf(credits: number, freeLeft: number): { fromAllowance: number; fromBalance: number } {
  const fromAllowance = Math.min(credits, Math.max(0, freeLeft));
  return { fromAllowance, fromBalance: credits - fromAllowance };
}

/**
 * Splitting a charge between the two sources a reservation drew on: free credits are used up
 * first, so a run smaller than its estimate gives paid credits back before free ones.
 */
export function settlementSplit(charge: number, held: { fromAllowance: number; fromBalance: number }) {
  const freeCharged = Math.min(charge, held.fromAllowance);
  const paidCharged = charge - freeCharged;
  return { freeCharged, paidCharged, freeBack: held.fromAllowance - freeCharged, paidBack: held.fromBalance - paidCharged };
}

/** Bytes of a run's stored arrays when the store cannot be asked: .npy header plus heights (uint8 or int32) and int64 odometer. */
export function storedArrayBytes(shape: number[], maxHeight: number): number {
  const cells = shape.reduce((a, b) => a * b, 1);
  const heightBytes = maxHeight <= 255 ? 1 : 4;
  return 2 * 128 + cells * (heightBytes + 8);
}
