import fs from 'node:fs';
import net from 'node:net';

/** Who listens on a TCP port, read from /proc (Linux), so error messages can name the process. */
export interface PortOwner {
  pid: number;
  command: string;
}

function listeningInodes(port: number): Set<string> {
  const hex = port.toString(16).toUpperCase().padStart(4, '0');
  const inodes = new Set<string>();
  for (const table of ['/proc/net/tcp', '/proc/net/tcp6']) {
    let text: string;
    try {
      text = fs.readFileSync(table, 'utf8');
    } catch {
      continue;
    }
    for (const line of text.split('\n').slice(1)) {
      const cols = line.trim().split(/\s+/);
      // cols[1] = local address:port, cols[3] = state (0A = LISTEN), cols[9] = inode
      if (cols.length > 9 && cols[3] === '0A' && cols[1]!.endsWith(`:${hex}`)) inodes.add(cols[9]!);
    }
  }
  return inodes;
}

export function commandOf(pid: number): string {
  try {
    return fs.readFileSync(`/proc/${pid}/cmdline`, 'utf8').split('\0').filter(Boolean).join(' ');
  } catch {
    return '';
  }
}

export function portOwner(port: number): PortOwner | null {
  const inodes = listeningInodes(port);
  if (inodes.size === 0) return null;
  let pids: string[] = [];
  try {
    pids = fs.readdirSync('/proc').filter((d) => /^\d+$/.test(d));
  } catch {
    return null;
  }
  for (const pid of pids) {
    let fds: string[];
    try {
      fds = fs.readdirSync(`/proc/${pid}/fd`);
    } catch {
      continue;
    }
    for (const fd of fds) {
      try {
        const target = fs.readlinkSync(`/proc/${pid}/fd/${fd}`);
        const m = /^socket:\[(\d+)\]$/.exec(target);
        if (m && inodes.has(m[1]!)) return { pid: Number(pid), command: commandOf(Number(pid)) };
      } catch {
        // the fd closed while we looked
      }
    }
  }
  return { pid: 0, command: 'unknown process' };
}

/** True when nothing accepts connections on host:port. */
export function portIsFree(port: number, host = '127.0.0.1'): Promise<boolean> {
  return new Promise((resolve) => {
    const server = net.createServer();
    server.once('error', () => resolve(false));
    server.listen(port, host, () => server.close(() => resolve(true)));
  });
}

export function canConnect(port: number, host = '127.0.0.1'): Promise<boolean> {
  return new Promise((resolve) => {
    const socket = net.connect({ port, host });
    const done = (ok: boolean) => {
      socket.destroy();
      resolve(ok);
    };
    socket.once('connect', () => done(true));
    socket.once('error', () => done(false));
    socket.setTimeout(1000, () => done(false));
  });
}

const sleep = (ms: number) => new Promise((r) => setTimeout(r, ms));

/**
 * Poll until `ready()` holds. `gaveUp()` is checked between tries (e.g. "the process exited"),
 * so a crashed service fails fast with its own message instead of a timeout.
 */
export async function waitUntil(
  what: string,
  ready: () => Promise<boolean>,
  opts: { timeoutMs?: number; gaveUp?: () => string | null } = {},
): Promise<void> {
  const deadline = Date.now() + (opts.timeoutMs ?? 30_000);
  for (;;) {
    const reason = opts.gaveUp?.();
    if (reason) throw new Error(`${what}: ${reason}`);
    if (await ready()) return;
    if (Date.now() > deadline) throw new Error(`${what}: not ready after ${Math.round((opts.timeoutMs ?? 30_000) / 1000)} s`);
    await sleep(100);
  }
}

export async function httpOk(url: string): Promise<boolean> {
  try {
    const res = await fetch(url, { signal: AbortSignal.timeout(2000) });
    await res.arrayBuffer();
    return res.ok;
  } catch {
    return false;
  }
}
