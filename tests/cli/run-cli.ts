import { spawn, type ChildProcess } from 'node:child_process';
import { mkdtempSync, readdirSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { createRequire } from 'node:module';
import { join, resolve } from 'node:path';
import { pathToFileURL } from 'node:url';
import { expect } from 'vitest';
import { readNpy, type NpyReadResult } from '../../renderer/src/npy/index.js';

const ROOT = resolve(import.meta.dirname, '../..');
const CLI = join(ROOT, 'renderer/src/cli/stabilize.ts');
/** tsx's loader by URL: the command runs in a scratch folder, where the bare name would not resolve */
const TSX_LOADER = pathToFileURL(createRequire(import.meta.url).resolve('tsx')).href;

export interface CliRun {
  status: number | null;
  stdout: string;
  stderr: string;
}

/**
 * Run the real command in `cwd`: renderer/src/cli/stabilize.ts under tsx's loader, what `npm run -s
 * stabilize` runs. `node --import tsx` rather than the `tsx` binary, which starts a second node
 * process to do the same (about a fifth of each case's CPU time, measured).
 */
export function stabilizeCli(args: string[], cwd: string): Promise<CliRun> {
  return startCli(args, cwd).done;
}

/** The same, with the child at hand (to interrupt it). */
export function startCli(args: string[], cwd: string): { child: ChildProcess; done: Promise<CliRun> } {
  const child = spawn(process.execPath, ['--import', TSX_LOADER, CLI, ...args], { cwd, stdio: ['ignore', 'pipe', 'pipe'] });
  const done = new Promise<CliRun>((resolveRun, fail) => {
    let stdout = '';
    let stderr = '';
    child.stdout!.setEncoding('utf8').on('data', (s: string) => (stdout += s));
    child.stderr!.setEncoding('utf8').on('data', (s: string) => (stderr += s));
    child.on('error', fail);
    child.on('close', (status) => resolveRun({ status, stdout, stderr }));
  });
  return { child, done };
}

/** A scratch folder for one test: run the CLI in it, list and read what it wrote. */
export class Workspace {
  readonly dir = mkdtempSync(join(tmpdir(), 'tw-cli-'));

  constructor(onTestFinished: (fn: () => void) => void) {
    onTestFinished(() => rmSync(this.dir, { recursive: true, force: true }));
  }

  path(name: string): string {
    return join(this.dir, name);
  }

  files(): string[] {
    return readdirSync(this.dir).sort();
  }

  run(args: string[]): Promise<CliRun> {
    return stabilizeCli(args, this.dir);
  }

  start(args: string[]): { child: ChildProcess; done: Promise<CliRun> } {
    return startCli(args, this.dir);
  }

  /** Run, expect success with a clean stderr. */
  async ok(args: string[]): Promise<CliRun> {
    const r = await this.run(args);
    expect(r.stderr).toBe('');
    expect(r.status).toBe(0);
    return r;
  }

  /** Run with --json and return the single JSON object printed on stdout. */
  async json(args: string[]): Promise<Record<string, any>> {
    const r = await this.ok([...args, '--json']);
    const lines = r.stdout.trim().split('\n');
    expect(lines).toHaveLength(1);
    return JSON.parse(lines[0]!) as Record<string, any>;
  }

  array(name: string): NpyReadResult {
    return readNpy(new Uint8Array(readFileSync(this.path(name))), { allowFloat: true });
  }

  readJson(name: string): any {
    return JSON.parse(readFileSync(this.path(name), 'utf8'));
  }
}
