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
 */
export const arrayKeys = (runId: string) => ({
  heights: `runs/${runId}/arrays/heights.npy`,
  odometer: `runs/${runId}/arrays/odometer.npy`,
  sidecar: `runs/${runId}/arrays/run.json`,
});

/** One object per run, overwritten at each save: a put is atomic per key, so a reader sees the old or the new one. */
export const checkpointKey = (runId: string) => `runs/${runId}/checkpoint/state.twckpt`;

export const uploadKey = (sha256: string) => `uploads/${sha256}.npy`;
