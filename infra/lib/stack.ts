import fs from 'node:fs';
import path from 'node:path';
import { InfraError, type Log } from './log.js';
import { startPostgres, stopPostgresIn, type PostgresHandle } from './postgres.js';
import { postgresHome, profileDirs, ROOT, serviceEnv, type Profile } from './profile.js';
import { acquireRunLock } from './run-lock.js';
import { runOnce, tail, taskResult } from './run-once.js';
import { s3FakeEnv } from './s3-fake-env.js';
import { checkPortsFree, exists, fakeSpecs, PRODUCT, redisSpec, TSX, waitForPort } from './services.js';
import { stopLeftovers, Supervisor } from './supervisor.js';

/**
 * What `npm start` and `npm test` share: clear what a crashed run left, then bring up PostgreSQL,
 * Redis and the three fakes for a profile, and the product's one-shot steps. Everything started is
 * recorded in `stack` so `stack.down()` stops it, whatever point start-up had reached.
 */
export class Stack {
  readonly sup: Supervisor;
  readonly env: Record<string, string>;
  readonly childEnv: NodeJS.ProcessEnv;
  readonly dirs: ReturnType<typeof profileDirs>;
  private pg: PostgresHandle | null = null;
  /** aborted on SIGINT/SIGTERM: ends one-shot steps in progress */
  readonly abort = new AbortController();

  constructor(
    readonly profile: Profile,
    readonly log: Log,
  ) {
    this.dirs = profileDirs(profile);
    this.sup = new Supervisor(this.dirs.run, this.dirs.logs);
    this.env = serviceEnv(profile);
    this.childEnv = { ...process.env, ...this.env };
  }

  private unlock: (() => void) | null = null;

  /** Stop leftovers of an earlier run of this profile (and, for test, wipe its folder). */
  async clearLeftovers(wipe: boolean): Promise<void> {
    // the lock lives beside the profile folder, so wiping .local/test/ keeps it
    const what = this.profile.name === 'dev' ? 'npm start' : 'npm test';
    this.unlock = acquireRunLock(path.join(ROOT, '.local', `${this.profile.name}.lock`), what);
    await stopLeftovers(this.dirs.run, this.log.info);
    if (wipe) {
      await stopPostgresIn(this.dirs.pg, this.log);
      fs.rmSync(this.profile.dir, { recursive: true, force: true });
      // the cluster may live outside the profile folder (see postgresHome)
      fs.rmSync(this.dirs.pg, { recursive: true, force: true });
    }
    for (const d of [this.dirs.logs, this.dirs.run, this.dirs.s3, this.dirs.mail, this.dirs.payments]) fs.mkdirSync(d, { recursive: true });
  }

  get stopping(): boolean {
    return this.abort.signal.aborted;
  }

  private check(): void {
    if (this.stopping) throw new InfraError('stopped while starting');
  }

  async up(opts: { includeApiPort: boolean }): Promise<void> {
    const p = this.profile;
    await checkPortsFree(p, opts.includeApiPort);
    this.check();
    // Redis and the fakes boot (a few seconds of tsx start-up) while PostgreSQL is created and started.
    // the S3 fake runs with OpenSSL's legacy provider, or s3rver cannot page a listing (infra/lib/s3-fake-env.ts)
    const specs = [redisSpec(p, this.childEnv), ...fakeSpecs(p, this.env).map((s) => ({ ...s, env: s.name === 's3' ? s3FakeEnv(this.childEnv) : this.childEnv }))];
    const ports = [p.ports.redis, p.ports.s3, p.ports.smtp, p.ports.payments];
    const started = specs.map((spec) => this.sup.start(spec));
    const ready = Promise.all(started.map((s, i) => waitForPort(s, ports[i]!)))
      // the mail fake's HTTP listing opens just after its SMTP port
      .then(() => waitForPort(started[2]!, p.ports.mailHttp));
    ready.catch(() => undefined); // observed below; keeps an early failure from being "unhandled"
    const test = p.name === 'test';
    this.pg = await startPostgres(
      { dir: this.dirs.pg, port: p.ports.postgres, database: p.database, fast: test, templateDir: test ? path.join(postgresHome(path.join(ROOT, '.local', 'cache')), 'pg-template') : undefined },
      this.log,
    );
    await ready;
    this.check();
  }

  /** Run independent set-up steps side by side; on the first failure the others are ended. */
  async parallel<T extends unknown[]>(...steps: { [K in keyof T]: Promise<T[K]> }): Promise<T> {
    const settled = await Promise.allSettled(steps.map((s) => s.catch((err) => { this.abort.abort(); throw err; })));
    const failed = settled.find((r) => r.status === 'rejected' && !(r.reason instanceof InfraError && r.reason.message === 'stopped while starting'));
    const anyFailed = settled.find((r) => r.status === 'rejected');
    if (failed || anyFailed) throw ((failed ?? anyFailed) as PromiseRejectedResult).reason;
    return settled.map((r) => (r as PromiseFulfilledResult<unknown>).value) as T;
  }

  /** Apply the committed migrations (skipped with a warning while api/src/db/migrate.ts does not exist). */
  async migrate(): Promise<boolean> {
    if (!exists(PRODUCT.migrate)) {
      this.log.warn(`${PRODUCT.migrate} does not exist yet; database left without tables`);
      return false;
    }
    const r = await this.task('migrate');
    if (r.code !== 0) throw new InfraError(`migrations failed:\n${tail(r.output)}\n(full log: ${path.join(this.dirs.logs, 'migrate.log')})`);
    return true;
  }

  /**
   * Seed the demo data; returns the demo sign-ins (also when the database was seeded before) and
   * whether this call seeded it.
   */
  async seed(): Promise<{ seeded: boolean; signIns: { role: string; email: string; password: string }[] } | null> {
    if (!exists(PRODUCT.seed)) {
      this.log.warn(`${PRODUCT.seed} does not exist yet; no demo data`);
      return null;
    }
    const r = await this.task('seed');
    if (r.code !== 0) throw new InfraError(`demo seed failed:\n${tail(r.output)}\n(full log: ${path.join(this.dirs.logs, 'seed.log')})`);
    const res = taskResult<{ seeded: boolean; signIns: { role: string; email: string; password: string }[] }>(r.output);
    this.log.info(res?.seeded ? 'demo data seeded' : 'demo data already present; left as it is');
    return { seeded: res?.seeded ?? false, signIns: res?.signIns ?? [] };
  }

  /**
   * Have the demo figure printed and published by its author once the farm has computed its run
   * (api/src/seed/demo-finisher.ts, over HTTP to the running API), and say in one line how it
   * ended. Meant to run in the background of a start; it never throws.
   */
  async finishDemo(startedAt: number): Promise<void> {
    if (!exists(PRODUCT.demoFinisher)) return this.log.warn(`${PRODUCT.demoFinisher} does not exist yet; the demo figure stays a draft`);
    const logFile = path.join(this.dirs.logs, 'demo-finisher.log');
    const after = () => `${((Date.now() - startedAt) / 1000).toFixed(0)} s after start`;
    try {
      const r = await this.task('finish-demo');
      const res = taskResult<{ outcome: 'published'; url: string; version: number } | { outcome: 'left' | 'gave-up'; reason: string }>(r.output);
      if (res?.outcome === 'published') this.log.info(`demo figure printed and published: ${res.url}  (print version ${res.version}, ${after()})`);
      else if (res?.outcome === 'left') this.log.info(`demo figure left as it is: ${res.reason}`);
      else if (res) this.log.warn(`demo figure not published: ${res.reason}; its author can order the print and publish it on ${this.env.PUBLIC_URL}/lab/figures (see ${logFile})`);
      else if (!this.stopping) this.log.warn(`the demo finisher ended with code ${r.code} and no answer; the demo figure may still be a draft (see ${logFile})`);
    } catch (err) {
      if (!this.stopping) this.log.warn(`the demo finisher could not run (${(err as Error).message}); the demo figure stays a draft`);
    }
  }

  /** vite build into the profile's own folder (skipped with a warning while the web entry does not exist). */
  async buildWeb(): Promise<boolean> {
    if (!exists(PRODUCT.webEntry)) {
      this.log.warn(`${PRODUCT.webEntry} does not exist yet; web app not built`);
      return false;
    }
    const started = Date.now();
    const outDir = this.profile.webDist;
    const r = await runOnce(path.join(ROOT, 'node_modules', '.bin', 'vite'), ['build', '--logLevel', 'warn', '--outDir', outDir, '--emptyOutDir'], {
      env: { ...this.childEnv, NODE_ENV: 'production' },
      cwd: ROOT,
      logFile: path.join(this.dirs.logs, 'build.log'),
      signal: this.abort.signal,
    });
    this.check();
    if (r.code !== 0) throw new InfraError(`vite build failed:\n${tail(r.output, 12)}`);
    this.log.info(`web app built into ${path.relative(ROOT, outDir)}/ in ${((Date.now() - started) / 1000).toFixed(1)} s`);
    return true;
  }

  /**
   * The compiler over every folder (tsconfig.json): vitest and Vite strip types without checking
   * them, so without this step a type error would pass the suite.
   */
  async typecheck(): Promise<void> {
    const started = Date.now();
    const r = await runOnce(path.join(ROOT, 'node_modules', '.bin', 'tsc'), ['-p', '.', '--noEmit'], {
      env: this.childEnv,
      cwd: ROOT,
      logFile: path.join(this.dirs.logs, 'typecheck.log'),
      signal: this.abort.signal,
    });
    this.check();
    if (r.code !== 0) throw new InfraError(`the type check failed (tsc -p . --noEmit):\n${tail(r.output, 20)}`);
    this.log.info(`types checked in ${((Date.now() - started) / 1000).toFixed(1)} s`);
  }

  private async task(name: 'migrate' | 'seed' | 'finish-demo') {
    const r = await runOnce(TSX, ['infra/lib/product-task.ts', name], {
      env: this.childEnv,
      cwd: ROOT,
      logFile: path.join(this.dirs.logs, name === 'finish-demo' ? 'demo-finisher.log' : `${name}.log`),
      signal: this.abort.signal,
    });
    this.check();
    return r;
  }

  /** Stop everything started, services first (reverse order), PostgreSQL last. */
  async down(): Promise<void> {
    await this.sup.stopAll((name, forced) => {
      if (forced) this.log.warn(`${name} did not stop within its time and was killed`);
    });
    if (this.pg) {
      await this.pg.stop();
      this.pg = null;
    }
    this.unlock?.();
    this.unlock = null;
  }
}
