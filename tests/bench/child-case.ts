import { spawn } from 'node:child_process';

/**
 * Run one benchmark case in a child process of the same script (`<script> --case <json>`), so its
 * peak resident memory is its own. Asynchronous, so services in this process (an S3 fake) keep
 * answering while the child works. Resolves with the last line the child prints, parsed as JSON.
 */
export function runInChild<T>(script: string, spec: unknown, label: string): Promise<T> {
  const child = spawn(process.execPath, ['--import', 'tsx', script, '--case', JSON.stringify(spec)], { stdio: ['ignore', 'pipe', 'pipe'] });
  let out = '';
  let err = '';
  child.stdout.on('data', (b: Buffer) => (out += b));
  child.stderr.on('data', (b: Buffer) => (err += b));
  return new Promise((resolve, reject) => {
    child.on('error', reject);
    child.on('close', (code) => {
      if (code !== 0) reject(new Error(`case ${label} failed:\n${err}`));
      else resolve(JSON.parse(out.trim().split('\n').at(-1)!) as T);
    });
  });
}
