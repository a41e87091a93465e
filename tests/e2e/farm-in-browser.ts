import { afterAll, beforeAll } from 'vitest';
import type { Browser } from 'playwright-core';
import { seedDemo } from '../../api/src/seed/demo.js';
import { startFarmWorker } from '../../renderer/src/farm/farm-worker.js';
import { launchBrowser } from './browser.js';
import { startStack, type Stack } from './stack.js';

export interface FarmInBrowser {
  stack: Stack;
  browser: Browser;
  worker: Awaited<ReturnType<typeof startFarmWorker>>;
}

/**
 * The real API on its services, a farm worker on the same queue prefix and a browser, started once for
 * the calling file's tests and stopped after them (vitest hooks). Its fields are set when the tests run.
 */
export function useFarmInBrowser(options: { demo: boolean }): FarmInBrowser {
  const farm = {} as FarmInBrowser;
  beforeAll(async () => {
    farm.stack = await startStack();
    if (options.demo) await seedDemo(farm.stack.env);
    farm.worker = await startFarmWorker(farm.stack.env, { prefix: farm.stack.queuePrefix, threads: 2 });
    farm.browser = await launchBrowser();
  });
  afterAll(async () => {
    await farm.browser?.close();
    await farm.worker?.close();
    await farm.stack?.close();
  });
  return farm;
}

export interface StackInBrowser {
  stack: Stack;
  browser: Browser;
}

/** The same without a farm worker: the API on its services and a browser, for pages that need no computed run. */
export function useStackInBrowser(options: { demo: boolean }): StackInBrowser {
  const ctx = {} as StackInBrowser;
  beforeAll(async () => {
    ctx.stack = await startStack();
    if (options.demo) await seedDemo(ctx.stack.env);
    ctx.browser = await launchBrowser();
  });
  afterAll(async () => {
    await ctx.browser?.close();
    await ctx.stack?.close();
  });
  return ctx;
}
