import { randomBytes } from 'node:crypto';
import { access, constants, open, rename, rm } from 'node:fs/promises';
import { basename, dirname, join, resolve } from 'node:path';
import { CliInputError } from './errors.js';

export interface OutputFile {
  path: string;
  /** written in order; large arrays are passed as views, never concatenated */
  chunks: Uint8Array[];
}

/** Fail before a long run, not after it, when an output folder is missing or read-only. */
export async function assertWritable(paths: readonly string[]): Promise<void> {
  for (const path of paths) {
    const dir = dirname(resolve(path));
    try {
      await access(dir, constants.W_OK);
    } catch {
      throw new CliInputError(`cannot write ${path}: folder ${dir} does not exist or is not writable`);
    }
  }
}

/**
 * Write every file to a temporary name in its own folder, then rename them all into place.
 * Same-folder temporaries make each rename atomic; if any write fails, all temporaries are removed
 * and no output appears, so a reader never sees a half-written array or a sidecar without its array.
 */
export async function writeFilesAtomically(files: readonly OutputFile[]): Promise<void> {
  const temps: { temp: string; path: string }[] = [];
  try {
    for (const file of files) {
      const path = resolve(file.path);
      const temp = join(dirname(path), `.${basename(path)}.${process.pid}.${randomBytes(4).toString('hex')}.tmp`);
      temps.push({ temp, path });
      const handle = await open(temp, 'wx', 0o644);
      try {
        for (const chunk of file.chunks) {
          let done = 0;
          while (done < chunk.length) {
            const { bytesWritten } = await handle.write(chunk, done, Math.min(chunk.length - done, 1 << 26));
            done += bytesWritten;
          }
        }
        await handle.sync();
      } finally {
        await handle.close();
      }
    }
    for (const { temp, path } of temps) await rename(temp, path);
  } catch (error) {
    await Promise.all(temps.map(({ temp }) => rm(temp, { force: true })));
    throw error;
  }
}

