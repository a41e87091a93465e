import fs from 'node:fs';
import net from 'node:net';
import os from 'node:os';
import path from 'node:path';
import pg from 'pg';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { InfraError, makeLog } from '../../infra/lib/log.js';
import { startPostgres, type PostgresHandle } from '../../infra/lib/postgres.js';

/**
 * The project-local PostgreSQL cluster on its own port and folder: created with initdb on first
 * use, reused when an earlier run left it running, and a clear error when its port is taken.
 */
const base = fs.mkdtempSync(path.join(os.tmpdir(), 'tw-pg-'));
// the postgres user must be able to pass through every parent folder; mkdtemp makes it 0700
fs.chmodSync(base, 0o755);
const dir = path.join(base, 'pg');
const quiet = { info: () => {}, warn: () => {}, error: () => {} } as unknown as ReturnType<typeof makeLog>;
let port = 0;
let handle: PostgresHandle | null = null;

async function freePort(): Promise<number> {
  const s = net.createServer();
  await new Promise<void>((r) => s.listen(0, '127.0.0.1', () => r()));
  const p = (s.address() as net.AddressInfo).port;
  await new Promise<void>((r) => s.close(() => r()));
  return p;
}

async function query(database: string, text: string) {
  const client = new pg.Client({ host: '127.0.0.1', port, user: 'postgres', database });
  await client.connect();
  try {
    return await client.query(text);
  } finally {
    await client.end();
  }
}

beforeAll(async () => {
  port = await freePort();
});

afterAll(async () => {
  await handle?.stop();
  fs.rmSync(base, { recursive: true, force: true });
});

describe('project-local PostgreSQL', () => {
  it('creates a cluster owned by postgres, starts it and creates the database', async () => {
    handle = await startPostgres({ dir, port, database: 'toppleworks_probe', fast: true }, quiet);
    expect(handle.reused).toBe(false);
    expect(fs.existsSync(path.join(dir, 'data', 'PG_VERSION'))).toBe(true);
    const r = await query('toppleworks_probe', 'select current_database() as db, current_setting($$port$$) as port');
    expect(r.rows[0]).toEqual({ db: 'toppleworks_probe', port: String(port) });
    // fast mode for test clusters
    expect((await query('postgres', 'show fsync')).rows[0]).toEqual({ fsync: 'off' });
  });

  it('reuses a server left running (a second start finds it), keeping its data', async () => {
    await query('toppleworks_probe', 'create table kept (n int); insert into kept values (42)');
    const again = await startPostgres({ dir, port, database: 'toppleworks_probe', fast: true }, quiet);
    expect(again.reused).toBe(true);
    expect((await query('toppleworks_probe', 'select n from kept')).rows).toEqual([{ n: 42 }]);
  });

  it('stops cleanly and starts again from the same folder without losing data', async () => {
    await handle!.stop();
    handle = null;
    await expect(query('postgres', 'select 1')).rejects.toThrow();
    handle = await startPostgres({ dir, port, database: 'toppleworks_probe', fast: true }, quiet);
    expect(handle.reused).toBe(false);
    expect((await query('toppleworks_probe', 'select n from kept')).rows).toEqual([{ n: 42 }]);
  });

  it('says which process holds the port when it is taken', async () => {
    await handle!.stop();
    handle = null;
    const squatter = net.createServer();
    await new Promise<void>((r) => squatter.listen(port, '127.0.0.1', () => r()));
    try {
      const err = await startPostgres({ dir, port, database: 'toppleworks_probe' }, quiet).catch((e: unknown) => e);
      expect(err).toBeInstanceOf(InfraError);
      expect((err as Error).message).toContain(`port ${port} (PostgreSQL) is in use by pid ${process.pid}`);
    } finally {
      await new Promise<void>((r) => squatter.close(() => r()));
    }
  });

  it('makes a test cluster by copying one pristine template (initdb runs once)', async () => {
    const said: string[] = [];
    const log = { info: (m: string) => said.push(m), warn: () => {}, error: () => {} } as unknown as ReturnType<typeof makeLog>;
    const templateDir = path.join(base, 'template');
    const first = await startPostgres({ dir: path.join(base, 'copy1'), port, database: 'one', fast: true, templateDir }, log);
    await first.stop();
    const second = await startPostgres({ dir: path.join(base, 'copy2'), port, database: 'two', fast: true, templateDir }, log);
    try {
      expect((await query('two', 'select current_database() as db')).rows).toEqual([{ db: 'two' }]);
      // the first run built the template; the second only copied it
      expect(said.filter((m) => m.includes('template'))).toHaveLength(1);
    } finally {
      await second.stop();
    }
  });

  it('explains when the postgres user cannot reach the folder', async () => {
    const locked = fs.mkdtempSync(path.join(os.tmpdir(), 'tw-pg-locked-'));
    try {
      const err = await startPostgres({ dir: path.join(locked, 'pg'), port, database: 'x' }, quiet).catch((e: unknown) => e);
      expect(err).toBeInstanceOf(InfraError);
      expect((err as Error).message).toMatch(/postgres user cannot enter .*tw-pg-locked-/);
    } finally {
      fs.rmSync(locked, { recursive: true, force: true });
    }
  });
});
