import { setFlagsFromString } from 'node:v8';
import { runInNewContext } from 'node:vm';

let gc: (() => void) | null | undefined;

/**
 * Runs a full garbage collection now. The levels' grids live on SharedArrayBuffers, whose memory goes
 * back only when their wrappers are collected, and V8 does not hurry: at n = 3·10^7 the finished
 * coarser levels still held 175 MB when the finest level unfolded onto the whole plane (the run's
 * peak). Called before the largest allocations of a big run only. Enabling `gc` after start-up is
 * the same step test runners take to measure leaks (v8.setFlagsFromString, then the function from
 * a fresh context); where it is refused this does nothing.
 */
export function collectGarbage(): void {
  if (gc === undefined) {
    try {
      setFlagsFromString('--expose-gc');
      gc = runInNewContext('gc') as () => void;
    } catch {
      gc = null;
    }
  }
  gc?.();
}
