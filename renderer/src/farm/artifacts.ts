/**
 * Where a run's arrays and statistics live in the object store. The pyramids have their own layout
 * (renderer/src/render/keys.ts); everything of a run sits under runs/<runId>/.
 *
 *   runs/<runId>/arrays/heights.npy    final heights (uint8 when they fit, else int32)
 *   runs/<runId>/arrays/odometer.npy   topplings per site (int64)
 *   runs/<runId>/arrays/run.json       specification, engine version, statistics, sha256 of the heights
 *   runs/<runId>/checkpoint/state.twckpt  the last checkpoint of a computation in progress, either engine path
 *                                      (engine/snapshot.ts bytes, kind in the header); replaced whole at each
 *                                      save, deleted once the arrays are stored
 *   uploads/<sha256>.npy               uploaded background arrays, addressed by content
 *   figures/<figureId>/v<n>/<slug>-v<n>.<ext>   a figure version's printed files (print-run.ts)
 *   figures/<figureId>/v<n>/thumbnail.jpg       a small picture of that version's page, for lists
 */
export const arrayKeys = (runId: string) => ({
  heights: `runs/${runId}/arrays/heights.npy`,
  odometer: `runs/${runId}/arrays/odometer.npy`,
  sidecar: `runs/${runId}/arrays/run.json`,
});

/** One object per run, overwritten at each save: a put is atomic per key, so a reader sees the old or the new one. */
export const checkpointKey = (runId: string) => `runs/${runId}/checkpoint/state.twckpt`;

export const uploadKey = (sha256: string) => `uploads/${sha256}.npy`;

/**
 * A figure version's files: the version number makes each print immutable, so a re-rendered figure
 * never overwrites a cited file.
 */
export const printKey = (figureId: string, number: number, name: string) => `figures/${figureId}/v${number}/${name}`;

/** Never a printed file's name: those are `<slug>-v<n>.<ext>`. */
export const printThumbnailKey = (figureId: string, number: number) => printKey(figureId, number, 'thumbnail.jpg');
