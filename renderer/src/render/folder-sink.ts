import { mkdir, rename, writeFile } from 'node:fs/promises';
import { dirname, join } from 'node:path';
import { randomBytes } from 'node:crypto';
import { assertSafeKey, type TileSink } from './sink.js';

/**
 * Writes objects as files under a root folder (tests, the CLI, serving /tiles from disk). Each file
 * is written to a temporary name and renamed, so a reader never sees half a tile.
 */
export function createFolderSink(root: string): TileSink & { root: string } {
  const made = new Set<string>();
  return {
    root,
    async put(key, body) {
      assertSafeKey(key);
      const path = join(root, key);
      const dir = dirname(path);
      if (!made.has(dir)) {
        await mkdir(dir, { recursive: true });
        made.add(dir);
      }
      const tmp = `${path}.${randomBytes(4).toString('hex')}.tmp`;
      await writeFile(tmp, body);
      await rename(tmp, path);
    },
  };
}
