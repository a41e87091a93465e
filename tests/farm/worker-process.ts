import { spawn, type ChildProcess } from 'node:child_process';
import path from 'node:path';

const ROOT = path.resolve(import.meta.dirname, '..', '..');
const WORKER = path.join(ROOT, 'renderer', 'src', 'worker.ts');

/** A real renderer worker process (renderer/src/worker.ts), as infra/deploy starts it, with its output kept. */
export interface WorkerProcess {
  child: ChildProcess;
  /** everything it printed so far, stdout and stderr */
  output(): string;
  /** resolves once a line matching `pattern` has been printed */
  waitFor(pattern: RegExp, timeoutMs?: number): Promise<void>;
  exited: Promise<{ code: number | null; signal: NodeJS.Signals | null }>;
  /** SIGKILL, and wait until it is gone */
  kill(): Promise<void>;
}

/** Starts `tsx renderer/src/worker.ts` with the test's services plus `env` (WORKER_* settings, BULLMQ_PREFIX). */
export function startWorkerProcess(env: Record<string, string>): WorkerProcess {
  const child = spawn(process.execPath, ['--import', 'tsx', WORKER], {
    cwd: ROOT,
    env: { ...process.env, NODE_ENV: 'test', ...env },
    stdio: ['ignore', 'pipe', 'pipe'],
  });
  let out = '';
  const listeners = new Set<() => void>();
  const take = (b: Buffer) => {
    out += b.toString('utf8');
    for (const l of listeners) l();
  };
  child.stdout!.on('data', take);
  child.stderr!.on('data', take);
  const exited = new Promise<{ code: number | null; signal: NodeJS.Signals | null }>((resolve) => child.once('exit', (code, signal) => resolve({ code, signal })));
  return {
    child,
    output: () => out,
    exited,
    waitFor(pattern, timeoutMs = 30_000) {
      return new Promise((resolve, reject) => {
        const check = () => {
          if (!pattern.test(out)) return;
          cleanup();
          resolve();
        };
        const timer = setTimeout(() => (cleanup(), reject(new Error(`the worker did not print ${pattern} within ${timeoutMs} ms; it printed:\n${out}`))), timeoutMs);
        const gone = () => (cleanup(), reject(new Error(`the worker exited before printing ${pattern}; it printed:\n${out}`)));
        const cleanup = () => {
          clearTimeout(timer);
          listeners.delete(check);
          child.off('exit', gone);
        };
        listeners.add(check);
        child.once('exit', gone);
        check();
      });
    },
    async kill() {
      if (child.exitCode === null && child.signalCode === null) child.kill('SIGKILL');
      await exited;
    },
  };
}
