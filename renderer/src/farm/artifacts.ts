/**
 * Where a run's arrays and statistics live in the object store. The pyramids have their own layout
 * (renderer/src/render/keys.ts); everything of a run sits under runs/<runId>/.
 *
 *   runs/<runId>/arrays/heights.npy    final heights (uint8 when they fit, else int32)
 *   runs/<runId>/arrays/odometer.npy   topplings per site (int64)
 *   runs/<runId>/arrays/run.json       specification, engine version, statistics, sha256 of the heights
 *   uploads/<sha256>.npy               uploaded background arrays, addressed by content
 */
export const arrayKeys = (runId: string) => ({
  heights: `runs/${runId}/arrays/heights.npy`,
  odometer: `runs/${runId}/arrays/odometer.npy`,
  sidecar: `runs/${runId}/arrays/run.json`,
});

export const uploadKey = (sha256: string) => `uploads/${sha256}.npy`;
