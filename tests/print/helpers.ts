import { mkdtemp, readdir } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import sharp from 'sharp';
import { resolveProblem, stabilizeReference, type Outcome } from '../../renderer/src/engine/index.js';

export function tempDir(name: string): Promise<string> {
  return mkdtemp(join(tmpdir(), `tw-print-${name}-`));
}

export async function listFiles(dir: string): Promise<string[]> {
  return (await readdir(dir)).sort();
}

const piles = new Map<number, Outcome>();

/** A real engine result: n grains at the origin of Z², on an empty background. */
export function squarePile(chips: number): Outcome {
  let o = piles.get(chips);
  if (!o) {
    o = stabilizeReference(resolveProblem({ lattice: { preset: 'square' }, chips, sources: [], background: { kind: 'constant', height: 0 } } as Parameters<typeof resolveProblem>[0]));
    piles.set(chips, o);
  }
  return o;
}

/** Decode any image sharp reads to packed RGB bytes. */
export async function decodeRgb(path: string): Promise<{ data: Buffer; width: number; height: number }> {
  const { data, info } = await sharp(path, { limitInputPixels: false }).removeAlpha().toColourspace('srgb').raw().toBuffer({ resolveWithObject: true });
  return { data, width: info.width, height: info.height };
}

export interface TiffTag {
  type: number;
  count: number;
  /** SHORT/LONG values, or [numerator, denominator] pairs flattened for RATIONAL */
  values: number[];
}

/**
 * The tags of a TIFF's first IFD, read from the bytes (TIFF 6.0, section 2: 8-byte header with
 * byte order "II"/"MM" and 42, IFD of 12-byte entries: tag, type, count, value or offset).
 */
export function tiffTags(buf: Buffer): Map<number, TiffTag> {
  const le = buf.toString('latin1', 0, 2) === 'II';
  const u16 = (o: number) => (le ? buf.readUInt16LE(o) : buf.readUInt16BE(o));
  const u32 = (o: number) => (le ? buf.readUInt32LE(o) : buf.readUInt32BE(o));
  if (u16(2) !== 42) throw new Error('not a TIFF (magic 42 missing)');
  const ifd = u32(4);
  const n = u16(ifd);
  const sizes: Record<number, number> = { 1: 1, 2: 1, 3: 2, 4: 4, 5: 8 };
  const tags = new Map<number, TiffTag>();
  for (let i = 0; i < n; i++) {
    const e = ifd + 2 + i * 12;
    const tag = u16(e);
    const type = u16(e + 2);
    const count = u32(e + 4);
    const size = (sizes[type] ?? 1) * count;
    const at = size <= 4 ? e + 8 : u32(e + 8);
    const values: number[] = [];
    for (let k = 0; k < Math.min(count, 16); k++) {
      if (type === 3) values.push(u16(at + 2 * k));
      else if (type === 4) values.push(u32(at + 4 * k));
      else if (type === 5) values.push(u32(at + 8 * k), u32(at + 8 * k + 4));
      else if (type === 1) values.push(buf[at + k]);
    }
    tags.set(tag, { type, count, values });
  }
  return tags;
}
