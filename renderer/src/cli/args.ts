import { parseArgs } from 'node:util';
import { LATTICE_NAMES } from '../engine/lattice.js';
import { CliInputError } from './errors.js';
import { parseCount } from './numbers.js';

/** What the command line asked for, before any file is read. */
export interface CliOptions {
  help: boolean;
  lattice: string;
  chips: number;
  sources: string[];
  background: string | undefined;
  heights: string | undefined;
  odometer: string | undefined;
  odometerDtype: 'int64' | 'float64';
  json: boolean;
  progress: boolean;
  threads: number | undefined;
  maxSites: number | undefined;
  /** snapshot file: resumed from when it exists, rewritten every `checkpointEvery` seconds */
  checkpoint: string | undefined;
  checkpointEvery: number;
}

/** Ten minutes: a kill loses at most that much work, and a 10^9 run writes a few dozen snapshots. */
export const DEFAULT_CHECKPOINT_SECONDS = 600;

const OPTIONS = {
  help: { type: 'boolean', short: 'h' },
  lattice: { type: 'string' },
  chips: { type: 'string' },
  source: { type: 'string', multiple: true },
  background: { type: 'string' },
  heights: { type: 'string' },
  odometer: { type: 'string' },
  'odometer-dtype': { type: 'string' },
  json: { type: 'boolean' },
  progress: { type: 'boolean' },
  threads: { type: 'string' },
  'max-sites': { type: 'string' },
  checkpoint: { type: 'string' },
  'checkpoint-every': { type: 'string' },
} as const;

const VALUE_FLAGS = new Set(
  Object.entries(OPTIONS)
    .filter(([, o]) => o.type === 'string')
    .map(([k]) => `--${k}`),
);

export const USAGE = `Usage: npm run -s stabilize -- --lattice NAME|periodic:FILE.json --chips N [options]

Stabilize N grains at the origin of a lattice (plus optional extra sources) on a background,
exactly, and write the final heights and the odometer as NumPy .npy arrays.

  --lattice NAME            ${LATTICE_NAMES.join(' | ')}
  --lattice periodic:F.json a periodic graph on Z^2: {"period":[px,py],"neighbours":[[[[dx,dy],...]]], "name"?}
  --chips N                 grains at the origin (0 .. 2^53−1; 1e6 and 1_000_000 are accepted;
                            0 only when --source adds grains: a run needs at least one in all)
  --source X,Y:N            N more grains at (X,Y) (X for line, X,Y,Z for cubic); repeatable
  --background B            constant:H | checkerboard:A,B | motif:F.npy | random:SEED:P0,P1,...
                            | annuli:A,B | file:F.npy | file:F.png           (default constant:0)
                            file:F.png must be 8-bit grayscale; its distinct grey levels, sorted
                            ascending, become heights 0,1,2,… . Uploaded arrays are centred: element
                            floor(size/2) of each axis sits on the origin.
  --heights OUT.npy         write final heights (uint8 if all fit, else int32) and OUT.json (the
                            run specification, engine version, statistics, sha256 of the array bytes)
  --odometer OUT.npy        write the odometer (topplings per site)
  --odometer-dtype T        int64 (default) | float64
  --threads K               worker threads for the engine
  --max-sites M             refuse runs whose array would exceed M sites
  --checkpoint FILE         save the run's state to FILE while it computes and, when FILE exists,
                            continue from it (same command, same engine version); FILE is removed
                            once the outputs are written
  --checkpoint-every S      seconds between saves (default ${DEFAULT_CHECKPOINT_SECONDS})
  --progress                print progress to stderr
  --json                    print exactly one JSON object to stdout
  -h, --help                this text

Arrays are row-major with x as the last axis: (W) for line, (H, W) for 2-D, (D, H, W) for cubic,
and cover every toppled site. Exit codes: 0 done, 2 bad input, 3 the engine refused (explosive
background, limit reached), 130 interrupted. No output file is written unless the whole run succeeds.`;

/**
 * Negative numbers after a value flag ("--chips -5") are values, not flags: join them as
 * "--chips=-5" so the user hears "must be at least 0" instead of an argument-parser riddle.
 */
function joinNegativeValues(argv: readonly string[]): string[] {
  const out: string[] = [];
  for (let k = 0; k < argv.length; k++) {
    const arg = argv[k]!;
    const next = argv[k + 1];
    if (VALUE_FLAGS.has(arg) && next !== undefined && /^-\d/.test(next)) {
      out.push(`${arg}=${next}`);
      k++;
    } else out.push(arg);
  }
  return out;
}

/** A positive number of seconds ("600", "0.5"). */
function parseSeconds(flag: string, raw: string): number {
  const value = Number(raw.trim());
  if (raw.trim() === '' || !Number.isFinite(value) || value <= 0) throw new CliInputError(`${flag} must be a positive number of seconds, got '${raw}'`);
  return value;
}

/** Parse argv (without node and script) into options; every problem becomes one CliInputError line. */
export function parseCliArgs(argv: readonly string[]): CliOptions {
  let values: ReturnType<typeof parseArgs<{ options: typeof OPTIONS; strict: true; allowPositionals: false }>>['values'];
  try {
    ({ values } = parseArgs({ args: joinNegativeValues(argv), options: OPTIONS, strict: true, allowPositionals: false }));
  } catch (error) {
    const first = String((error as Error).message).split('\n')[0];
    throw new CliInputError(`${first} (see --help)`);
  }
  const help = values.help ?? false;
  if (help) {
    return { help, lattice: '', chips: 0, sources: [], background: undefined, heights: undefined, odometer: undefined, odometerDtype: 'int64', json: false, progress: false, threads: undefined, maxSites: undefined, checkpoint: undefined, checkpointEvery: DEFAULT_CHECKPOINT_SECONDS };
  }
  if (values.lattice === undefined || values.lattice.trim() === '') throw new CliInputError('--lattice is required (see --help)');
  if (values.chips === undefined) throw new CliInputError('--chips is required (see --help)');
  const odometerDtype = values['odometer-dtype'] ?? 'int64';
  if (odometerDtype !== 'int64' && odometerDtype !== 'float64') {
    throw new CliInputError(`--odometer-dtype must be int64 or float64, got '${odometerDtype}'`);
  }
  for (const flag of ['heights', 'odometer'] as const) {
    const path = values[flag];
    if (path !== undefined && !/\.npy$/i.test(path)) throw new CliInputError(`--${flag} must name a .npy file, got '${path}'`);
  }
  if (values.heights !== undefined && values.heights === values.odometer) {
    throw new CliInputError('--heights and --odometer must be different files');
  }
  if (values['checkpoint-every'] !== undefined && values.checkpoint === undefined) {
    throw new CliInputError('--checkpoint-every needs --checkpoint FILE');
  }
  if (values.checkpoint !== undefined && (values.checkpoint.trim() === '' || /\.npy$/i.test(values.checkpoint))) {
    throw new CliInputError(`--checkpoint must name a snapshot file (not an .npy array), got '${values.checkpoint}'`);
  }
  return {
    help,
    lattice: values.lattice.trim(),
    chips: parseCount('--chips', values.chips),
    sources: values.source ?? [],
    background: values.background,
    heights: values.heights,
    odometer: values.odometer,
    odometerDtype,
    json: values.json ?? false,
    progress: values.progress ?? false,
    threads: values.threads === undefined ? undefined : parseCount('--threads', values.threads, { min: 1 }),
    maxSites: values['max-sites'] === undefined ? undefined : parseCount('--max-sites', values['max-sites'], { min: 1 }),
    checkpoint: values.checkpoint,
    checkpointEvery: values['checkpoint-every'] === undefined ? DEFAULT_CHECKPOINT_SECONDS : parseSeconds('--checkpoint-every', values['checkpoint-every']),
  };
}
