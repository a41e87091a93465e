import fs from 'node:fs';
import { processStartTicks } from './supervisor.js';

/**
 * Notice when the processes that started us are gone. `npm start` runs npm -> sh -> tsx -> this
 * script; a SIGTERM sent to npm alone kills sh without passing the signal on, which would leave
 * this orchestrator (and every service) running with nobody to stop them. Watching the chain of
 * ancestors closes that gap.
 */
function parentOf(pid: number): number | null {
  try {
    const stat = fs.readFileSync(`/proc/${pid}/stat`, 'utf8');
    return Number(stat.slice(stat.lastIndexOf(')') + 2).split(' ')[1]);
  } catch {
    return null;
  }
}

/** The ancestors of this process, nearest first, at most `levels`, stopping before pid 1. */
export function ancestors(levels: number): { pid: number; ticks: string | null }[] {
  const out: { pid: number; ticks: string | null }[] = [];
  for (let pid: number | null = process.ppid; pid && pid > 1 && out.length < levels; pid = parentOf(pid)) {
    out.push({ pid, ticks: processStartTicks(pid) });
  }
  return out;
}

/** Call `onGone` once if any of the first `levels` ancestors exits; polls once a second. */
export function watchAncestors(levels: number, onGone: (pid: number) => void): () => void {
  const chain = ancestors(levels);
  const timer = setInterval(() => {
    const gone = chain.find((a) => processStartTicks(a.pid) !== a.ticks);
    if (gone) {
      clearInterval(timer);
      onGone(gone.pid);
    }
  }, 1000);
  timer.unref();
  return () => clearInterval(timer);
}
