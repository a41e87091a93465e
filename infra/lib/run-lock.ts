import fs from 'node:fs';
import path from 'node:path';
import { InfraError } from './log.js';
import { processStartTicks } from './supervisor.js';

/**
 * One orchestrator per profile at a time. Without it a second `npm start` would take the first
 * one's services for leftovers of a crashed run and stop them. The lock file names its holder by
 * pid and start time; a holder that no longer exists (a crash) does not block.
 */
export function acquireRunLock(file: string, what: string): () => void {
  fs.mkdirSync(path.dirname(file), { recursive: true });
  const me = JSON.stringify({ pid: process.pid, ticks: processStartTicks(process.pid) });
  for (let tries = 0; tries < 2; tries++) {
    try {
      fs.writeFileSync(file, me, { flag: 'wx' });
      return () => {
        try {
          if (fs.readFileSync(file, 'utf8') === me) fs.rmSync(file);
        } catch {
          // already gone
        }
      };
    } catch (err) {
      if ((err as NodeJS.ErrnoException).code !== 'EEXIST') throw err;
    }
    let holder: { pid: number; ticks: string | null } | null = null;
    try {
      holder = JSON.parse(fs.readFileSync(file, 'utf8')) as { pid: number; ticks: string | null };
    } catch {
      // half-written or unreadable: stale
    }
    if (holder && holder.ticks !== null && processStartTicks(holder.pid) === holder.ticks) {
      throw new InfraError(`another ${what} is already running (pid ${holder.pid}); stop it first`);
    }
    fs.rmSync(file, { force: true });
  }
  throw new InfraError(`could not take the lock ${file}`);
}
