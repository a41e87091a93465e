import { spawn, type ChildProcess } from 'node:child_process';
import fs from 'node:fs';
import net from 'node:net';
import path from 'node:path';
import { randomUUID } from 'node:crypto';
import { startPostgres, type PostgresHandle } from '../../../infra/lib/postgres.js';
import { postgresHome, ROOT } from '../../../infra/lib/profile.js';
import { s3FakeEnv } from '../../../infra/lib/s3-fake-env.js';
import { TSX } from '../../../infra/lib/services.js';
import { canConnect } from '../../../infra/lib/ports.js';

/**
 * Private service instances for fault tests, each on a free port with its own folder under
 * .local/faults/, so a test can stop and restart one under a running API or worker without
 * touching the services other test files share. Started with the same code npm test uses
 * (infra/lib/postgres.ts, infra/fakes/s3.ts, redis-server).
 */

export const sleep = (ms: number) => new Promise((r) => setTimeout(r, ms));

/** SIGTERM a service we spawned and wait until it has exited (nothing to do if it already has). */
async function stopChild(c: ChildProcess | null): Promise<void> {
  if (!c || c.exitCode !== null) return;
  const exited = new Promise((r) => c.once('exit', r));
  c.kill('SIGTERM');
  await exited;
}

export async function freePort(): Promise<number> {
  return new Promise((resolve, reject) => {
    const s = net.createServer();
    s.once('error', reject);
    s.listen(0, '127.0.0.1', () => {
      const { port } = s.address() as net.AddressInfo;
      s.close(() => resolve(port));
    });
  });
}

export function faultDir(name: string): string {
  const dir = path.join(ROOT, '.local', 'faults', `${name}-${randomUUID().slice(0, 8)}`);
  fs.mkdirSync(dir, { recursive: true });
  return dir;
}

const quiet = { info: () => undefined, warn: () => undefined, error: (m: string) => console.error(m) };

export async function until<T>(what: string, probe: () => Promise<T | null | undefined | false>, timeoutMs = 30_000, everyMs = 100): Promise<T> {
  const deadline = Date.now() + timeoutMs;
  for (;;) {
    const v = await probe();
    if (v) return v;
    if (Date.now() > deadline) throw new Error(`timed out waiting for ${what}`);
    await sleep(everyMs);
  }
}

/** A PostgreSQL cluster of its own (copied from npm test's template), stoppable and restartable on the same port and data. */
export async function privatePostgres(name: string) {
  const dir = path.join(postgresHome(faultDir(name)), 'pg');
  const port = await freePort();
  const database = 'toppleworks_faults';
  const opts = { dir, port, database, fast: true, templateDir: path.join(postgresHome(path.join(ROOT, '.local', 'cache')), 'pg-template') };
  let handle: PostgresHandle | null = await startPostgres(opts, quiet);
  return {
    url: `postgres://postgres@127.0.0.1:${port}/${database}`,
    port,
    async stop() {
      await handle?.stop();
      handle = null;
    },
    async start() {
      handle = await startPostgres(opts, quiet);
    },
    async close() {
      await handle?.stop();
      handle = null;
      fs.rmSync(path.dirname(dir), { recursive: true, force: true });
    },
  };
}

/** redis-server with an append-only file, as a production queue would run, so queued jobs survive a restart. */
export async function privateRedis(name: string) {
  const dir = faultDir(name);
  const port = await freePort();
  let child: ChildProcess | null = null;
  const start = async () => {
    child = spawn('redis-server', ['--port', String(port), '--bind', '127.0.0.1', '--dir', dir, '--save', '', '--appendonly', 'yes', '--appendfsync', 'always'], { stdio: 'ignore' });
    await until('redis to accept connections', () => canConnect(port), 10_000, 50);
  };
  await start();
  return {
    url: `redis://127.0.0.1:${port}`,
    port,
    /** SIGTERM: redis flushes the append-only file and exits, as a restart by an operator would */
    async stop() {
      const c = child;
      child = null;
      await stopChild(c);
    },
    start,
    async close() {
      await this.stop();
      fs.rmSync(dir, { recursive: true, force: true });
    },
  };
}

/**
 * s3rver on its own port and folder, in a process of its own (as npm test runs it, with OpenSSL's
 * legacy provider so listings page: infra/lib/s3-fake-env.ts); stop() makes it unreachable,
 * start() brings the same objects back.
 */
export async function privateS3(name: string, bucket: string) {
  const directory = path.join(faultDir(name), 's3');
  const port = await freePort();
  let child: ChildProcess | null = null;
  const start = async () => {
    const c = spawn(TSX, ['infra/fakes/s3.ts', '--port', String(port), '--dir', directory, '--bucket', bucket], { cwd: ROOT, env: s3FakeEnv(process.env), stdio: ['ignore', 'ignore', 'inherit'] });
    child = c;
    const exited = new Promise<never>((_, reject) => c.once('exit', (code) => reject(new Error(`the S3 fake exited with ${code} before it listened`))));
    exited.catch(() => undefined);
    await Promise.race([until('the S3 fake to accept connections', () => canConnect(port), 30_000, 50), exited]);
  };
  await start();
  return {
    endpoint: `http://127.0.0.1:${port}`,
    port,
    async stop() {
      const c = child;
      child = null;
      await stopChild(c);
    },
    start,
    async close() {
      await this.stop();
      fs.rmSync(path.dirname(directory), { recursive: true, force: true });
    },
  };
}
