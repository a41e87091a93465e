/**
 * `npm start`: the whole product on this machine. After infra/prepare.sh has installed what was
 * missing, start PostgreSQL, Redis, the S3/mail/payments fakes, apply migrations, seed the demo,
 * build the web app, start the renderer worker and the API (which serves dist/), print the URL and
 * the demo sign-ins, have a freshly seeded demo's figure printed and published in the background,
 * and run until Ctrl-C or SIGTERM, then stop everything it started.
 * State lives in .local/dev/ and survives restarts.
 */
import { watchAncestors } from './lib/ancestry.js';
import { InfraError, makeLog } from './lib/log.js';
import { httpOk, waitUntil } from './lib/ports.js';
import { profileFor } from './lib/profile.js';
import { apiSpec, exists, PRODUCT, workerSpec } from './lib/services.js';
import { Stack } from './lib/stack.js';

const profile = profileFor('dev');
const log = makeLog('start');
const stack = new Stack(profile, log);

let exitCode = 0;
let stopping: Promise<void> | null = null;
function shutdown(reason: string, code: number): Promise<void> {
  if (stopping) return stopping;
  exitCode = code;
  log.info(`${reason}; stopping everything…`);
  stack.abort.abort();
  stopping = stack.down().then(
    () => log.info('all stopped'),
    (err: Error) => {
      log.error(`while stopping: ${err.message}`);
      exitCode = 1;
    },
  );
  return stopping;
}

// The terminal sends Ctrl-C to npm, tsx and this process at once; the first signal starts the stop,
// repeats are ignored so the stop can finish in order.
for (const sig of ['SIGINT', 'SIGTERM', 'SIGHUP'] as const) {
  process.on(sig, () => {
    if (stopping) log.info('still stopping…');
    else void shutdown(`${sig} received`, 0).then(() => process.exit(exitCode));
  });
}

// npm -> sh -> tsx -> here: if one of them dies without passing a signal on, stop as if told to.
watchAncestors(3, (pid) => void shutdown(`the process that started us (pid ${pid}) is gone`, 1).then(() => process.exit(exitCode)));

async function main(): Promise<void> {
  const t0 = Date.now();
  await stack.clearLeftovers(false);
  await stack.up({ includeApiPort: true });
  log.info(`PostgreSQL, Redis and the fakes up in ${((Date.now() - t0) / 1000).toFixed(1)} s`);
  const e = stack.env;
  log.info(`PostgreSQL ${e.DATABASE_URL}, Redis ${e.REDIS_URL}, S3 ${e.S3_ENDPOINT}, payments ${e.STRIPE_API_BASE}, SMTP ${e.SMTP_URL}`);

  const [seed] = await stack.parallel(
    stack.migrate().then((migrated) => (migrated ? stack.seed() : null)),
    stack.buildWeb(),
  );

  stack.sup.onUnexpectedExit((s) => {
    void shutdown(`${s.spec.name} exited unexpectedly (${s.exit?.code ?? s.exit?.signal}); see ${s.logFile}`, 1).then(() => process.exit(exitCode));
  });
  if (exists(PRODUCT.worker)) stack.sup.start(workerSpec(stack.childEnv));
  else log.warn(`${PRODUCT.worker} does not exist yet; no renderer worker started`);

  if (exists(PRODUCT.api)) {
    const api = stack.sup.start(apiSpec(stack.childEnv));
    await waitUntil('api', () => httpOk(`${e.PUBLIC_URL}/api/health`), {
      timeoutMs: 60_000,
      gaveUp: () => (api.exit ? `exited before answering /api/health; see ${api.logFile}` : stack.stopping ? 'stopped' : null),
    });
  } else {
    log.warn(`${PRODUCT.api} does not exist yet; no API or web app is served`);
  }

  const lines = [
    '',
    `Toppleworks is running at ${e.PUBLIC_URL}  (ready in ${((Date.now() - t0) / 1000).toFixed(1)} s)`,
    // the app's own page reads the mail fake's listing (the JSON address, for scripts)
    `  mail outbox: ${e.PUBLIC_URL}/dev/outbox  (as JSON: ${e.MAIL_OUTBOX_URL}/messages)  ·  payments fake: ${e.STRIPE_API_BASE}/_fake/events`,
    `  data: ${profile.dir}  ·  logs: ${stack.dirs.logs}`,
  ];
  if (seed && seed.signIns.length) {
    lines.push('  demo sign-ins:');
    for (const s of seed.signIns) lines.push(`    ${s.role.padEnd(10)} ${s.email.padEnd(42)} ${s.password}`);
  }
  lines.push('  press Ctrl-C to stop', '');
  process.stdout.write(lines.join('\n') + '\n');

  // A demo seeded by this start gets its figure printed and published once the farm has computed its
  // run; in the background, so the app is usable at once. A database seeded earlier is left alone.
  if (seed?.seeded && exists(PRODUCT.api) && exists(PRODUCT.worker)) {
    log.info(`demo figure: its print is ordered and it is published once its run is computed (progress in ${stack.dirs.logs}/demo-finisher.log)`);
    void stack.finishDemo(t0);
  }
}

main().catch(async (err: Error) => {
  if (stack.stopping && stopping) return; // a signal arrived mid-start; shutdown() is on it
  log.error(err instanceof InfraError ? err.message : (err.stack ?? err.message));
  await shutdown('start-up failed', 1);
  process.exit(exitCode);
});
