import { sql } from 'drizzle-orm';
import { afterEach, describe, expect, it } from 'vitest';
import { connectDatabase, type Database } from '../../api/src/db/client.js';
import { testEnv } from './support/harness.js';

/**
 * The API's pool (api/src/db/client.ts) against the test PostgreSQL. A transaction whose BEGIN fails
 * must give its connection back: drizzle-orm 0.45 runs BEGIN outside the try that releases the
 * client (drizzle-team/drizzle-orm#6241), so without our guard the pool keeps the broken connection
 * checked out for good and `close()` never returns (a fault test's teardown hung on exactly that).
 * PostgreSQL refuses every statement, BEGIN included, on a connection left in an aborted
 * transaction (SQLSTATE 25P02, PostgreSQL manual, Appendix A), which makes BEGIN fail on demand.
 */
let database: Database | null = null;
afterEach(async () => {
  await database?.close();
  database = null;
});

const within = <T>(p: Promise<T>, ms: number, what: string) =>
  Promise.race([p, new Promise<never>((_, reject) => setTimeout(() => reject(new Error(`${what} took more than ${ms} ms`)), ms))]);

describe('the database pool', () => {
  it('gives back a connection whose BEGIN failed, so the next transaction runs and close() returns', async () => {
    database = connectDatabase(testEnv().DATABASE_URL, 1);
    const db = database.db;
    // leave the only connection in an aborted transaction, as a broken client would come back
    const c = await database.pool.connect();
    await c.query('BEGIN');
    await expect(c.query('SELECT 1 / 0')).rejects.toThrow(/division by zero/);
    c.release();

    await expect(db.transaction(async (tx) => tx.execute(sql`select 1`))).rejects.toMatchObject({ cause: { code: '25P02' } });
    // one connection in all: this transaction gets it only if the failed one gave it back
    const r = await within(db.transaction(async (tx) => tx.execute(sql`select 41 + 1 as v`)), 4_000, 'the next transaction');
    expect(r.rows[0]).toEqual({ v: 42 });
    expect(database.pool.totalCount).toBe(1);
    await within(database.close(), 4_000, 'closing the pool');
    database = null;
  });
});
