import { backgroundSchema, type Background, type RunSpec } from '../../../shared/run-spec.js';
import { backgroundField, type BackgroundField, type UploadedArray } from './background.js';
import { EngineInputError } from './errors.js';
import { refuseExplosive } from './explosion.js';
import { latticePreset, periodicLattice, type LatticeGraph } from './lattice.js';

/** A validated run: everything the kernels need, nothing they must re-check. */
export interface Problem {
  spec: RunSpec;
  lattice: LatticeGraph;
  background: BackgroundField;
  /** the origin source first (possibly with 0 grains), then the extra sources; coordinates (x, y, z) */
  sources: { at: [number, number, number]; chips: number }[];
  /** all grains added: exact, may exceed 2^53 with several sources */
  grainsIn: bigint;
}

export interface Uploads {
  background?: UploadedArray;
}

function checkChips(v: unknown, what: string): number {
  if (v === undefined || v === null) throw new EngineInputError(`${what} is missing`);
  if (typeof v !== 'number' || Number.isNaN(v)) throw new EngineInputError(`${what} must be a number, got ${JSON.stringify(v)}`);
  if (!Number.isFinite(v) || v > Number.MAX_SAFE_INTEGER) throw new EngineInputError(`${what} must be at most 2^53 - 1 = ${Number.MAX_SAFE_INTEGER}, got ${v}`);
  if (v < 0) throw new EngineInputError(`${what} must not be negative, got ${v}`);
  if (!Number.isInteger(v)) throw new EngineInputError(`${what} must be a whole number of grains, got ${v}`);
  return v;
}

function resolveLattice(l: unknown): LatticeGraph {
  if (typeof l !== 'object' || l === null) throw new EngineInputError('lattice is missing: give {"preset": NAME} or {"periodic": {...}}');
  const o = l as Record<string, unknown>;
  if (typeof o.preset === 'string') return latticePreset(o.preset);
  if (o.periodic !== undefined) return periodicLattice(o.periodic, typeof o.name === 'string' ? o.name : 'periodic');
  throw new EngineInputError('lattice must be {"preset": NAME} or {"periodic": {"period": [px, py], "neighbours": [...]}}');
}

/**
 * Validates a run specification (plain JSON, possibly not yet parsed by zod) and builds the problem.
 * @throws EngineInputError when the specification is wrong; ExplosionError when a theorem says the run
 *   can never stabilize (the message names the reason and cites the result).
 */
export function resolveProblem(spec: RunSpec, uploads?: Uploads): Problem {
  if (typeof spec !== 'object' || spec === null) throw new EngineInputError('the run specification must be an object');
  const lattice = resolveLattice(spec.lattice);
  const chips = checkChips(spec.chips, 'chips (n)');
  const rawBg = spec.background ?? { kind: 'constant', height: 0 };
  const parsed = backgroundSchema.safeParse(rawBg);
  if (!parsed.success) {
    const issue = parsed.error.issues[0]!;
    throw new EngineInputError(`background${issue.path.length ? '.' + issue.path.join('.') : ''}: ${issue.message}`);
  }
  const bgSpec: Background = parsed.data;
  const background = backgroundField(bgSpec, lattice.dim, uploads?.background);

  const sources: Problem['sources'] = [{ at: [0, 0, 0], chips }];
  const extra = spec.sources ?? [];
  if (!Array.isArray(extra)) throw new EngineInputError('sources must be a list of {"at": [x, y], "chips": N}');
  if (extra.length > 64) throw new EngineInputError('at most 64 extra sources are allowed');
  extra.forEach((s, i) => {
    const at = (s as { at?: unknown })?.at;
    if (!Array.isArray(at) || at.length !== lattice.dim || !at.every((c) => Number.isSafeInteger(c) && Math.abs(c) < 2 ** 30))
      throw new EngineInputError(`sources[${i}].at must be ${lattice.dim} integer coordinate(s) for the ${lattice.name} lattice, got ${JSON.stringify(at)}`);
    const n = checkChips((s as { chips?: unknown }).chips, `sources[${i}].chips`);
    const p: [number, number, number] = [at[0]!, at[1] ?? 0, at[2] ?? 0];
    const same = sources.find((q) => q.at[0] === p[0] && q.at[1] === p[1] && q.at[2] === p[2]);
    if (same) {
      // merging keeps one reserve per site; counts stay exact below 2^53 per site
      if (same.chips + n > Number.MAX_SAFE_INTEGER) throw new EngineInputError(`sources at [${at.join(', ')}] add up to more than 2^53 - 1 grains on one site`);
      same.chips += n;
    } else sources.push({ at: p, chips: n });
  });
  const grainsIn = sources.reduce((a, s) => a + BigInt(s.chips), 0n);
  const problem: Problem = { spec: { ...spec, background: bgSpec, sources: extra }, lattice, background, sources, grainsIn };
  refuseExplosive(problem, bgSpec);
  return problem;
}
