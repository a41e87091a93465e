import { z } from 'zod';
import { periodicGraphSchema, type LatticeChoice } from '../../../shared/run-spec.js';
import { LATTICE_NAMES, latticePreset } from '../engine/index.js';
import { CliInputError } from './errors.js';
import { readInputFile } from './read-input.js';
import { firstIssue } from './zod-message.js';

/** A periodic lattice file: the graph itself, optionally with a display name beside it. */
const periodicFileSchema = periodicGraphSchema.extend({ name: z.string().max(120).optional() });

/** Array dimension of the lattice: 1 for line, 3 for cubic, 2 for the rest (periodic graphs live on Z^2). */
export function latticeDimension(lattice: LatticeChoice): number {
  return 'periodic' in lattice ? 2 : latticePreset(lattice.preset).dim;
}

/** `square`, `cubic`, … or `periodic:FILE.json`. */
export async function resolveLatticeArg(raw: string): Promise<LatticeChoice> {
  if (raw.startsWith('periodic:')) {
    const path = raw.slice('periodic:'.length);
    if (path === '') throw new CliInputError('--lattice periodic: needs a file, e.g. periodic:cell.json');
    const text = new TextDecoder().decode(await readInputFile(path, 'periodic lattice'));
    let json: unknown;
    try {
      json = JSON.parse(text);
    } catch (error) {
      throw new CliInputError(`periodic lattice ${path} is not valid JSON: ${(error as Error).message.split('\n')[0]}`);
    }
    const parsed = periodicFileSchema.safeParse(json);
    if (!parsed.success) throw new CliInputError(`periodic lattice ${path}: ${firstIssue(parsed.error)}`);
    const { name, ...periodic } = parsed.data;
    const [px, py] = periodic.period;
    if (periodic.neighbours.length !== py || periodic.neighbours.some((row) => row.length !== px)) {
      throw new CliInputError(`periodic lattice ${path}: neighbours must have ${py} rows of ${px} residue classes to match period [${px}, ${py}]`);
    }
    return name === undefined ? { periodic } : { periodic, name };
  }
  if (!LATTICE_NAMES.includes(raw)) {
    throw new CliInputError(`unknown lattice '${raw}'; choose ${LATTICE_NAMES.join(', ')} or periodic:FILE.json`);
  }
  return { preset: raw };
}
