/**
 * `npm run -s stabilize -- …`: the command-line adapter around the exact engine. It owns all I/O:
 * arguments, input files (JSON, .npy, PNG), atomic output writing and the report.
 * Run `--help` for the contract; exit codes are listed in errors.ts.
 */
import { existsSync, rmSync } from 'node:fs';
import { basename, resolve } from 'node:path';
import { ENGINE_VERSION, isSnapshotError, resolveProblem, runStatsToJSON, stabilize, type Snapshot } from '../engine/index.js';
import { readSnapshotFile, writeSnapshotFile } from '../farm/checkpoint-file.js';
import { encodeNpy } from '../npy/index.js';
import { parseCliArgs, USAGE } from './args.js';
import { assertWritable, writeFilesAtomically, type OutputFile } from './atomic-write.js';
import { CliInputError, EXIT } from './errors.js';
import { arrayHash, dtypeName, heightsForExport, odometerForExport } from './export-arrays.js';
import { formatReport, progressLine, type RunReport } from './report.js';
import { resolveRunInputs } from './run-inputs.js';
import { sidecarPath, toJson, type ArrayRecord, type Sidecar } from './sidecar.js';

export async function main(argv: readonly string[], signal: AbortSignal): Promise<{ code: number; stdout: string }> {
  const options = parseCliArgs(argv);
  if (options.help) return { code: EXIT.ok, stdout: USAGE };

  const { spec, upload, pngLevels, inputPaths } = await resolveRunInputs(options);

  const sidecarFor = options.heights ?? options.odometer;
  const sidecar = sidecarFor === undefined ? undefined : sidecarPath(sidecarFor);
  const outputs = [options.heights, options.odometer, sidecar].filter((p): p is string => p !== undefined);
  await assertWritable(outputs);
  for (const out of outputs) {
    if (inputPaths.some((input) => resolve(input) === resolve(out))) throw new CliInputError(`output ${out} would overwrite an input file`);
  }
  const checkpoint = options.checkpoint;
  if (checkpoint !== undefined && [...outputs, ...inputPaths].some((p) => resolve(p) === resolve(checkpoint))) {
    throw new CliInputError(`--checkpoint ${checkpoint} must not be an input or output file`);
  }

  const problem = resolveProblem(spec, upload ? { background: upload } : undefined);
  const resume = checkpoint !== undefined && existsSync(checkpoint) ? readCheckpoint(checkpoint) : undefined;
  if (resume && options.progress) process.stderr.write(`continuing from ${checkpoint}\n`);
  let saves = 0;
  const outcome = await stabilize(problem, {
    ...(options.threads !== undefined ? { threads: options.threads } : {}),
    ...(options.maxSites !== undefined ? { maxSites: options.maxSites } : {}),
    ...(checkpoint !== undefined
      ? {
          checkpoint: {
            everySeconds: options.checkpointEvery,
            save: (s: Snapshot) => {
              writeSnapshotFile(checkpoint, s);
              saves += 1;
            },
          },
        }
      : {}),
    ...(resume ? { resume } : {}),
    signal,
    // the engine already throttles its reports
    onProgress: options.progress ? (p) => process.stderr.write(`${progressLine(p)}\n`) : undefined,
  });

  const stats = runStatsToJSON(outcome.stats);
  const report: RunReport = {
    ...stats,
    sources: spec.sources,
    background: options.background ?? 'constant:0',
    engineVersion: ENGINE_VERSION,
    files: { heights: options.heights ?? null, odometer: options.odometer ?? null, sidecar: sidecar ?? null },
    ...(checkpoint !== undefined ? { checkpoint: { file: checkpoint, resumed: resume !== undefined, saves } } : {}),
  };

  const files: OutputFile[] = [];
  const record = (path: string, data: Uint8Array | Int32Array | BigInt64Array | Float64Array): ArrayRecord => {
    files.push({ path, chunks: encodeNpy(outcome.shape, data) });
    return { file: basename(path), dtype: dtypeName(data), shape: outcome.shape, origin: outcome.origin, sha256: arrayHash(data) };
  };
  const heightsRecord = options.heights ? record(options.heights, heightsForExport(outcome.heights)) : null;
  const odometerRecord = options.odometer ? record(options.odometer, odometerForExport(outcome.odometer, options.odometerDtype)) : null;
  if (sidecar) {
    const body: Sidecar = {
      format: 'toppleworks.export/1',
      engineVersion: ENGINE_VERSION,
      spec,
      heights: heightsRecord,
      odometer: odometerRecord,
      ...(pngLevels ? { backgroundPngLevels: pngLevels } : {}),
      stats,
      createdAt: new Date().toISOString(),
    };
    files.push({ path: sidecar, chunks: [new TextEncoder().encode(toJson(body, 2) + '\n')] });
  }
  await writeFilesAtomically(files);
  // the outputs are complete, so the saved state has nothing more to give
  if (checkpoint !== undefined) rmSync(checkpoint, { force: true });

  return { code: EXIT.ok, stdout: options.json ? toJson(report) : formatReport(report) };
}

/**
 * The snapshot a previous invocation left. A damaged or foreign file is bad input (exit 2), never
 * silently replaced: it may hold hours of work on another problem.
 */
function readCheckpoint(path: string): Snapshot {
  try {
    return readSnapshotFile(path);
  } catch (error) {
    if (isSnapshotError(error)) throw new CliInputError(`--checkpoint ${path}: ${(error as Error).message}; remove it to start afresh`);
    throw error;
  }
}

/** Map a failure to its exit code and one stderr line. */
export function describeFailure(error: unknown): { code: number; message: string } {
  const name = (error as { name?: string })?.name;
  const message = String((error as Error)?.message ?? error).replace(/\s*\n\s*/g, ' ');
  if (error instanceof CliInputError || name === 'EngineInputError') return { code: EXIT.input, message };
  if (name === 'SnapshotError') return { code: EXIT.input, message: `the checkpoint is not of this run: ${message}; remove it to start afresh` };
  if (name === 'ExplosionError' || name === 'NotStabilizedError') return { code: EXIT.engine, message };
  if (name === 'AbortError') return { code: EXIT.interrupted, message: 'interrupted; no output written' };
  return { code: EXIT.internal, message: `unexpected failure: ${message}` };
}

/** The --checkpoint file of an interrupted command, when one was saved. */
function savedCheckpointOf(argv: readonly string[]): string | undefined {
  try {
    const file = parseCliArgs(argv).checkpoint;
    return file !== undefined && existsSync(file) ? file : undefined;
  } catch {
    return undefined;
  }
}

async function run(): Promise<void> {
  const controller = new AbortController();
  const stop = () => controller.abort(Object.assign(new Error('interrupted'), { name: 'AbortError' }));
  process.once('SIGINT', stop);
  process.once('SIGTERM', stop);
  let code: number;
  try {
    const result = await main(process.argv.slice(2), controller.signal);
    code = result.code;
    await new Promise<void>((done) => process.stdout.write(result.stdout + '\n', () => done()));
  } catch (error) {
    const failure = controller.signal.aborted ? describeFailure(controller.signal.reason) : describeFailure(error);
    code = failure.code;
    const saved = code === EXIT.interrupted ? savedCheckpointOf(process.argv.slice(2)) : undefined;
    process.stderr.write(`stabilize: ${failure.message}${saved ? `; ${saved} holds the last saved state, and the same command continues from it` : ''}\n`);
    if (code === EXIT.internal && process.env.TOPPLEWORKS_DEBUG) console.error(error);
  }
  // Engine worker threads must not keep a finished command alive.
  process.exit(code);
}

if (process.argv[1] && /stabilize\.(ts|js)$/.test(process.argv[1])) void run();
