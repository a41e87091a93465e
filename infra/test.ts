/**
 * `npm test`: the whole suite against services of its own. After infra/prepare.sh, wipe
 * .local/test/, start PostgreSQL, Redis and the fakes on the test ports (none shared with
 * `npm start`), apply migrations, build the web app for the browser tests (and, for the whole
 * suite, check the types), run `vitest run` with the services' environment (extra arguments go to
 * vitest), stop everything and exit with vitest's status.
 */
import { execFileSync, spawn } from 'node:child_process';
import path from 'node:path';
import { watchAncestors } from './lib/ancestry.js';
import { InfraError, makeLog } from './lib/log.js';
import { profileFor, ROOT } from './lib/profile.js';
import { Stack } from './lib/stack.js';

const profile = profileFor('test');
const log = makeLog('test');
const stack = new Stack(profile, log);
let vitest: ReturnType<typeof spawn> | null = null;
let stopping = false;

function chromiumPath(): string | undefined {
  try {
    return execFileSync('which', ['chromium'], { encoding: 'utf8' }).trim() || undefined;
  } catch {
    return undefined;
  }
}

for (const sig of ['SIGINT', 'SIGTERM', 'SIGHUP'] as const) {
  process.on(sig, () => {
    if (stopping) return;
    stopping = true;
    log.info(`${sig} received; stopping…`);
    stack.abort.abort();
    // vitest shares our process group, so a terminal Ctrl-C reached it already; SIGTERM covers `kill`
    vitest?.kill('SIGTERM');
  });
}

// npm -> sh -> tsx -> here: a SIGTERM to npm alone kills sh without passing it on; stop then too.
watchAncestors(3, (pid) => {
  if (stopping) return;
  stopping = true;
  log.info(`the process that started us (pid ${pid}) is gone; stopping…`);
  stack.abort.abort();
  vitest?.kill('SIGTERM');
});

function runVitest(args: string[], env: NodeJS.ProcessEnv): Promise<number> {
  return new Promise((resolve) => {
    vitest = spawn(path.join(ROOT, 'node_modules', '.bin', 'vitest'), ['run', ...args], { cwd: ROOT, env, stdio: 'inherit' });
    vitest.once('error', (err) => {
      log.error(`cannot run vitest: ${err.message}`);
      resolve(1);
    });
    vitest.once('exit', (code, signal) => resolve(code ?? (signal ? 1 : 1)));
  });
}

async function main(): Promise<number> {
  const t0 = Date.now();
  await stack.clearLeftovers(true);
  await stack.up({ includeApiPort: false });
  log.info(`PostgreSQL, Redis and the fakes up in ${((Date.now() - t0) / 1000).toFixed(1)} s`);
  // the browser tests need the web app; building it (into .local/test/dist/, never the dist/ that
  // a running npm start serves) while migrations run saves a few seconds
  // the whole suite (no file or filter given, as CI runs it) also checks the types, beside them
  const whole = process.argv.length <= 2;
  await stack.parallel(stack.migrate(), stack.buildWeb(), whole ? stack.typecheck() : Promise.resolve());
  if (stopping) return 130;

  const chromium = chromiumPath();
  if (!chromium) log.warn('chromium not found on PATH; browser tests will fail (infra/prepare.sh installs it)');
  const env = { ...stack.childEnv, TW_WEB_DIST: stack.profile.webDist, ...(chromium ? { CHROMIUM_PATH: chromium } : {}) };
  log.info(`services ready in ${((Date.now() - t0) / 1000).toFixed(1)} s (logs in ${stack.dirs.logs}); running vitest`);
  return runVitest(process.argv.slice(2), env);
}

let code = 1;
try {
  code = await main();
} catch (err) {
  const e = err as Error;
  if (stopping) code = 130; // told to stop while starting: not a failure worth a message
  else {
    log.error(e instanceof InfraError ? e.message : (e.stack ?? e.message));
    code = 1;
  }
} finally {
  try {
    await stack.down();
  } catch (err) {
    log.error(`while stopping: ${(err as Error).message}`);
    code ||= 1;
  }
}
process.exit(code);
