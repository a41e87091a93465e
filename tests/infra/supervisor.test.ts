import { spawn } from 'node:child_process';
import fs from 'node:fs';
import net from 'node:net';
import os from 'node:os';
import path from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { portOwner } from '../../infra/lib/ports.js';
import { groupAlive, processStartTicks, stopLeftovers, Supervisor } from '../../infra/lib/supervisor.js';

/**
 * The process supervisor behind `npm start` / `npm test`: stopping must leave no process behind
 * (grandchildren included), and a later run must find and stop what a crashed run left.
 */
const root = fs.mkdtempSync(path.join(os.tmpdir(), 'tw-sup-'));
afterAll(() => fs.rmSync(root, { recursive: true, force: true }));

const alive = (pid: number) => {
  try {
    process.kill(pid, 0);
    return true;
  } catch {
    return false;
  }
};

/** A node process that starts a grandchild (like tsx does), prints the grandchild's pid, and runs on. */
const parentWithGrandchild = (extra = '') => [
  '-e',
  `const c = require('node:child_process').spawn('sleep', ['300'], { stdio: 'ignore' }); console.log('grandchild ' + c.pid); ${extra} setInterval(() => {}, 1000);`,
];

async function grandchildPid(logFile: string): Promise<number> {
  for (let i = 0; i < 200; i++) {
    const m = /grandchild (\d+)/.exec(fs.existsSync(logFile) ? fs.readFileSync(logFile, 'utf8') : '');
    if (m) return Number(m[1]);
    await new Promise((r) => setTimeout(r, 25));
  }
  throw new Error('no grandchild pid in log');
}

describe('Supervisor', () => {
  it('stops a service and its grandchildren, and removes its pid file', async () => {
    const dir = path.join(root, 'a');
    const sup = new Supervisor(path.join(dir, 'run'), path.join(dir, 'logs'));
    const s = sup.start({ name: 'svc', command: process.execPath, args: parentWithGrandchild(), env: process.env, cwd: dir });
    const grandchild = await grandchildPid(s.logFile);
    expect(fs.existsSync(path.join(dir, 'run', 'svc.pid'))).toBe(true);
    expect(alive(grandchild)).toBe(true);

    await sup.stopAll();
    expect(groupAlive(s.child.pid!)).toBe(false);
    expect(alive(grandchild)).toBe(false);
    expect(fs.existsSync(path.join(dir, 'run', 'svc.pid'))).toBe(false);
  });

  it('kills a service that ignores SIGTERM once its stop timeout has passed', async () => {
    const dir = path.join(root, 'b');
    const sup = new Supervisor(path.join(dir, 'run'), path.join(dir, 'logs'));
    const s = sup.start({
      name: 'stubborn',
      command: process.execPath,
      args: ['-e', "process.on('SIGTERM', () => {}); console.log('handler' + ' set'); setInterval(() => {}, 1000);"],
      env: process.env,
      cwd: dir,
      stopTimeoutMs: 300,
    });
    const up = () => fs.existsSync(s.logFile) && fs.readFileSync(s.logFile, 'utf8').includes('handler set');
    for (let i = 0; i < 200 && !up(); i++) await new Promise((r) => setTimeout(r, 25));
    expect(up()).toBe(true);
    const forced: string[] = [];
    await sup.stopAll((name, f) => f && forced.push(name));
    expect(forced).toEqual(['stubborn']);
    expect(s.exit?.signal).toBe('SIGKILL');
  });

  it('reports a service that exits on its own', async () => {
    const dir = path.join(root, 'c');
    const sup = new Supervisor(path.join(dir, 'run'), path.join(dir, 'logs'));
    const exited = new Promise<number | null>((resolve) => sup.onUnexpectedExit((s) => resolve(s.exit!.code)));
    sup.start({ name: 'crash', command: process.execPath, args: ['-e', 'process.exit(3)'], env: process.env, cwd: dir });
    expect(await exited).toBe(3);
    await sup.stopAll();
  });
});

describe('stopLeftovers', () => {
  it('stops the process group a crashed run left, found through its pid file', async () => {
    const dir = path.join(root, 'd');
    const crashed = new Supervisor(path.join(dir, 'run'), path.join(dir, 'logs'));
    // this supervisor never gets to stopAll(), as when `npm start` is killed with SIGKILL
    const s = crashed.start({ name: 'left', command: process.execPath, args: parentWithGrandchild(), env: process.env, cwd: dir });
    const grandchild = await grandchildPid(s.logFile);
    const said: string[] = [];
    await stopLeftovers(path.join(dir, 'run'), (m) => said.push(m));
    await s.exited;
    expect(said).toEqual([`stopping left left running by an earlier run (pid ${s.child.pid})`]);
    expect(alive(grandchild)).toBe(false);
    expect(fs.readdirSync(path.join(dir, 'run'))).toEqual([]);
  });

  it('does not touch a process whose pid was reused, and drops pid files of dead processes', async () => {
    const dir = path.join(root, 'e', 'run');
    fs.mkdirSync(dir, { recursive: true });
    const stranger = spawn('sleep', ['30'], { detached: true, stdio: 'ignore' });
    await new Promise((r) => setTimeout(r, 50));
    const pid = stranger.pid!;
    // same pid, but another start time: the recorded process is gone and the pid belongs to someone else
    fs.writeFileSync(path.join(dir, 'reused.pid'), JSON.stringify({ pid, name: 'reused', command: 'x', startedAt: '', startTicks: '1' }));
    fs.writeFileSync(path.join(dir, 'dead.pid'), JSON.stringify({ pid: 2 ** 22 + 7, name: 'dead', command: 'x', startedAt: '', startTicks: '1' }));
    fs.writeFileSync(path.join(dir, 'garbage.pid'), 'not json');
    const said: string[] = [];
    await stopLeftovers(dir, (m) => said.push(m));
    expect(alive(pid)).toBe(true);
    expect(processStartTicks(pid)).not.toBe('1');
    expect(said.sort()).toEqual([
      `pid file of reused is stale (pid ${pid} is now another program); removing it`,
      `removing stale pid file of dead (pid ${2 ** 22 + 7} is gone)`,
    ]);
    expect(fs.readdirSync(dir)).toEqual([]);
    stranger.kill('SIGKILL');
  });
});

describe('portOwner', () => {
  it('names the process listening on a port', async () => {
    const server = net.createServer();
    await new Promise<void>((r) => server.listen(0, '127.0.0.1', () => r()));
    const port = (server.address() as net.AddressInfo).port;
    try {
      const owner = portOwner(port);
      expect(owner?.pid).toBe(process.pid);
      expect(owner?.command).toContain('node');
    } finally {
      await new Promise<void>((r) => server.close(() => r()));
    }
    expect(portOwner(port)).toBeNull();
  });
});
