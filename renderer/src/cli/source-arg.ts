import type { Source } from '../../../shared/run-spec.js';
import { CliInputError } from './errors.js';
import { parseCount, parseInteger } from './numbers.js';

/** `X,Y:N` (or `X:N`, `X,Y,Z:N`) → a point source; the coordinate count must match the lattice. */
export function parseSourceArg(raw: string, dimension: number): Source {
  const m = /^([^:]+):([^:]+)$/.exec(raw.trim());
  if (!m) throw new CliInputError(`--source must look like X,Y:N, got '${raw}'`);
  const coords = m[1]!.split(',').map((c) => parseInteger(`--source coordinate`, c));
  if (coords.length !== dimension) {
    throw new CliInputError(`--source ${raw} has ${coords.length} coordinate(s); this lattice needs ${dimension}`);
  }
  // The spec lists coordinates as (x, y, z); the engine maps them onto array axes.
  return { at: coords, chips: parseCount('--source grains', m[2]!) };
}
