import { spawn, type ChildProcess } from 'node:child_process';
import fs from 'node:fs';
import path from 'node:path';

/**
 * Starts long-running services as children and stops them again, leaving nothing behind.
 *
 * Each child gets its own process group (detached), for two reasons: the terminal's Ctrl-C then
 * reaches only the orchestrator, which stops services in order (API before the database), and a
 * whole group can be signalled at once, which also ends grandchildren (tsx runs the real node
 * process as its child). Each child's pid is written to <runDir>/<name>.pid so a later run can find
 * and stop what a crashed run left.
 */
export interface ServiceSpec {
  name: string;
  command: string;
  args: string[];
  env: NodeJS.ProcessEnv;
  cwd: string;
  /** also copy the output, prefixed with the name, to this process's stdout */
  echo?: boolean;
  /** how long SIGTERM may take before SIGKILL */
  stopTimeoutMs?: number;
}

export interface Service {
  spec: ServiceSpec;
  child: ChildProcess;
  logFile: string;
  /** set once the process has exited */
  exit: { code: number | null; signal: NodeJS.Signals | null } | null;
  exited: Promise<void>;
}

interface PidRecord {
  pid: number;
  name: string;
  command: string;
  startedAt: string;
  /** the kernel's start time of the process (/proc/<pid>/stat field 22): pid + this is unique */
  startTicks: string | null;
}

/** Start time of a process in clock ticks since boot, or null when it is gone. */
export function processStartTicks(pid: number): string | null {
  try {
    const stat = fs.readFileSync(`/proc/${pid}/stat`, 'utf8');
    // the command name (field 2) may hold spaces and parentheses; count fields after the last ')'
    return stat.slice(stat.lastIndexOf(')') + 2).split(' ')[19] ?? null;
  } catch {
    return null;
  }
}

const sleep = (ms: number) => new Promise((r) => setTimeout(r, ms));

export function groupAlive(pgid: number): boolean {
  try {
    process.kill(-pgid, 0);
    return true;
  } catch (err) {
    return (err as NodeJS.ErrnoException).code === 'EPERM';
  }
}

function signalGroup(pgid: number, signal: NodeJS.Signals): void {
  try {
    process.kill(-pgid, signal);
  } catch {
    // already gone
  }
}

/** SIGTERM a process group, then SIGKILL it if it is still there after timeoutMs. True if it needed SIGKILL. */
export async function stopGroup(pgid: number, timeoutMs: number): Promise<boolean> {
  signalGroup(pgid, 'SIGTERM');
  const deadline = Date.now() + timeoutMs;
  while (groupAlive(pgid)) {
    if (Date.now() > deadline) {
      signalGroup(pgid, 'SIGKILL');
      await sleep(100);
      return true;
    }
    await sleep(50);
  }
  return false;
}

export class Supervisor {
  private services: Service[] = [];
  private unexpected: ((s: Service) => void) | null = null;
  private stopping = false;

  constructor(
    private readonly runDir: string,
    private readonly logDir: string,
  ) {
    fs.mkdirSync(runDir, { recursive: true });
    fs.mkdirSync(logDir, { recursive: true });
  }

  /** Called when a service exits while we are not stopping (a crash). */
  onUnexpectedExit(cb: (s: Service) => void): void {
    this.unexpected = cb;
  }

  start(spec: ServiceSpec): Service {
    if (this.stopping) throw new Error(`not starting ${spec.name}: stopping`);
    const logFile = path.join(this.logDir, `${spec.name}.log`);
    const log = fs.createWriteStream(logFile, { flags: 'a' });
    log.write(`\n--- ${new Date().toISOString()} ${spec.command} ${spec.args.join(' ')}\n`);
    const child = spawn(spec.command, spec.args, { cwd: spec.cwd, env: spec.env, detached: true, stdio: ['ignore', 'pipe', 'pipe'] });
    const service: Service = { spec, child, logFile, exit: null, exited: Promise.resolve() };
    const copy = (chunk: Buffer) => {
      log.write(chunk);
      if (spec.echo) {
        const text = chunk.toString('utf8').replace(/\n$/, '');
        process.stdout.write(text.split('\n').map((l) => `${spec.name.padEnd(8)}| ${l}`).join('\n') + '\n');
      }
    };
    child.stdout!.on('data', copy);
    child.stderr!.on('data', copy);
    service.exited = new Promise<void>((resolve) => {
      child.once('error', (err) => {
        log.write(`cannot start: ${err.message}\n`);
        service.exit ??= { code: 127, signal: null };
        resolve();
      });
      child.once('exit', (code, signal) => {
        service.exit = { code, signal };
        resolve();
      });
    }).then(() => {
      this.forgetPid(spec.name);
      log.end();
      if (!this.stopping) this.unexpected?.(service);
    });
    if (child.pid) {
      this.writePid({
        pid: child.pid,
        name: spec.name,
        command: `${spec.command} ${spec.args.join(' ')}`,
        startedAt: new Date().toISOString(),
        startTicks: processStartTicks(child.pid),
      });
    }
    this.services.push(service);
    return service;
  }

  /** Stop every service, last started first, each group with SIGTERM then SIGKILL after its timeout. */
  async stopAll(onStopped?: (name: string, forced: boolean) => void): Promise<void> {
    this.stopping = true;
    for (const s of [...this.services].reverse()) {
      const pid = s.child.pid;
      if (!pid) continue;
      // Even when the leader has exited, other members of its group may still run.
      const forced = groupAlive(pid) ? await stopGroup(pid, s.spec.stopTimeoutMs ?? 10_000) : false;
      await s.exited;
      onStopped?.(s.spec.name, forced);
    }
    this.services = [];
  }

  get isStopping(): boolean {
    return this.stopping;
  }

  private pidFile(name: string): string {
    return path.join(this.runDir, `${name}.pid`);
  }

  private writePid(rec: PidRecord): void {
    fs.writeFileSync(this.pidFile(rec.name), JSON.stringify(rec));
  }

  private forgetPid(name: string): void {
    fs.rmSync(this.pidFile(name), { force: true });
  }
}

/**
 * Stop what an earlier, crashed run left running, found through its pid files. A pid is trusted
 * only if the process has the start time recorded for it (pids get reused); anything else just
 * loses its stale pid file.
 */
export async function stopLeftovers(runDir: string, say: (msg: string) => void): Promise<void> {
  if (!fs.existsSync(runDir)) return;
  const files = fs.readdirSync(runDir).filter((f) => f.endsWith('.pid'));
  await Promise.all(files.map((file) => stopLeftover(path.join(runDir, file), say)));
}

async function stopLeftover(full: string, say: (msg: string) => void): Promise<void> {
  let rec: PidRecord | null = null;
  try {
    rec = JSON.parse(fs.readFileSync(full, 'utf8')) as PidRecord;
  } catch {
    // unreadable: treat as stale
  }
  if (rec && groupAlive(rec.pid)) {
    const ticks = processStartTicks(rec.pid);
    // The leader may be gone while its group lives on (tsx's node child); the group is ours then,
    // since a group id is only ever the pid of the process that created it.
    const ours = ticks === null || ticks === rec.startTicks;
    if (ours) {
      say(`stopping ${rec.name} left running by an earlier run (pid ${rec.pid})`);
      await stopGroup(rec.pid, 10_000);
    } else {
      say(`pid file of ${rec.name} is stale (pid ${rec.pid} is now another program); removing it`);
    }
  } else if (rec) {
    say(`removing stale pid file of ${rec.name} (pid ${rec.pid} is gone)`);
  }
  fs.rmSync(full, { force: true });
}
