import { closeSync, fsyncSync, openSync, readFileSync, renameSync, writeSync } from 'node:fs';
import type { ScaleGrid } from './grid.js';
import type { CoarseLevel } from './seed.js';

/**
 * A resumable state of the scaled path: the level being relaxed with its grid (a legal intermediate
 * state: every toppling so far was legal or from a seed), and the coarser level it was seeded from.
 * Resuming relaxes the same state further, so it ends on the same unique result (abelian property).
 */
export interface Snapshot {
  format: 1;
  specKey: string;
  level: number;
  grid: ScaleGrid;
  coarse: CoarseLevel | null;
  repairRounds: number;
  prevEvents: number;
}

const MAGIC = 'TWCKPT01';

/**
 * Writes a snapshot atomically: a temporary file, fsync, then rename, so a kill at any moment leaves
 * either the previous checkpoint or the new one, never half of one. Layout: magic, header length
 * (uint32 LE), JSON header, then the arrays' raw bytes in header order.
 */
export function writeCheckpoint(path: string, s: Snapshot): void {
  const arrays: ArrayBufferView[] = [s.grid.h, s.grid.od];
  const { h: _h, od: _od, ...gridMeta } = s.grid;
  let coarseMeta: Omit<CoarseLevel, 'u' | 'err'> & { hasErr: boolean } | null = null;
  if (s.coarse) {
    const { u, err, ...rest } = s.coarse;
    coarseMeta = { ...rest, hasErr: err !== null };
    arrays.push(u);
    if (err) arrays.push(err);
  }
  const header = Buffer.from(JSON.stringify({ format: s.format, specKey: s.specKey, level: s.level, repairRounds: s.repairRounds, prevEvents: s.prevEvents, grid: gridMeta, coarse: coarseMeta }));
  const tmp = `${path}.tmp-${process.pid}`;
  const fd = openSync(tmp, 'w');
  try {
    const len = Buffer.alloc(4);
    len.writeUInt32LE(header.length);
    writeSync(fd, Buffer.from(MAGIC));
    writeSync(fd, len);
    writeSync(fd, header);
    for (const a of arrays) writeSync(fd, new Uint8Array(a.buffer, a.byteOffset, a.byteLength));
    fsyncSync(fd);
  } finally {
    closeSync(fd);
  }
  renameSync(tmp, path);
}

/** Reads a snapshot written by writeCheckpoint; throws a one-line error on a damaged file. */
export function readCheckpoint(path: string): Snapshot {
  const buf = readFileSync(path);
  if (buf.length < 12 || buf.subarray(0, 8).toString() !== MAGIC) throw new Error(`${path} is not a Toppleworks checkpoint`);
  const hl = buf.readUInt32LE(8);
  const head = JSON.parse(buf.subarray(12, 12 + hl).toString());
  let off = 12 + hl;
  const take = <T>(ctor: { new (b: ArrayBuffer): T; BYTES_PER_ELEMENT: number }, count: number): T => {
    const bytes = count * ctor.BYTES_PER_ELEMENT;
    if (off + bytes > buf.length) throw new Error(`${path} is truncated`);
    const copy = new ArrayBuffer(bytes);
    new Uint8Array(copy).set(buf.subarray(off, off + bytes));
    off += bytes;
    return new ctor(copy);
  };
  const cells = head.grid.W * head.grid.H;
  const grid: ScaleGrid = { ...head.grid, h: take(Int32Array, cells), od: take(Float64Array, cells) };
  let coarse: CoarseLevel | null = null;
  if (head.coarse) {
    const { hasErr, ...rest } = head.coarse;
    const cc = rest.W * rest.H;
    const u = take(Float64Array, cc);
    coarse = { ...rest, u, err: hasErr ? take(Float32Array, cc) : null };
  }
  if (off !== buf.length) throw new Error(`${path} has trailing bytes`);
  return { format: 1, specKey: head.specKey, level: head.level, grid, coarse, repairRounds: head.repairRounds, prevEvents: head.prevEvents };
}
