import { createHash } from 'node:crypto';
import fs from 'node:fs';
import path from 'node:path';
import { fileURLToPath } from 'node:url';

/** The repository root (infra/lib/ is two levels down). */
export const ROOT = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '..', '..');

export type ProfileName = 'dev' | 'test';

/**
 * Everything that differs between `npm start` (dev) and `npm test` (test): ports, folders,
 * database name. The two never share a port or a folder, so a test run beside a running
 * `npm start` touches none of its data.
 */
export interface Profile {
  name: ProfileName;
  /** .local/<name>: all state of this profile; test wipes it at each run */
  dir: string;
  /**
   * Where `vite build` writes the web app: dist/ for dev (the API serves it), a folder inside
   * .local/test/ for test, so a test run never empties the files a running `npm start` serves.
   */
  webDist: string;
  ports: {
    postgres: number;
    redis: number;
    s3: number;
    payments: number;
    smtp: number;
    mailHttp: number;
    /** the API + built web app; test runs start their own APIs on ephemeral ports */
    api: number;
  };
  database: string;
  /** dev keeps Redis data across restarts (queued jobs survive); test starts empty */
  persistRedis: boolean;
}

export const S3_BUCKET = 'toppleworks';
/** Where the payments fake delivers events unless FAKE_WEBHOOK_URL says otherwise. */
export const DEFAULT_WEBHOOK_PATH = '/api/payments/webhook';

// Below the ephemeral range (32768–60999): a stray outgoing connection can never hold one of these.
const PORTS: Record<ProfileName, Profile['ports']> = {
  dev: { postgres: 15432, redis: 16379, s3: 14569, payments: 14570, smtp: 14525, mailHttp: 14526, api: 5180 },
  test: { postgres: 25432, redis: 26379, s3: 24569, payments: 24570, smtp: 24525, mailHttp: 24526, api: 5280 },
};

/**
 * TW_PORT_OFFSET (a multiple of 1000, at most 6000) shifts every port of the profile, so two
 * checkouts on one machine can each run `npm test` at the same time without meeting.
 */
export function portOffset(source: NodeJS.ProcessEnv = process.env): number {
  const raw = source.TW_PORT_OFFSET;
  if (raw === undefined || raw === '') return 0;
  const offset = Number(raw);
  if (!Number.isInteger(offset) || offset < 0 || offset > 6000 || offset % 1000 !== 0) {
    throw new Error(`TW_PORT_OFFSET must be 0, 1000, …, 6000 (got ${JSON.stringify(raw)})`);
  }
  return offset;
}

export function profileFor(name: ProfileName, root = ROOT, offset = portOffset()): Profile {
  const ports = Object.fromEntries(Object.entries(PORTS[name]).map(([k, v]) => [k, v + offset])) as Profile['ports'];
  return {
    name,
    dir: path.join(root, '.local', name),
    webDist: name === 'dev' ? path.join(root, 'dist') : path.join(root, '.local', name, 'dist'),
    ports,
    database: name === 'dev' ? 'toppleworks' : 'toppleworks_test',
    persistRedis: name === 'dev',
  };
}

/** Whether other users (the postgres user among them) may pass through every existing folder above `dir`. */
function othersCanReach(dir: string): boolean {
  for (let d = path.resolve(dir); ; d = path.dirname(d)) {
    let mode: number | null = null;
    try {
      mode = fs.statSync(d).mode;
    } catch {
      // not created yet: the folders above it decide
    }
    if (mode !== null && (mode & 0o001) === 0) return false;
    if (path.dirname(d) === d) return true;
  }
}

/**
 * Where PostgreSQL's files of a project folder go. PostgreSQL refuses to run as root, so its
 * cluster belongs to the postgres user, who must be able to walk down to it: a checkout inside a
 * private folder (a mode-700 temporary folder, as CI clones use) keeps its clusters under
 * /var/tmp instead, in a folder named after the checkout's path.
 */
export function postgresHome(dir: string): string {
  if (othersCanReach(dir)) return dir;
  const tag = createHash('sha256').update(path.resolve(dir)).digest('hex').slice(0, 16);
  return path.join('/var/tmp', `toppleworks-${tag}`);
}

/** Folders of one profile. PostgreSQL's folder must be owned by the postgres user (see postgres.ts). */
export function profileDirs(p: Profile) {
  const pg = path.join(postgresHome(p.dir), 'pg');
  return {
    pg,
    pgData: path.join(pg, 'data'),
    redis: path.join(p.dir, 'redis'),
    s3: path.join(p.dir, 's3'),
    mail: path.join(p.dir, 'mail'),
    payments: path.join(p.dir, 'payments'),
    logs: path.join(p.dir, 'logs'),
    run: path.join(p.dir, 'run'),
  };
}

/**
 * The environment handed to the API, the worker and the tests: the names of shared/env.ts plus
 * the fakes' own addresses used by tests. It always points at this profile's own services (an
 * outer DATABASE_URL must never send a test run to someone else's database); the caller's
 * environment is merged underneath for PATH and the like.
 */
export function serviceEnv(p: Profile): Record<string, string> {
  const h = '127.0.0.1';
  const publicUrl = `http://${h}:${p.ports.api}`;
  return {
    NODE_ENV: p.name === 'test' ? 'test' : 'development',
    HOST: h,
    PORT: String(p.ports.api),
    PUBLIC_URL: publicUrl,
    DATABASE_URL: `postgres://postgres@${h}:${p.ports.postgres}/${p.database}`,
    REDIS_URL: `redis://${h}:${p.ports.redis}`,
    S3_ENDPOINT: `http://${h}:${p.ports.s3}`,
    S3_REGION: 'us-east-1',
    S3_BUCKET,
    S3_ACCESS_KEY_ID: 'S3RVER',
    S3_SECRET_ACCESS_KEY: 'S3RVER',
    STRIPE_SECRET_KEY: 'sk_test_toppleworks_local',
    STRIPE_API_BASE: `http://${h}:${p.ports.payments}`,
    STRIPE_WEBHOOK_SECRET: 'whsec_toppleworks_local',
    PAYMENTS_FAKE_URL: `http://${h}:${p.ports.payments}`,
    FAKE_WEBHOOK_URL: `${publicUrl}${DEFAULT_WEBHOOK_PATH}`,
    SMTP_URL: `smtp://${h}:${p.ports.smtp}`,
    MAIL_OUTBOX_URL: `http://${h}:${p.ports.mailHttp}`,
    // the pinned AWS SDK warns at every start that later releases need Node 22; we stay pinned
    AWS_SDK_JS_NODE_VERSION_SUPPORT_WARNING_DISABLED: 'true',
  };
}
