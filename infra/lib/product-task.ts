/**
 * Runs one step of the product's own setup in a child process, so the orchestrator never imports
 * api/ code (whose modules may read the environment at load time or keep pools open):
 *   tsx infra/lib/product-task.ts migrate   -> migrateDatabase(DATABASE_URL)
 *   tsx infra/lib/product-task.ts seed      -> seedDemo(env); prints the demo sign-ins as JSON
 *   tsx infra/lib/product-task.ts finish-demo -> finishDemo(PUBLIC_URL): prints and publishes the demo figure
 * The last stdout line starting with RESULT is the machine-readable answer.
 */
import path from 'node:path';
import { pathToFileURL } from 'node:url';
import { ROOT } from './profile.js';
import { PRODUCT } from './services.js';

type SignIn = { role: string; email: string; password: string };

async function main(task: string | undefined): Promise<unknown> {
  const load = (rel: string) => import(pathToFileURL(path.join(ROOT, rel)).href);
  if (task === 'migrate') {
    const url = process.env.DATABASE_URL;
    if (!url) throw new Error('DATABASE_URL is not set');
    const mod = (await load(PRODUCT.migrate)) as { migrateDatabase?: (url: string) => Promise<void> };
    if (typeof mod.migrateDatabase !== 'function') throw new Error(`${PRODUCT.migrate} does not export migrateDatabase(databaseUrl)`);
    await mod.migrateDatabase(url);
    return { migrated: true };
  }
  if (task === 'seed') {
    const { loadEnv } = (await load('shared/env.ts')) as typeof import('../../shared/env.js');
    const mod = (await load(PRODUCT.seed)) as {
      seedDemo?: (env: unknown) => Promise<{ signIns: SignIn[] } | null>;
      DEMO_SIGN_INS?: SignIn[];
    };
    if (typeof mod.seedDemo !== 'function') throw new Error(`${PRODUCT.seed} does not export seedDemo(env)`);
    const result = await mod.seedDemo(loadEnv());
    return { seeded: result !== null, signIns: result?.signIns ?? mod.DEMO_SIGN_INS ?? [] };
  }
  if (task === 'finish-demo') {
    const { loadEnv } = (await load('shared/env.ts')) as typeof import('../../shared/env.js');
    const mod = (await load(PRODUCT.demoFinisher)) as {
      finishDemo?: (baseUrl: string, options: { log(line: string): void }) => Promise<unknown>;
    };
    if (typeof mod.finishDemo !== 'function') throw new Error(`${PRODUCT.demoFinisher} does not export finishDemo(baseUrl)`);
    return mod.finishDemo(loadEnv().PUBLIC_URL, { log: (line) => console.log(`${new Date().toISOString()} ${line}`) });
  }
  throw new Error(`unknown task '${task}': use migrate, seed or finish-demo`);
}

main(process.argv[2]).then(
  (result) => {
    process.stdout.write(`RESULT ${JSON.stringify(result)}\n`);
    // pools opened by the product's modules must not keep this process alive
    process.exit(0);
  },
  (err: Error) => {
    process.stderr.write(`${err.stack ?? err.message}\n`);
    process.exit(1);
  },
);
