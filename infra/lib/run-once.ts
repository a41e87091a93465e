import { spawn } from 'node:child_process';
import fs from 'node:fs';

/**
 * Run a one-shot command (a migration, the demo seed, vite build) to completion, output into a log
 * file and kept for the caller. `signal` ends it when the orchestrator is told to stop meanwhile.
 */
export function runOnce(
  command: string,
  args: string[],
  opts: { env: NodeJS.ProcessEnv; cwd: string; logFile: string; signal?: AbortSignal; echo?: boolean },
): Promise<{ code: number; output: string }> {
  return new Promise((resolve, reject) => {
    const log = fs.createWriteStream(opts.logFile, { flags: 'a' });
    log.write(`\n--- ${new Date().toISOString()} ${command} ${args.join(' ')}\n`);
    const child = spawn(command, args, { cwd: opts.cwd, env: opts.env, stdio: ['ignore', 'pipe', 'pipe'], signal: opts.signal, killSignal: 'SIGTERM' });
    let output = '';
    const take = (chunk: Buffer) => {
      output += chunk.toString('utf8');
      log.write(chunk);
      if (opts.echo) process.stdout.write(chunk);
    };
    child.stdout.on('data', take);
    child.stderr.on('data', take);
    child.once('error', (err) => {
      log.end();
      if ((err as NodeJS.ErrnoException).code === 'ABORT_ERR') resolve({ code: 130, output });
      else reject(err);
    });
    child.once('close', (code, sig) => {
      log.end();
      resolve({ code: code ?? (sig ? 128 : 1), output });
    });
  });
}

/** The JSON after the last `RESULT ` line of a product-task run. */
export function taskResult<T>(output: string): T | null {
  const line = output.split('\n').reverse().find((l) => l.startsWith('RESULT '));
  return line ? (JSON.parse(line.slice(7)) as T) : null;
}

/** The last few lines of a command's output, for a one-paragraph error message. */
export function tail(output: string, lines = 6): string {
  return output.trim().split('\n').slice(-lines).join('\n');
}
