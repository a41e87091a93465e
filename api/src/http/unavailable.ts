import { HttpError } from './http-error.js';

/**
 * A dependency that is down (PostgreSQL restarting, the object store or Redis unreachable) is not
 * a bug of ours: the client should hear 503 and try again, not a 500 to report. Recognised by the
 * error (or its `cause`, as drizzle wraps driver errors) carrying a network or server-shutdown code.
 */

// Node's socket errors; PostgreSQL SQLSTATE class 08 (connection exception) and 57P01–57P03 (shutdown, cannot connect now)
const NETWORK_CODES = new Set(['ECONNREFUSED', 'ECONNRESET', 'ETIMEDOUT', 'EPIPE', 'EHOSTUNREACH', 'ENETUNREACH', 'ENOTFOUND', 'EAI_AGAIN', 'ECONNABORTED']);
const PG_UNAVAILABLE = /^(08...|57P0[123])$/;
// node-postgres and ioredis say so in words only
const PG_WORDS = /Connection terminated|connection error and is not queryable|timeout exceeded when trying to connect|the database system is (starting up|shutting down)/i;
const REDIS_WORDS = /^(Connection is closed\.|Stream isn't writeable)|MaxRetriesPerRequest/;

type Chained = { dependency?: unknown; code?: unknown; message?: unknown; name?: unknown; cause?: unknown; $metadata?: unknown; port?: unknown };

/** The ports of our dependencies, so a bare "connect ECONNREFUSED host:port" can be named. */
export type DependencyPorts = { database?: number; objectStore?: number; queue?: number };

const portOf = (url: string, fallback: number): number | undefined => {
  try {
    const u = new URL(url);
    return u.port ? Number(u.port) : fallback;
  } catch {
    return undefined;
  }
};

export function dependencyPorts(env: { DATABASE_URL: string; S3_ENDPOINT: string; REDIS_URL: string }): DependencyPorts {
  return { database: portOf(env.DATABASE_URL, 5432), objectStore: portOf(env.S3_ENDPOINT, 443), queue: portOf(env.REDIS_URL, 6379) };
}

function chain(err: unknown): Chained[] {
  const out: Chained[] = [];
  for (let e = err, k = 0; e && typeof e === 'object' && k < 5; e = (e as Chained).cause, k++) out.push(e as Chained);
  return out;
}

export function unavailable(err: unknown, ports: DependencyPorts = {}): HttpError | null {
  const links = chain(err);
  const code = (e: Chained) => (typeof e.code === 'string' ? e.code : '');
  const msg = (e: Chained) => (typeof e.message === 'string' ? e.message : '');
  const network = links.some((e) => NETWORK_CODES.has(code(e)));
  const refusedPort = links.map((e) => e.port).find((p) => typeof p === 'number');
  let what: string | null = null;
  const marked = links.map((e) => e.dependency).find((d) => typeof d === 'string') as string | undefined;
  const pgDown = links.some((e) => PG_UNAVAILABLE.test(code(e)) || PG_WORDS.test(msg(e)));
  if (marked && (network || pgDown)) what = marked;
  else if (network && refusedPort !== undefined && refusedPort === ports.database) what = 'the database';
  else if (network && refusedPort !== undefined && refusedPort === ports.objectStore) what = 'the object store';
  else if (network && refusedPort !== undefined && refusedPort === ports.queue) what = 'the job queue';
  else if (links.some((e) => e.$metadata !== undefined || /^(TimeoutError|RequestTimeout)$/.test(String(e.name))) && (network || links.some((e) => String(e.name) === 'TimeoutError'))) what = 'the object store';
  else if (links.some((e) => PG_UNAVAILABLE.test(code(e)) || PG_WORDS.test(msg(e))) || (network && links.some((e) => String(e.name) === 'DrizzleQueryError'))) what = 'the database';
  else if (links.some((e) => REDIS_WORDS.test(msg(e)))) what = 'the job queue';
  else if (network) what = 'a service we depend on';
  if (!what) return null;
  return new HttpError(503, `temporarily unavailable: ${what} is not answering; try again in a moment`);
}
