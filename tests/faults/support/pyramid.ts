import { expect } from 'vitest';
import type { Harness, Session } from '../../api/support/harness.js';
import { as } from '../../api/support/harness.js';

/**
 * Check a run's stored views are whole: for every view with an info.json, every tile the IIIF Image
 * API 3.0 says a level-0 client may request (canonical region and size forms, spec §4.1–4.2 and the
 * 3.0 change log §1.1.3; tiles from info.json's width, height, tiles[].width and scaleFactors)
 * answers 200 with a PNG through the API. Computed here from the spec, not from our planner.
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
      const info = (await as(h.http.get(`${base}/info.json`), who).expect(200)).body as { width: number; height: number; tiles: { width: number; scaleFactors: number[] }[] };
      const { width: W, height: H } = info;
      for (const t of info.tiles) {
        for (const sf of t.scaleFactors) {
          const step = t.width * sf;
          for (let y = 0; y < H; y += step) {
            for (let x = 0; x < W; x += step) {
              const rw = Math.min(step, W - x);
              const rh = Math.min(step, H - y);
              const region = x === 0 && y === 0 && rw === W && rh === H ? 'full' : `${x},${y},${rw},${rh}`;
              const sw = Math.ceil(rw / sf);
              const sh = Math.ceil(rh / sf);
              // `max` only for the whole image at full size, `w,h` otherwise: the 3.0 canonical forms as OpenSeadragon's IIIF 3 tile source requests them
              const size = region === 'full' && sw === W && sh === H ? 'max' : `${sw},${sh}`;
              const res = await as(h.http.get(`${base}/${region}/${size}/0/default.png`), who);
              expect(res.status, `${layer}/${palette} tile ${region}/${size}`).toBe(200);
              expect(res.headers['content-type']).toBe('image/png');
              tiles++;
            }
          }
        }
      }
    }
  }
  return tiles;
}
