import { randomUUID } from 'node:crypto';
import { cp, mkdtemp, readFile, rm, writeFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { drizzle } from 'drizzle-orm/node-postgres';
import { migrate } from 'drizzle-orm/node-postgres/migrator';
import pg from 'pg';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { migrateDatabase, MIGRATIONS_FOLDER } from '../../api/src/db/migrate.js';
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

describe('migration 0013 (stored sizes of runs) on a database with runs', () => {
  const older = `${name}_0012`;
  const olderUrl = (() => {
    const u = new URL(adminUrl);
    u.pathname = `/${older}`;
    return u.toString();
  })();
  let folder: string;
  beforeAll(async () => {
    await withClient(adminUrl, (c) => c.query(`create database ${older}`));
    // the committed migrations up to 0012 only: a database as it was before the size columns
    folder = await mkdtemp(join(tmpdir(), 'tw-migrations-'));
    await cp(MIGRATIONS_FOLDER, folder, { recursive: true });
    const journalPath = join(folder, 'meta', '_journal.json');
    const journal = JSON.parse(await readFile(journalPath, 'utf8')) as { entries: { idx: number }[] };
    journal.entries = journal.entries.filter((e) => e.idx <= 12);
    await writeFile(journalPath, JSON.stringify(journal));
  });
  afterAll(async () => {
    await withClient(adminUrl, (c) => c.query(`drop database if exists ${older} with (force)`));
    if (folder) await rm(folder, { recursive: true, force: true });
  });

  it('leaves the size of runs stored before it unknown (null), and new rows may say zero', async () => {
    await withClient(olderUrl, (c) => migrate(drizzle(c), { migrationsFolder: folder }));
    const runId = await withClient(olderUrl, async (c) => {
      const lab = (await c.query(`insert into labs (name) values ('Old Lab') returning id`)).rows[0].id;
      const user = (await c.query(`insert into users (email, name, password_hash) values ('old@lab.test', 'Old', 'x') returning id`)).rows[0].id;
      return (await c.query(`insert into runs (lab_id, author_id, title, spec, status) values ($1, $2, 'old run', '{}'::jsonb, 'finished') returning id`, [lab, user])).rows[0].id as string;
    });
    await migrateDatabase(olderUrl);
    await withClient(olderUrl, async (c) => {
      expect((await c.query('select stored_bytes, stored_objects from runs where id = $1', [runId])).rows).toEqual([{ stored_bytes: null, stored_objects: null }]);
      const lab = (await c.query(`select id from labs`)).rows[0].id;
      const user = (await c.query(`select id from users`)).rows[0].id;
      const fresh = await c.query(`insert into runs (lab_id, author_id, title, spec, stored_bytes, stored_objects) values ($1, $2, 'new run', '{}'::jsonb, 0, 0) returning stored_bytes, stored_objects`, [lab, user]);
      // bigint arrives as text from pg
      expect(fresh.rows).toEqual([{ stored_bytes: '0', stored_objects: 0 }]);
    });
  });
});
