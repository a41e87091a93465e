import { closeSync, fsyncSync, openSync, readFileSync, renameSync, writeSync } from 'node:fs';
import { decodeSnapshot, encodeSnapshot, snapshotBytes, type Snapshot } from '../engine/index.js';

/**
 * Writes a snapshot to `path` atomically: a temporary file beside it, fsync, then rename, so a kill at
 * any moment leaves the previous file or the new one, never half of one. Synchronous, because the
 * engine's state is still only while `checkpoint.save` runs. Returns the bytes written.
 */
export function writeSnapshotFile(path: string, s: Snapshot): number {
  const chunks = encodeSnapshot(s);
  const tmp = `${path}.tmp-${process.pid}`;
  const fd = openSync(tmp, 'w');
  try {
    for (const c of chunks) {
      let done = 0;
      while (done < c.byteLength) done += writeSync(fd, c, done, Math.min(c.byteLength - done, 1 << 26));
    }
    fsyncSync(fd);
  } finally {
    closeSync(fd);
  }
  renameSync(tmp, path);
  return snapshotBytes(chunks);
}

/** Reads a snapshot file; throws SnapshotError (one line) on a damaged or foreign file. */
export function readSnapshotFile(path: string): Snapshot {
  return decodeSnapshot(readFileSync(path));
}
