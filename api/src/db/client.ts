import { drizzle, type NodePgDatabase } from 'drizzle-orm/node-postgres';
import pg from 'pg';
import * as schema from '../../../drizzle/schema.js';

export type Db = NodePgDatabase<typeof schema>;
export type Database = { db: Db; pool: pg.Pool; close(): Promise<void> };

/** One pool per process; `close()` ends it so tests and scripts exit cleanly. */
export function connectDatabase(databaseUrl: string, maxConnections = 10): Database {
  // a connection attempt that gets no answer (a server half-way through a restart) gives up after
  // 5 s and the request answers 503, instead of a request (or a shutdown waiting for it) hanging
  const pool = new pg.Pool({ connectionString: databaseUrl, max: maxConnections, connectionTimeoutMillis: 5_000 });
  // errors of ours to the database carry its name, so the API can say which service is away
  const mark = (err: unknown) => {
    if (err && typeof err === 'object') Object.assign(err, { dependency: 'the database' });
    return err;
  };
  // An idle client whose server went away (a restart, a dropped test database) emits 'error' on the
  // pool; unheard, that would end the process. The next query simply gets a fresh connection.
  pool.on('error', (err) => console.error(`database connection lost: ${err.message}`));
  // A client checked out (inside a transaction, between two statements) when the server goes away
  // emits 'error' too, and the pool listens only to idle ones: unheard, that error ends the process.
  // The statement in progress fails on its own and the request answers 503 (http/unavailable.ts).
  pool.on('connect', (client) => {
    client.on('error', (err) => console.error(`database connection lost: ${err.message}`));
    // a statement on a checked-out client (BEGIN and COMMIT of a transaction are not wrapped by
    // drizzle) fails with a bare ECONNRESET when the server goes away: mark it as the database's
    const query = client.query.bind(client) as (...args: unknown[]) => unknown;
    (client as unknown as { query: typeof query }).query = (...args) => {
      const r = query(...args);
      return r instanceof Promise
        ? r.catch((err: unknown) => {
            if (isBegin(args[0])) releaseBroken(client as pg.PoolClient, err);
            return Promise.reject(mark(err));
          })
        : r;
    };
  });
  // A failure to connect (refused, or reset while the server shuts down) carries no sign of where it
  // came from; mark it, so the API can say "the database is not answering" (http/unavailable.ts).
  // drizzle wraps failures of statements itself (DrizzleQueryError), connections not.
  const connect = pool.connect.bind(pool) as (cb?: (err: Error | undefined, ...rest: unknown[]) => void) => unknown;
  (pool as unknown as { connect: typeof connect }).connect = (cb) =>
    cb ? connect((err, ...rest) => cb(err ? (mark(err) as Error) : err, ...rest)) : (connect() as Promise<unknown>).catch((err: unknown) => Promise.reject(mark(err)));
  const db = drizzle(pool, { schema });
  return { db, pool, close: () => pool.end() };
}

/**
 * drizzle-orm 0.45's node-postgres transaction() runs BEGIN before the try whose finally releases
 * the client (drizzle-team/drizzle-orm#6241, open): a BEGIN that fails (the server went away, the
 * connection was left in an aborted transaction) keeps the client checked out for good, and the
 * pool, and with it `close()`, waits for it for ever. Such a client is released here, as broken, so
 * the pool destroys it. Only drizzle's transactions run BEGIN on our pooled clients.
 */
function releaseBroken(client: pg.PoolClient, err: unknown): void {
  try {
    client.release(err instanceof Error ? err : new Error(String(err)));
  } catch {
    // not checked out from a pool (released already): nothing to give back
  }
}

const isBegin = (q: unknown) => /^\s*begin\b/i.test(typeof q === 'string' ? q : typeof q === 'object' && q !== null ? String((q as { text?: unknown }).text ?? '') : '');

export { schema };
