import { expect } from 'vitest';
import type { Harness, Session } from '../../api/support/harness.js';
import { as } from '../../api/support/harness.js';
import { iiifTilePaths, type IiifInfo } from './iiif-tiles.js';

/**
 * Check a run's stored views are whole: for every view with an info.json, every tile a IIIF Image
 * API 3.0 level-0 client may request (iiif-tiles.ts, from the spec) answers 200 with a PNG through the API.
 */
export async function expectCompletePyramids(h: Harness, who: Session, runId: string, layers: string[]): Promise<number> {
  let tiles = 0;
  for (const layer of layers) {
    const keys = await h.deps.blobs.list(`runs/${runId}/${layer}/`);
    const infos = keys.filter((k) => k.endsWith('/iiif/info.json'));
    expect(infos.length, `views of ${layer}`).toBeGreaterThan(0);
    for (const key of infos) {
      const palette = key.split('/')[3]!;
      const base = `/api/runs/${runId}/views/${layer}/${palette}/iiif`;
      const info = (await as(h.http.get(`${base}/info.json`), who).expect(200)).body as IiifInfo;
      for (const path of iiifTilePaths(info)) {
        const res = await as(h.http.get(`${base}/${path}`), who);
        expect(res.status, `${layer}/${palette} tile ${path}`).toBe(200);
        expect(res.headers['content-type']).toBe('image/png');
        tiles++;
      }
    }
  }
  return tiles;
}
