import { NEW_RUN_MIN_CHIPS_MESSAGE, newRunSpecSchema, type RunSpec } from '../../../shared/run-spec.js';
import type { CliOptions } from './args.js';
import { resolveBackgroundArg } from './background-arg.js';
import { ExplosionError } from '../engine/errors.js';
import { CliInputError } from './errors.js';
import { latticeDimension, resolveLatticeArg } from './lattice-arg.js';
import { parseSourceArg } from './source-arg.js';
import type { UploadedArray } from './upload-array.js';
import { firstIssue } from './zod-message.js';

export interface RunInputs {
  spec: RunSpec;
  upload: UploadedArray | undefined;
  pngLevels: number[] | undefined;
  /** files the run reads, so no output may replace them */
  inputPaths: string[];
}

/** Read every input the options name and assemble the validated run specification. */
export async function resolveRunInputs(options: CliOptions): Promise<RunInputs> {
  const lattice = await resolveLatticeArg(options.lattice);
  const dimension = latticeDimension(lattice);
  const sources = options.sources.map((s) => parseSourceArg(s, dimension));
  const { background, upload, pngLevels } = await resolveBackgroundArg(options.background);
  if (upload && upload.shape.length !== dimension) {
    throw new CliInputError(
      `background array has shape (${upload.shape.join(', ')}) but the ${options.lattice} lattice needs a ${dimension}-dimensional array`,
    );
  }
  // the API's rule for a new run (at least one grain in all), so the command refuses what the farm would
  const parsed = newRunSpecSchema.safeParse({ lattice, chips: options.chips, sources, background });
  if (!parsed.success) {
    const issue = parsed.error.issues[0];
    // a background that can never stabilize is the engine's kind of refusal (exit 3), found earlier
    if (issue?.code === 'custom' && issue.params?.neverStabilizes) throw new ExplosionError(issue.message);
    const noGrains = issue?.path.join('.') === 'chips' && issue.message === NEW_RUN_MIN_CHIPS_MESSAGE;
    const hint = noGrains ? ' (a run needs at least one grain in all: --chips 0 only with a --source that adds grains)' : '';
    throw new CliInputError(`invalid run specification: ${firstIssue(parsed.error)}${hint}`);
  }
  const inputPaths = [options.lattice, options.background ?? '']
    .map((arg) => /^(?:periodic|motif|file):(.+)$/.exec(arg)?.[1])
    .filter((p): p is string => p !== undefined);
  return { spec: parsed.data, upload, pngLevels, inputPaths };
}
