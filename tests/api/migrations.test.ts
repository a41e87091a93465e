import { randomUUID } from 'node:crypto';
import pg from 'pg';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { migrateDatabase } from '../../api/src/db/migrate.js';
import { testEnv } from './support/harness.js';

/** Apply the committed migrations to a database created empty for this test, then inspect it. */
const env = testEnv();
const name = `tw_migrate_${randomUUID().replaceAll('-', '').slice(0, 12)}`;
const adminUrl = env.DATABASE_URL;
const freshUrl = (() => {
  const u = new URL(adminUrl);
  u.pathname = `/${name}`;
  return u.toString();
})();

async function withClient<T>(url: string, f: (c: pg.Client) => Promise<T>): Promise<T> {
  const c = new pg.Client({ connectionString: url });
  await c.connect();
  try {
    return await f(c);
  } finally {
    await c.end();
  }
}

describe('migrations from an empty database', () => {
  beforeAll(async () => {
    await withClient(adminUrl, (c) => c.query(`create database ${name}`));
  });
  afterAll(async () => {
    await withClient(adminUrl, (c) => c.query(`drop database if exists ${name} with (force)`));
  });

  it('creates every table, and a second run changes nothing', async () => {
    await migrateDatabase(freshUrl);
    const tables = await withClient(freshUrl, async (c) =>
      (await c.query(`select table_name from information_schema.tables where table_schema = 'public' order by 1`)).rows.map((r) => r.table_name),
    );
    expect(tables).toEqual([
      'api_tokens',
      'audit_events',
      'background_uploads',
      'credit_purchases',
      'email_tokens',
      'figure_versions',
      'figures',
      'invitations',
      'job_outbox',
      'labs',
      'ledger_entries',
      'ledger_lines',
      'memberships',
      'payment_events',
      'runs',
      'series',
      'sessions',
      'users',
    ]);
    const applied = await withClient(freshUrl, async (c) => (await c.query('select count(*)::int as n from drizzle.__drizzle_migrations')).rows[0].n);
    await migrateDatabase(freshUrl);
    const again = await withClient(freshUrl, async (c) => (await c.query('select count(*)::int as n from drizzle.__drizzle_migrations')).rows[0].n);
    expect(applied).toBeGreaterThanOrEqual(2);
    expect(again).toBe(applied);
  });

  it('keeps the audit trail append-only', async () => {
    await withClient(freshUrl, async (c) => {
      await c.query(`insert into audit_events (action, reason) values ('test.event', 'append-only check')`);
      await expect(c.query(`update audit_events set reason = 'rewritten'`)).rejects.toThrow(/append-only/);
      await expect(c.query(`delete from audit_events`)).rejects.toThrow(/append-only/);
      // row triggers do not fire on TRUNCATE; a statement trigger (migration 0009) refuses it too
      await expect(c.query(`truncate audit_events`)).rejects.toThrow(/append-only/);
      const rows = (await c.query(`select reason from audit_events`)).rows;
      expect(rows).toEqual([{ reason: 'append-only check' }]);
    });
  });

  it('enforces one account per e-mail and one membership per lab and user', async () => {
    await withClient(freshUrl, async (c) => {
      const u = (await c.query(`insert into users (email, name, password_hash) values ('a@b.test', 'A', 'x') returning id`)).rows[0].id;
      await expect(c.query(`insert into users (email, name, password_hash) values ('a@b.test', 'B', 'y')`)).rejects.toThrow(/unique/);
      const l = (await c.query(`insert into labs (name) values ('Some Lab') returning id`)).rows[0].id;
      await expect(c.query(`insert into labs (name) values ('SOME LAB')`)).rejects.toThrow(/unique/);
      await c.query(`insert into memberships (lab_id, user_id, role) values ($1, $2, 'author')`, [l, u]);
      await expect(c.query(`insert into memberships (lab_id, user_id, role) values ($1, $2, 'manager')`, [l, u])).rejects.toThrow(/duplicate key/);
      await expect(c.query(`insert into memberships (lab_id, user_id, role) values ($1, $2, 'owner')`, [l, u])).rejects.toThrow(/enum/);
    });
  });
});
