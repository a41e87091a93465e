import { createHash, randomBytes } from 'node:crypto';
import { createReadStream, createWriteStream } from 'node:fs';
import { rename, rm, stat } from 'node:fs/promises';
import { basename, dirname, join } from 'node:path';
import type { Writable } from 'node:stream';
import { finished } from 'node:stream/promises';

export interface WrittenFile {
  path: string;
  bytes: number;
  /** hex SHA-256 of the file, for the figure page's list of downloads */
  sha256: string;
}

/** A sibling temporary name, so the final rename stays on one file system. */
export function partPath(path: string): string {
  return join(dirname(path), `.${basename(path)}.${process.pid}.${randomBytes(4).toString('hex')}.part`);
}

/**
 * Write a file all or nothing: into a temporary sibling, renamed into place only when complete, and
 * removed on any failure, so an interrupted order never leaves a half-written print behind.
 */
export async function writeAtomically(path: string, write: (tmp: string) => Promise<void>): Promise<WrittenFile> {
  const tmp = partPath(path);
  try {
    await write(tmp);
    const [sha256, st] = await Promise.all([sha256Of(tmp), stat(tmp)]);
    await rename(tmp, path);
    return { path, bytes: st.size, sha256 };
  } catch (err) {
    await rm(tmp, { force: true });
    throw err;
  }
}

/** Stream-write helper: open `tmp`, let `fill` write and end it. */
export async function writeStreamAtomically(path: string, fill: (out: Writable) => Promise<void>): Promise<WrittenFile> {
  return writeAtomically(path, async (tmp) => {
    const out = createWriteStream(tmp);
    try {
      await fill(out);
    } catch (err) {
      // close the descriptor before the temporary file is removed
      out.destroy();
      await finished(out).catch(() => undefined);
      throw err;
    }
  });
}

export async function sha256Of(path: string): Promise<string> {
  const hash = createHash('sha256');
  for await (const chunk of createReadStream(path)) hash.update(chunk as Buffer);
  return hash.digest('hex');
}
