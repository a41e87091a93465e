/**
 * The renderer worker process: takes compute and render jobs from BullMQ and runs them with the
 * engine and the renderer. Start as many as you like, on as many machines as share Redis,
 * PostgreSQL and the object store (infra/deploy/).
 */
import { startFarmWorker } from './farm/farm-worker.js';
import { loadEnv } from '../../shared/env.js';

const env = loadEnv();
const farm = await startFarmWorker(env, { retentionSweep: true });
console.log(`renderer worker ready (compute concurrency ${farm.concurrency.compute}, render ${farm.concurrency.render})`);

let stopping = false;
for (const signal of ['SIGINT', 'SIGTERM'] as const) {
  process.on(signal, () => {
    if (stopping) return;
    stopping = true;
    // let the running job reach its next checkpoint; BullMQ hands unfinished jobs to another worker
    void farm.close().then(() => process.exit(0));
  });
}
