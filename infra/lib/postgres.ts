import { execFileSync, spawn } from 'node:child_process';
import fs from 'node:fs';
import path from 'node:path';
import pg from 'pg';
import { InfraError, type Log } from './log.js';
import { portIsFree, portOwner } from './ports.js';

/**
 * A project-local PostgreSQL cluster (Debian's postgresql-15 server binaries, found with
 * `pg_config --bindir`). PostgreSQL refuses to run as root, so as root every server command runs
 * as the postgres system user through runuser, and the cluster's folder (data + socket) belongs
 * to postgres. pg_ctl starts the server in the background; it is started in a session of its own
 * so the terminal's Ctrl-C does not reach it before the services that use it are stopped.
 */
export interface PostgresOptions {
  /** folder holding data/, the socket and server.log; must be traversable by the postgres user */
  dir: string;
  port: number;
  database: string;
  /** test clusters trade durability for speed: fsync and synchronous commit off */
  fast?: boolean;
  /**
   * A folder keeping one pristine initdb result to copy instead of running initdb again (initdb
   * takes seconds on a busy machine, a copy a fraction of one). Used by the test profile, whose
   * cluster is created anew at every run.
   */
  templateDir?: string;
}

export interface PostgresHandle {
  /** true when a server left running by an earlier run was adopted */
  reused: boolean;
  stop(): Promise<void>;
}

const isRoot = () => process.getuid?.() === 0;

function bindir(): string {
  try {
    return execFileSync('pg_config', ['--bindir'], { encoding: 'utf8' }).trim();
  } catch {
    throw new InfraError('pg_config not found: install the Debian package postgresql-15');
  }
}

/** argv for running a PostgreSQL program as the postgres user (directly when we are not root). */
function asPostgres(program: string, args: string[]): [string, string[]] {
  return isRoot() ? ['runuser', ['-u', 'postgres', '--', program, ...args]] : [program, args];
}

function run(program: string, args: string[], opts: { detached?: boolean } = {}): Promise<{ code: number; output: string }> {
  const [cmd, argv] = asPostgres(program, args);
  return new Promise((resolve, reject) => {
    const child = spawn(cmd, argv, { stdio: ['ignore', 'pipe', 'pipe'], detached: opts.detached ?? false });
    let output = '';
    child.stdout.on('data', (c: Buffer) => (output += c.toString()));
    child.stderr.on('data', (c: Buffer) => (output += c.toString()));
    child.once('error', reject);
    child.once('close', (code) => resolve({ code: code ?? 1, output: output.trim() }));
  });
}

/** Make the cluster folder and hand it to postgres; every ancestor must let postgres through. */
function prepareFolder(dir: string): void {
  fs.mkdirSync(dir, { recursive: true });
  if (!isRoot()) return;
  const { uid, gid } = postgresIds();
  fs.chownSync(dir, uid, gid);
  fs.chmodSync(dir, 0o700);
  for (let d = path.dirname(dir); ; d = path.dirname(d)) {
    const mode = fs.statSync(d).mode;
    if ((mode & 0o001) === 0) {
      throw new InfraError(`the postgres user cannot enter ${d} (mode ${(mode & 0o777).toString(8)}); run 'chmod o+x ${d}' or clone elsewhere`);
    }
    if (d === path.dirname(d)) break;
  }
}

function postgresIds(): { uid: number; gid: number } {
  try {
    const uid = Number(execFileSync('id', ['-u', 'postgres'], { encoding: 'utf8' }).trim());
    const gid = Number(execFileSync('id', ['-g', 'postgres'], { encoding: 'utf8' }).trim());
    return { uid, gid };
  } catch {
    throw new InfraError("no 'postgres' system user: install the Debian package postgresql-15");
  }
}

async function initdb(bin: string, data: string, noSync: boolean): Promise<void> {
  const args = ['-D', data, '-U', 'postgres', '--auth=trust', '-E', 'UTF8', '--locale=C.UTF-8'];
  if (noSync) args.push('--no-sync');
  // initdb removes its half-made folder itself when it fails
  const r = await run(path.join(bin, 'initdb'), args);
  if (r.code !== 0) throw new InfraError(`initdb failed: ${r.output.split('\n').slice(-3).join(' ')}`);
}

/** Copy a pristine cluster from the template folder, making the template first if it is missing or stale. */
async function copyTemplate(bin: string, templateDir: string, data: string, log: Log): Promise<void> {
  const version = execFileSync(path.join(bin, 'postgres'), ['--version'], { encoding: 'utf8' }).trim();
  const stamp = path.join(templateDir, 'version');
  const tdata = path.join(templateDir, 'data');
  if (!fs.existsSync(path.join(tdata, 'PG_VERSION')) || !fs.existsSync(stamp) || fs.readFileSync(stamp, 'utf8') !== version) {
    log.info(`creating a template PostgreSQL cluster in ${tdata} (once)`);
    fs.rmSync(templateDir, { recursive: true, force: true });
    prepareFolder(templateDir);
    await initdb(bin, tdata, true);
    fs.writeFileSync(stamp, version);
  }
  // cp -a keeps the postgres ownership and the 0700 mode PostgreSQL insists on
  execFileSync('cp', ['-a', tdata, data]);
}

/** Port recorded in postmaster.pid (line 4) of a running cluster, or null. */
function runningPort(dataDir: string): number | null {
  try {
    const lines = fs.readFileSync(path.join(dataDir, 'postmaster.pid'), 'utf8').split('\n');
    const port = Number(lines[3]);
    return Number.isInteger(port) ? port : null;
  } catch {
    return null;
  }
}

async function isRunning(bin: string, dataDir: string): Promise<boolean> {
  if (!fs.existsSync(path.join(dataDir, 'PG_VERSION'))) return false;
  // pg_ctl status checks that the pid in postmaster.pid is alive: exit 0 running, 3 not running
  return (await run(path.join(bin, 'pg_ctl'), ['status', '-D', dataDir])).code === 0;
}

async function pgStop(bin: string, dataDir: string, mode: 'fast' | 'immediate'): Promise<void> {
  const r = await run(path.join(bin, 'pg_ctl'), ['stop', '-D', dataDir, '-m', mode, '-w', '-t', '30']);
  if (r.code !== 0 && (await isRunning(bin, dataDir))) throw new InfraError(`could not stop PostgreSQL in ${dataDir}: ${r.output}`);
}

/** Stop a cluster of ours if one is running in `dir` (used before wiping a test folder). */
export async function stopPostgresIn(dir: string, log: Log): Promise<void> {
  const bin = bindir();
  const data = path.join(dir, 'data');
  if (await isRunning(bin, data)) {
    log.info(`stopping PostgreSQL left running in ${data} by an earlier run`);
    await pgStop(bin, data, 'immediate');
  }
}

export async function ensureDatabase(port: number, database: string): Promise<void> {
  const client = new pg.Client({ host: '127.0.0.1', port, user: 'postgres', database: 'postgres' });
  await client.connect();
  try {
    const found = await client.query('select 1 from pg_database where datname = $1', [database]);
    if (found.rowCount === 0) await client.query(`create database "${database.replaceAll('"', '""')}"`);
  } finally {
    await client.end();
  }
}

async function answers(port: number): Promise<boolean> {
  const client = new pg.Client({ host: '127.0.0.1', port, user: 'postgres', database: 'postgres', connectionTimeoutMillis: 3000 });
  try {
    await client.connect();
    await client.query('select 1');
    return true;
  } catch {
    return false;
  } finally {
    await client.end().catch(() => undefined);
  }
}

/**
 * Start (or reuse) the cluster in opts.dir on opts.port and make sure opts.database exists.
 * Creates the cluster with initdb on first use; a server of ours left running on the right port is
 * reused after it answers a query, one on the wrong port is restarted.
 */
export async function startPostgres(opts: PostgresOptions, log: Log): Promise<PostgresHandle> {
  const bin = bindir();
  const data = path.join(opts.dir, 'data');
  prepareFolder(opts.dir);

  let reused = false;
  if (await isRunning(bin, data)) {
    const port = runningPort(data);
    if (port === opts.port && (await answers(opts.port))) {
      log.info(`PostgreSQL from an earlier run is still running on ${opts.port}; reusing it (${data})`);
      reused = true;
    } else {
      log.info(`PostgreSQL from an earlier run is running on port ${port ?? '?'} instead of ${opts.port}; restarting it`);
      await pgStop(bin, data, 'fast');
    }
  }

  if (!reused) {
    if (!fs.existsSync(path.join(data, 'PG_VERSION'))) {
      if (fs.existsSync(data) && fs.readdirSync(data).length > 0) {
        throw new InfraError(`${data} exists but holds no PostgreSQL cluster; move it away or delete it`);
      }
      if (opts.templateDir) await copyTemplate(bin, opts.templateDir, data, log);
      else {
        log.info(`creating a PostgreSQL cluster in ${data}`);
        await initdb(bin, data, false);
      }
    }
    if (!(await portIsFree(opts.port))) {
      const owner = portOwner(opts.port);
      throw new InfraError(
        `port ${opts.port} (PostgreSQL) is in use by ${owner ? `pid ${owner.pid} (${owner.command})` : 'another program'}; stop it and try again`,
      );
    }
    const settings = [`-p ${opts.port}`, `-k ${opts.dir}`, '-c listen_addresses=127.0.0.1'];
    if (opts.fast) settings.push('-c fsync=off', '-c synchronous_commit=off', '-c full_page_writes=off');
    const r = await run(
      path.join(bin, 'pg_ctl'),
      ['start', '-D', data, '-l', path.join(opts.dir, 'server.log'), '-w', '-t', '60', '-o', settings.join(' ')],
      { detached: true },
    );
    if (r.code !== 0) {
      throw new InfraError(`PostgreSQL did not start (${r.output.split('\n').pop()}); see ${path.join(opts.dir, 'server.log')}`);
    }
  }

  try {
    await ensureDatabase(opts.port, opts.database);
  } catch (err) {
    await pgStop(bin, data, 'fast').catch(() => undefined);
    throw new InfraError(`cannot create database ${opts.database}: ${(err as Error).message}`);
  }
  return {
    reused,
    stop: () => pgStop(bin, data, 'fast'),
  };
}
