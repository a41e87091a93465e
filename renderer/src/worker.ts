/**
 * The renderer worker process: takes compute, render and print jobs from BullMQ and runs them with
 * the engine and the renderer. Start as many as you like, on as many machines as share Redis,
 * PostgreSQL and the object store (infra/deploy/); its settings are the WORKER_* variables of
 * shared/env.ts.
 */
import { startFarmWorker } from './farm/farm-worker.js';
import { loadEnv } from '../../shared/env.js';

const env = loadEnv();
const farm = await startFarmWorker(env, { retentionSweep: true });
const { compute, large, render } = farm.concurrency;
const s = farm.settings;
console.log(
  `renderer worker ready: standard lane ${compute}, large lane ${large}, render ${render} at once; ` +
    `threads ${s.threads ?? 'auto'}, checkpoint every ${s.checkpointSeconds} s, lock ${s.lockSeconds} s; queues ${s.queues.join(', ')} (prefix ${s.prefix})`,
);

let stopping = false;
for (const signal of ['SIGINT', 'SIGTERM'] as const) {
  process.on(signal, () => {
    if (stopping) return;
    stopping = true;
    // running computations go back to their queue at their last checkpoint; renders and prints finish
    console.log(`${signal}: handing running computations back to the queue`);
    void farm.close().then(() => process.exit(0));
  });
}
