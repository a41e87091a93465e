import { mkdtemp, readdir } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import type { RenderInput } from '../../renderer/src/render/index.js';
import type { Rgba } from '../../shared/palettes.js';

/** A RenderInput from plain rows of heights; toppled and odometer default to "nothing toppled". */
export function inputFromRows(rows: number[][], odometerRows?: number[][]): RenderInput {
  const h = rows.length;
  const w = rows[0].length;
  const heights = Int32Array.from(rows.flat());
  const odometer = Float64Array.from(odometerRows ? odometerRows.flat() : new Array(w * h).fill(0));
  const toppled = Uint8Array.from(odometer, (u) => (u > 0 ? 1 : 0));
  return { shape: [h, w], origin: [h >> 1, w >> 1], heights, odometer, toppled };
}

/** Deterministic pseudo-random plane (a small LCG, so failures reproduce). */
export function randomInput(width: number, height: number, maxHeight = 3, seed = 1): RenderInput {
  let s = seed >>> 0;
  const next = () => ((s = (Math.imul(s, 1664525) + 1013904223) >>> 0) / 2 ** 32);
  const n = width * height;
  const heights = new Int32Array(n);
  const odometer = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    heights[i] = Math.floor(next() * (maxHeight + 1));
    odometer[i] = next() < 0.3 ? 0 : Math.floor(next() ** 3 * 5000);
  }
  const toppled = Uint8Array.from(odometer, (u) => (u > 0 ? 1 : 0));
  return { shape: [height, width], origin: [height >> 1, width >> 1], heights, odometer, toppled };
}

export async function tempDir(prefix: string): Promise<string> {
  return mkdtemp(join(tmpdir(), `tw-render-${prefix}-`));
}

export async function listFiles(dir: string, base = ''): Promise<string[]> {
  const out: string[] = [];
  for (const e of await readdir(join(dir, base), { withFileTypes: true })) {
    const rel = base ? `${base}/${e.name}` : e.name;
    if (e.isDirectory()) out.push(...(await listFiles(dir, rel)));
    else out.push(rel);
  }
  return out.sort();
}

/** Compare a decoded RGBA pixel with an expected colour; transparent pixels compare by alpha only. */
export function sameColour(data: Buffer, pixel: number, c: Rgba): boolean {
  const o = pixel * 4;
  if (c[3] === 0) return data[o + 3] === 0;
  return data[o] === c[0] && data[o + 1] === c[1] && data[o + 2] === c[2] && data[o + 3] === c[3];
}
