import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { legendResponseSchema } from '../../shared/api/artifacts.js';
import type { Run } from '../../shared/api/runs.js';
import { DIFFERENCE_NEEDS_BACKGROUND } from '../../shared/run-spec.js';
import { hexToRgba, paletteById, rgbaToHex } from '../../shared/palettes.js';
import { readNpy } from '../../renderer/src/npy/index.js';
import { arrayKeys } from '../../renderer/src/farm/artifacts.js';
import { startFarmWorker } from '../../renderer/src/farm/farm-worker.js';
import { as, authorOfNewLab, runSettled, startHarness, submitRun, type Harness, type Session } from '../api/support/harness.js';

/**
 * The drawing a run's spec asks for, end to end: the API validates it with the shared schema, the
 * real farm worker draws exactly those pyramids with their legends, and the legend route serves them.
 */

let h: Harness;
let author: Session;
let labId: string;
let farm: Awaited<ReturnType<typeof startFarmWorker>>;
/** the run drawn with a chosen set of views (third test), whose missing views the fourth asks for */
let chosen: Run;

beforeAll(async () => {
  h = await startHarness('layers');
  ({ labId, session: author } = await authorOfNewLab(h, 'Layers'));
  farm = await startFarmWorker(h.env, { prefix: h.queuePrefix, threads: 1 });
});
afterAll(async () => {
  await farm?.close();
  await h?.close();
});

const submit = (title: string, spec: unknown): Promise<Run> => submitRun(h, author, labId, title, spec);

/** The view folders a run has in the store: `<layer>/<palette segment>` for each drawn pyramid. */
async function drawnViews(runId: string): Promise<string[]> {
  const keys = await h.deps.blobs.list(`runs/${runId}/`);
  return keys
    .filter((k) => k.endsWith('/iiif/info.json'))
    .map((k) => k.slice(`runs/${runId}/`.length, -'/iiif/info.json'.length))
    .sort();
}

describe('the spec says what to draw', () => {
  it('refuses the difference layer on an empty background with the schema message, and records nothing', async () => {
    const before = await as(h.http.get(`/api/runs?labId=${labId}`), author).expect(200);
    const res = await as(h.http.post('/api/runs'), author).send({
      labId,
      title: 'No background',
      spec: { lattice: { preset: 'square' }, chips: 100, render: { layers: ['heights', 'difference'], palettes: ['tidewater'], untoppled: 'neutral' } },
    });
    expect(res.status).toBe(400);
    expect(res.body.issues).toContainEqual(expect.objectContaining({ path: 'spec.render.layers', message: DIFFERENCE_NEEDS_BACKGROUND }));
    const after = await as(h.http.get(`/api/runs?labId=${labId}`), author).expect(200);
    expect(after.body.total).toBe(before.body.total);
  });

  it('a spec without a choice draws the three default views', async () => {
    const run = await runSettled(h, author, (await submit('Default drawing', { lattice: { preset: 'square' }, chips: 100 })).id, 60_000);
    expect(run.status).toBe('finished');
    expect(await drawnViews(run.id)).toEqual(['heights/tidewater', 'odometer/tidewater', 'toppled/tidewater']);
  });

  it('draws exactly the chosen layers × palettes, ~clear only where untoppled cells exist, each with its legend', async () => {
    // checkerboard 1/0: a non-zero background, compact on Z^2 (below 2d − 2 = 2; arXiv:0901.3805)
    const spec = {
      lattice: { preset: 'square' },
      chips: 300,
      background: { kind: 'checkerboard', a: 1, b: 0 },
      render: { layers: ['difference', 'odometer'], palettes: ['kiln', 'newsprint'], untoppled: 'transparent' },
    };
    const run = await runSettled(h, author, (await submit('Chosen drawing', spec)).id, 60_000);
    chosen = run;
    expect(run.status, run.error ?? '').toBe('finished');
    expect(await drawnViews(run.id)).toEqual(['difference/kiln', 'difference/newsprint', 'odometer/kiln~clear', 'odometer/newsprint~clear']);

    // the arrays, to check the legends' numbers against
    const heights = readNpy(new Uint8Array((await h.deps.blobs.get(arrayKeys(run.id).heights))!));
    const odometer = readNpy(new Uint8Array((await h.deps.blobs.get(arrayKeys(run.id).odometer))!));
    const [rows, cols] = heights.shape as [number, number];
    const [oy, ox] = (run.stats!.origin as number[]) as [number, number];
    let minD = Infinity;
    let maxD = -Infinity;
    for (let r = 0; r < rows; r++)
      for (let c = 0; c < cols; c++) {
        // the background of the spec in lattice coordinates: a where x + y is even, b where odd (shared/run-spec.ts)
        const bg = ((c - ox + r - oy) & 1) === 0 ? 1 : 0;
        const d = Number(heights.data[r * cols + c]) - bg;
        minD = Math.min(minD, d);
        maxD = Math.max(maxD, d);
      }
    const maxOdo = Math.max(...Array.from(odometer.data as BigInt64Array, Number));

    const odo = await as(h.http.get(`/api/runs/${run.id}/legend/odometer/kiln~clear`), author).expect(200);
    const l = legendResponseSchema.parse(odo.body);
    expect(l.style).toEqual({ layer: 'odometer', palette: 'kiln', untoppled: 'transparent' });
    expect(l.stats.maxOdometer).toBe(maxOdo);
    if (l.legend.kind !== 'continuous') throw new Error('the odometer legend is a ramp');
    // the ramp of the palette definition, end to end, and see-through untoppled sites
    expect(l.legend.stops[0]).toMatchObject({ value: 1 });
    expect(l.legend.stops.at(-1)).toMatchObject({ value: maxOdo, position: 1, colour: paletteById('kiln').ramp.at(-1) });
    expect(l.legend.masked).toMatchObject({ transparent: true });

    const diff = legendResponseSchema.parse((await as(h.http.get(`/api/runs/${run.id}/legend/difference/newsprint`), author).expect(200)).body);
    expect([diff.stats.minDifference, diff.stats.maxDifference]).toEqual([minD, maxD]);
    if (diff.legend.kind !== 'discrete') throw new Error('a small difference range gets one entry per value');
    const m = Math.max(1, -minD, maxD);
    expect(diff.legend.entries.map((e) => e.value)).toEqual(Array.from({ length: 2 * m + 1 }, (_, i) => i - m));
    // newsprint's diverging ramp: dark for the most negative, light for the most positive
    expect(diff.legend.entries[0]!.colour).toBe(rgbaToHex(hexToRgba(paletteById('newsprint').diverging[0])));
    expect(diff.legend.entries.at(-1)!.colour).toBe(paletteById('newsprint').diverging.at(-1));
  });

  it('answers 404 for the legend and tiles of a layer or palette the run did not ask for', async () => {
    const run = chosen;
    expect(run?.status).toBe('finished');
    for (const path of ['legend/heights/kiln', 'legend/odometer/kiln', 'legend/difference/tidewater', 'views/heights/kiln/iiif/info.json', 'views/odometer/kiln/iiif/info.json']) {
      const res = await as(h.http.get(`/api/runs/${run.id}/${path}`), author);
      expect({ path, status: res.status }).toEqual({ path, status: 404 });
      expect(res.headers['cache-control']).toBe('no-store');
      expect(typeof res.body.error).toBe('string');
    }
    // a layer or palette that does not exist at all is bad input, not a missing view
    expect((await as(h.http.get(`/api/runs/${run.id}/legend/sideways/kiln`), author)).status).toBe(400);
    expect((await as(h.http.get(`/api/runs/${run.id}/legend/odometer/rainbow`), author)).status).toBe(400);
  });
});
