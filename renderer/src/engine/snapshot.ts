/**
 * Snapshots of a run in progress, for both paths of `stabilize()`: pure data (typed arrays and plain
 * fields), encoded to and decoded from bytes here; where the bytes go (a file, the object store) is
 * the caller's business. A snapshot is a legal intermediate state, so relaxing it further ends on the
 * same unique final state and odometer (abelian property).
 *
 * Byte layout (format 2): the 8 ASCII bytes `TWCKPT02`, the header length (uint32 LE), a JSON header
 * that starts with the kind (`{"kind":"seeded",…` for the fast path, `{"kind":"tiled",…` for the plain
 * tiled engine), then each array's raw bytes in header order, each with its length and CRC-32 in the
 * header.
 */
import { createHash } from 'node:crypto';
import { crc32 } from 'node:zlib';
import { z } from 'zod';
import type { ScaleGrid } from '../scale/grid.js';
import type { CoarseLevel } from '../scale/seed.js';
import type { Problem } from './problem.js';
import { ENGINE_VERSION } from './version.js';

export const SNAPSHOT_FORMAT = 2;
const MAGIC = 'TWCKPT02';

interface SnapshotBase {
  format: typeof SNAPSHOT_FORMAT;
  /** ENGINE_VERSION of the engine that wrote it: another engine's snapshot is refused */
  engineVersion: string;
  /** snapshotKey of the problem: a snapshot of another specification is refused */
  specKey: string;
}

/** The seeded fast path (renderer/src/scale/): the level being relaxed, its grid and the coarser level. */
export interface SeededSnapshot extends SnapshotBase {
  kind: 'seeded';
  level: number;
  grid: ScaleGrid;
  coarse: CoarseLevel | null;
  repairRounds: number;
  prevEvents: number;
  /** toppling events of this level so far (progress carries on from them after a resume) */
  levelEvents?: number;
  /** the grid covers the fundamental domain of this mirror symmetry only (scale/symmetry.ts) */
  fold?: 'quadrant' | 'octant' | 'wedge' | 'half';
}

/** The plain tiled engine: its working box and the grains still waiting in the sources' reserves. */
export interface TiledSnapshot extends SnapshotBase {
  kind: 'tiled';
  /** tiles per axis x, y, z (tile sides: tileDims of the lattice's dimension) */
  tiles: [number, number, number];
  /** array index of the lattice origin, x, y, z */
  origin: [number, number, number];
  h: Int32Array;
  od: Float64Array;
  /** reserves as (x, y, z, grains left) quadruples, lattice coordinates */
  reserves: Float64Array;
  /** grains fed into the box so far, and in the round being relaxed (progress) */
  injected: number;
  roundFed: number;
}

export type Snapshot = SeededSnapshot | TiledSnapshot;

/** A snapshot that cannot be used for this run: damaged, of another format, engine or specification. */
export class SnapshotError extends Error {
  override name = 'SnapshotError' as const;
}

export function isSnapshotError(err: unknown): err is SnapshotError {
  return typeof err === 'object' && err !== null && (err as { name?: unknown }).name === 'SnapshotError';
}

/** JSON with sorted keys: a specification read back from PostgreSQL's jsonb may list its keys in another order. */
function canonical(v: unknown): string {
  if (Array.isArray(v)) return `[${v.map(canonical).join(',')}]`;
  if (v && typeof v === 'object')
    return `{${Object.keys(v)
      .filter((k) => (v as Record<string, unknown>)[k] !== undefined)
      .sort()
      .map((k) => `${JSON.stringify(k)}:${canonical((v as Record<string, unknown>)[k])}`)
      .join(',')}}`;
  return JSON.stringify(v);
}

/** What identifies a run's outcome: lattice, grains, background (an upload by its sha256) and sources. */
export function snapshotKey(p: Problem): string {
  const { lattice, chips, background, sources } = p.spec;
  return createHash('sha256').update(canonical({ lattice, chips, background, sources: sources ?? [] })).digest('hex');
}

/** The fields every snapshot of this problem carries. */
export function snapshotBase(p: Problem): SnapshotBase {
  return { format: SNAPSHOT_FORMAT, engineVersion: ENGINE_VERSION, specKey: snapshotKey(p) };
}

type ArrayName = 'h' | 'od' | 'reserves' | 'coarseU' | 'coarseErr';
type AnyArray = Int32Array | Uint32Array | Float64Array | Float32Array;
const CTORS = { int32: Int32Array, uint32: Uint32Array, float64: Float64Array, float32: Float32Array } as const;
type TypeName = keyof typeof CTORS;
const typeOf = (a: AnyArray): TypeName => (a instanceof Int32Array ? 'int32' : a instanceof Uint32Array ? 'uint32' : a instanceof Float64Array ? 'float64' : 'float32');
const bytesOf = (a: AnyArray) => new Uint8Array(a.buffer, a.byteOffset, a.byteLength);

const int = z.number().int();
const box = z.strictObject({ x0: int, x1: int, y0: int, y1: int });
const headerSchema = z.discriminatedUnion('kind', [
  z.strictObject({
    kind: z.literal('seeded'),
    format: z.literal(SNAPSHOT_FORMAT),
    engineVersion: z.string(),
    specKey: z.string(),
    level: int.min(0),
    repairRounds: int.min(0),
    prevEvents: z.number().min(0),
    levelEvents: z.number().min(0).optional(),
    fold: z.enum(['quadrant', 'octant', 'wedge', 'half']).optional(),
    grid: z.strictObject({ W: int.min(1), H: int.min(1), ox: int, oy: int, guard: int.min(1) }),
    coarse: z.strictObject({ chips: int.min(0), W: int.min(1), H: int.min(1), ox: int, oy: int, gain: z.number().nullable(), toppled: box }).nullable(),
    arrays: z.array(z.strictObject({ name: z.enum(['h', 'od', 'coarseU', 'coarseErr']), type: z.enum(['int32', 'uint32', 'float64', 'float32']), length: int.min(0), crc32: int })),
  }),
  z.strictObject({
    kind: z.literal('tiled'),
    format: z.literal(SNAPSHOT_FORMAT),
    engineVersion: z.string(),
    specKey: z.string(),
    tiles: z.tuple([int.min(1), int.min(1), int.min(1)]),
    origin: z.tuple([int, int, int]),
    injected: z.number().min(0),
    roundFed: z.number().min(0),
    arrays: z.array(z.strictObject({ name: z.enum(['h', 'od', 'reserves']), type: z.enum(['int32', 'float64', 'float32']), length: int.min(0), crc32: int })),
  }),
]);

/**
 * The bytes of a snapshot, as a list of chunks to write in order: the header, then views of the
 * snapshot's own arrays (nothing large is copied). Call while the state is still (the engine calls
 * `checkpoint.save` synchronously for that reason).
 */
export function encodeSnapshot(s: Snapshot): Uint8Array[] {
  let meta: Record<string, unknown>;
  let arrays: [ArrayName, AnyArray][];
  if (s.kind === 'seeded') {
    const { h, od, ...grid } = s.grid;
    let coarse = null;
    arrays = [['h', h], ['od', od]];
    if (s.coarse) {
      const { u, err, ...rest } = s.coarse;
      coarse = rest;
      arrays.push(['coarseU', u]);
      if (err) arrays.push(['coarseErr', err]);
    }
    meta = { level: s.level, repairRounds: s.repairRounds, prevEvents: s.prevEvents, ...(s.levelEvents ? { levelEvents: s.levelEvents } : {}), grid, coarse, ...(s.fold ? { fold: s.fold } : {}) };
  } else {
    arrays = [['h', s.h], ['od', s.od], ['reserves', s.reserves]];
    meta = { tiles: s.tiles, origin: s.origin, injected: s.injected, roundFed: s.roundFed };
  }
  const header = {
    kind: s.kind, format: s.format, engineVersion: s.engineVersion, specKey: s.specKey, ...meta,
    arrays: arrays.map(([name, a]) => ({ name, type: typeOf(a), length: a.length, crc32: crc32(bytesOf(a)) })),
  };
  const head = Buffer.from(JSON.stringify(header));
  const len = Buffer.alloc(4);
  len.writeUInt32LE(head.length);
  return [Buffer.from(MAGIC, 'latin1'), len, head, ...arrays.map(([, a]) => bytesOf(a))];
}

/** Total bytes of encodeSnapshot's chunks. */
export const snapshotBytes = (chunks: Uint8Array[]) => chunks.reduce((a, c) => a + c.byteLength, 0);

/**
 * Reads bytes written by encodeSnapshot. The arrays are copied onto SharedArrayBuffers (both paths
 * relax them on several threads). Checks the file alone (magic, format, header, lengths, checksums);
 * whether it fits a run is checkSnapshot's part.
 * @throws SnapshotError with one line saying what is wrong.
 */
export function decodeSnapshot(bytes: Uint8Array): Snapshot {
  const buf = Buffer.from(bytes.buffer, bytes.byteOffset, bytes.byteLength);
  const magic = buf.subarray(0, 8).toString('latin1');
  if (buf.length < 12 || !magic.startsWith('TWCKPT')) throw new SnapshotError('not a Toppleworks checkpoint');
  if (magic !== MAGIC) throw new SnapshotError(`the checkpoint has format ${magic.slice(6)}; this engine reads format 0${SNAPSHOT_FORMAT} only`);
  const hl = buf.readUInt32LE(8);
  if (12 + hl > buf.length) throw new SnapshotError('the checkpoint is truncated (in its header)');
  let raw: unknown;
  try {
    raw = JSON.parse(buf.subarray(12, 12 + hl).toString('utf8'));
  } catch {
    throw new SnapshotError('the checkpoint header is damaged (not JSON)');
  }
  const parsed = headerSchema.safeParse(raw);
  if (!parsed.success) {
    const issue = parsed.error.issues[0]!;
    throw new SnapshotError(`the checkpoint header is damaged (${issue.path.join('.') || 'header'}: ${issue.message})`);
  }
  const head = parsed.data;
  let off = 12 + hl;
  const got = new Map<string, AnyArray>();
  for (const a of head.arrays) {
    const ctor = CTORS[a.type];
    const n = a.length * ctor.BYTES_PER_ELEMENT;
    if (off + n > buf.length) throw new SnapshotError(`the checkpoint is truncated (in array ${a.name})`);
    // SharedArrayBuffers: both paths hand the arrays to worker threads without a copy
    const arr = new ctor(new SharedArrayBuffer(n) as unknown as ArrayBuffer);
    const view = new Uint8Array(arr.buffer);
    view.set(buf.subarray(off, off + n));
    if (crc32(view) !== a.crc32) throw new SnapshotError(`the checkpoint is damaged (checksum of array ${a.name} does not match)`);
    if (got.has(a.name)) throw new SnapshotError(`the checkpoint header lists array ${a.name} twice`);
    got.set(a.name, arr);
    off += n;
  }
  if (off !== buf.length) throw new SnapshotError('the checkpoint has trailing bytes');
  const need = <T extends AnyArray>(name: ArrayName, ctor: { new (n: number): T }, length: number): T => {
    const a = got.get(name);
    if (!a || !(a instanceof ctor) || a.length !== length) throw new SnapshotError(`the checkpoint's array ${name} is missing or has the wrong type or length`);
    return a as T;
  };
  // the fast path's odometers are uint32 or float64 (scale/grid.ts)
  const needOdometer = (name: ArrayName, length: number) => (got.get(name) instanceof Uint32Array ? need(name, Uint32Array, length) : need(name, Float64Array, length));
  if (head.kind === 'seeded') {
    const cells = head.grid.W * head.grid.H;
    const grid: ScaleGrid = { ...head.grid, h: need('h', Int32Array, cells), od: needOdometer('od', cells) };
    let coarse: CoarseLevel | null = null;
    if (head.coarse) {
      const cc = head.coarse.W * head.coarse.H;
      coarse = { ...head.coarse, u: needOdometer('coarseU', cc), err: got.has('coarseErr') ? need('coarseErr', Float32Array, cc) : null };
    }
    return { kind: 'seeded', format: SNAPSHOT_FORMAT, engineVersion: head.engineVersion, specKey: head.specKey, level: head.level, grid, coarse, repairRounds: head.repairRounds, prevEvents: head.prevEvents, ...(head.levelEvents ? { levelEvents: head.levelEvents } : {}), ...(head.fold ? { fold: head.fold } : {}) };
  }
  const h = got.get('h');
  if (!(h instanceof Int32Array)) throw new SnapshotError("the checkpoint's array h is missing or has the wrong type");
  const r = got.get('reserves');
  if (!(r instanceof Float64Array) || r.length % 4 !== 0) throw new SnapshotError("the checkpoint's reserves are missing or malformed");
  return {
    kind: 'tiled', format: SNAPSHOT_FORMAT, engineVersion: head.engineVersion, specKey: head.specKey,
    tiles: head.tiles, origin: head.origin, h, od: need('od', Float64Array, h.length), reserves: r, injected: head.injected, roundFed: head.roundFed,
  };
}

/**
 * Whether a snapshot may resume this problem: same engine version, same specification.
 * @throws SnapshotError naming the difference.
 */
export function checkSnapshot(p: Problem, s: Snapshot): void {
  if (s.format !== SNAPSHOT_FORMAT) throw new SnapshotError(`the checkpoint has format ${s.format}; this engine reads format ${SNAPSHOT_FORMAT}`);
  if (s.engineVersion !== ENGINE_VERSION) throw new SnapshotError(`the checkpoint was written by engine ${s.engineVersion}; this is engine ${ENGINE_VERSION}`);
  if (s.specKey !== snapshotKey(p)) throw new SnapshotError('the checkpoint belongs to a different run specification');
}
