import fs from 'node:fs';
import path from 'node:path';
import { InfraError } from './log.js';
import { canConnect, portIsFree, portOwner, waitUntil } from './ports.js';
import { profileDirs, ROOT, S3_BUCKET, type Profile } from './profile.js';
import type { Service, ServiceSpec, Supervisor } from './supervisor.js';

/** The specs of every service the orchestrators start, besides PostgreSQL (see postgres.ts). */

export const TSX = path.join(ROOT, 'node_modules', '.bin', 'tsx');

const tsxService = (name: string, script: string, args: string[], env: NodeJS.ProcessEnv, extra: Partial<ServiceSpec> = {}): ServiceSpec => ({
  name,
  command: TSX,
  args: [script, ...args],
  env,
  cwd: ROOT,
  ...extra,
});

export function redisSpec(p: Profile, env: NodeJS.ProcessEnv): ServiceSpec {
  const dir = profileDirs(p).redis;
  fs.mkdirSync(dir, { recursive: true });
  // dev keeps queued jobs across restarts with an append-only file; test starts empty and writes nothing
  const persistence = p.persistRedis ? ['--appendonly', 'yes', '--appendfsync', 'everysec'] : ['--appendonly', 'no'];
  return {
    name: 'redis',
    command: 'redis-server',
    args: ['--port', String(p.ports.redis), '--bind', '127.0.0.1', '--dir', dir, '--daemonize', 'no', '--save', '', ...persistence],
    env,
    cwd: ROOT,
  };
}

export function fakeSpecs(p: Profile, env: Record<string, string>): ServiceSpec[] {
  const d = profileDirs(p);
  return [
    tsxService('s3', 'infra/fakes/s3.ts', ['--port', String(p.ports.s3), '--dir', d.s3, '--bucket', S3_BUCKET], env),
    tsxService('mail', 'infra/fakes/mail.ts', ['--port', String(p.ports.smtp), '--http-port', String(p.ports.mailHttp), '--dir', d.mail], env),
    tsxService(
      'payments',
      'infra/fakes/payments.ts',
      [
        '--port', String(p.ports.payments),
        '--dir', d.payments,
        '--webhook-url', env.FAKE_WEBHOOK_URL!,
        '--webhook-secret', env.STRIPE_WEBHOOK_SECRET!,
        // tests wait for retries; a developer's machine retries at Stripe-like pace
        '--retry-base-ms', p.name === 'test' ? '200' : '1000',
      ],
      env,
    ),
  ];
}

/** The product's own processes; each is started only when its file exists (others are writing them). */
export const PRODUCT = {
  migrate: 'api/src/db/migrate.ts',
  seed: 'api/src/seed/demo.ts',
  demoFinisher: 'api/src/seed/demo-finisher.ts',
  api: 'api/src/server.ts',
  worker: 'renderer/src/worker.ts',
  webEntry: 'web/src/main.tsx',
} as const;

export const exists = (rel: string) => fs.existsSync(path.join(ROOT, rel));

export function apiSpec(env: NodeJS.ProcessEnv): ServiceSpec {
  return tsxService('api', PRODUCT.api, [], env, { echo: true });
}

export function workerSpec(env: NodeJS.ProcessEnv): ServiceSpec {
  // a worker in the middle of a job gets time to checkpoint before SIGKILL
  return tsxService('worker', PRODUCT.worker, [], env, { echo: true, stopTimeoutMs: 20_000 });
}

/** All ports of a profile other than PostgreSQL's must be free before anything starts. */
export async function checkPortsFree(p: Profile, includeApi: boolean): Promise<void> {
  const wanted: [string, number][] = [
    ['Redis', p.ports.redis],
    ['S3 fake', p.ports.s3],
    ['payments fake', p.ports.payments],
    ['SMTP fake', p.ports.smtp],
    ['mail fake HTTP', p.ports.mailHttp],
  ];
  if (includeApi) wanted.push(['API', p.ports.api]);
  const busy: string[] = [];
  for (const [what, port] of wanted) {
    if (await portIsFree(port)) continue;
    const owner = portOwner(port);
    busy.push(`port ${port} (${what}) is in use by ${owner ? `pid ${owner.pid} (${owner.command.slice(0, 120)})` : 'another program'}`);
  }
  if (busy.length) throw new InfraError(`${busy.join('; ')}. Stop ${busy.length > 1 ? 'them' : 'it'} and try again.`);
}

/** Wait until a started service accepts TCP connections; fails at once if it exits. */
export function waitForPort(s: Service, port: number, timeoutMs = 30_000): Promise<void> {
  return waitUntil(s.spec.name, () => canConnect(port), {
    timeoutMs,
    gaveUp: () => (s.exit ? `exited with ${s.exit.code ?? s.exit.signal} before it was ready; see ${s.logFile}` : null),
  });
}

export function startAll(sup: Supervisor, specs: ServiceSpec[]): Service[] {
  return specs.map((spec) => sup.start(spec));
}
