import { createReadStream, createWriteStream, mkdtempSync, rmSync, statSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { Readable } from 'node:stream';
import { pipeline } from 'node:stream/promises';
import { DeleteObjectCommand, GetObjectCommand, NoSuchKey, PutObjectCommand, type S3Client } from '@aws-sdk/client-s3';
import type { Snapshot } from '../engine/index.js';
import { readSnapshotFile, writeSnapshotFile } from './checkpoint-file.js';
import { checkpointKey } from './artifacts.js';

const UPLOAD_CHUNK_BYTES = 16 * 2 ** 20;

export interface CheckpointDeps {
  s3: S3Client;
  bucket: string;
  runId: string;
  /** one line per event, for the job's log and the worker's output */
  log(line: string): void;
  /** after each checkpoint reached the store (the run's stored size is recorded there); must not throw */
  stored?(): Promise<void>;
}

export interface StoredCheckpoint {
  snapshot: Snapshot;
  savedAt: Date | null;
  bytes: number;
}

export interface RunCheckpoints {
  /** the engine's `checkpoint.save`: synchronous (the engine's state is still only during the call) */
  save(s: Snapshot): void;
  /** the last checkpoint in the object store, or null when there is none or it cannot be read (then it is deleted) */
  load(): Promise<StoredCheckpoint | null>;
  /** wait for the upload in flight, if any */
  flush(): Promise<void>;
  /** delete the stored checkpoint (arrays stored, run failed or cancelled) */
  remove(): Promise<void>;
  /** checkpoints that reached the object store */
  readonly uploaded: number;
  /** local scratch files */
  dispose(): void;
}

/** How the logs name a snapshot: its kind, and the level on the fast path (a line's own path writes the tiled kind). */
export function describeSnapshot(s: Snapshot): string {
  return s.kind === 'seeded' ? `level ${s.level}, fast path` : 'tiled state, plain engine or line path';
}

/**
 * A run's checkpoints in the object store, under the key of `checkpointKey` (artifacts.ts).
 * The engine calls `save` synchronously; the snapshot goes to a local scratch file at once
 * (checkpoint-file.ts: temp file, fsync, rename; bytes of engine/snapshot.ts), then streams to the store in the background,
 * so the grid is never copied in memory. A PutObject replaces the object whole (atomic per key),
 * so the store holds the previous checkpoint or the new one, never part of one. A snapshot taken
 * while the previous one is still uploading is skipped: the next one comes a period later.
 * A checkpoint is insurance: a failed upload is logged and the run goes on.
 */
export function runCheckpoints(deps: CheckpointDeps): RunCheckpoints {
  const Key = checkpointKey(deps.runId);
  // TMPDIR decides where: under systemd's PrivateTmp it is the unit's own /tmp
  const dir = mkdtempSync(join(tmpdir(), `tw-ckpt-${deps.runId.slice(0, 8)}-`));
  const file = join(dir, 'state.twckpt');
  let inFlight: Promise<void> | null = null;
  let uploaded = 0;
  // whether the store may hold a checkpoint of this run (one was found or one was sent): else nothing to delete
  let touched = false;

  const upload = async (what: string) => {
    const size = statSync(file).size;
    const t0 = performance.now();
    // large chunks: the engine gives the event loop a turn only every 0.1 s, and a stream moves one
    // chunk per turn, so 64 KiB chunks made an 8 MiB checkpoint take 12 s to leave (measured)
    const Body = createReadStream(file, { highWaterMark: UPLOAD_CHUNK_BYTES });
    await deps.s3.send(new PutObjectCommand({ Bucket: deps.bucket, Key, Body, ContentLength: size, ContentType: 'application/octet-stream' }));
    uploaded++;
    deps.log(`checkpoint ${uploaded} stored (${what}, ${(size / 2 ** 20).toFixed(1)} MiB in ${((performance.now() - t0) / 1000).toFixed(1)} s)`);
    await deps.stored?.();
  };

  return {
    save(s) {
      if (inFlight) return;
      writeSnapshotFile(file, s);
      touched = true;
      inFlight = upload(describeSnapshot(s))
        .catch((err: Error) => deps.log(`checkpoint upload failed (the run goes on): ${err.message}`))
        .finally(() => (inFlight = null));
    },
    async load() {
      let out;
      try {
        out = await deps.s3.send(new GetObjectCommand({ Bucket: deps.bucket, Key }));
      } catch (err) {
        if (err instanceof NoSuchKey || (err as Error).name === 'NoSuchKey') return null;
        throw err;
      }
      const body = out.Body instanceof Readable ? out.Body : Readable.fromWeb(out.Body!.transformToWebStream() as Parameters<typeof Readable.fromWeb>[0]);
      touched = true;
      await pipeline(body, createWriteStream(file));
      try {
        return { snapshot: readSnapshotFile(file), savedAt: out.LastModified ?? null, bytes: statSync(file).size };
      } catch (err) {
        // a damaged object (it cannot be half-written, but a foreign one could sit there): start over
        deps.log(`the stored checkpoint cannot be read (${(err as Error).message}); starting from the beginning`);
        await this.remove();
        return null;
      }
    },
    async flush() {
      await inFlight;
    },
    async remove() {
      await inFlight;
      if (!touched) return;
      await deps.s3.send(new DeleteObjectCommand({ Bucket: deps.bucket, Key }));
    },
    get uploaded() {
      return uploaded;
    },
    dispose() {
      rmSync(dir, { recursive: true, force: true });
    },
  };
}
