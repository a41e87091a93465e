import { Link, useParams, useSearchParams } from 'react-router';
import { useLabFigures, useRun, useRunJson, useRuns } from '../api/queries.js';
import { runBibtex, runLink } from '../pages/citation.js';
import { CitationBlock, Count } from '../ui/index.js';
import { DarkSelect, LAYER_LABELS, PALETTE_OPTIONS, PileViewer, type DrawnLayer, type Lock, type PaneSpec } from './PileViewer.js';
import { drawnOf, paletteSegmentOf, pickLayer, pickPalette } from './drawnViews.js';
import { arrayUrl, type ArtifactBase } from './runArtifacts.js';
import { useViewInAddress } from './useViewInAddress.js';
import { isRunMissing, RunNotFoundPage } from '../pages/RunNotFound.js';
import { scaleSymbol } from '../../../shared/natural-scale.js';

/**
 * /runs/:id/view — the lab's deep-zoom reader of one run, full-bleed on the dark ground. The address
 * holds the whole view state (layer, palette, the compared layer or run, the lock, and the place:
 * `at=x,y,cells across`), so a view can be shared inside the lab by copying the link.
 */
export function ViewerPage() {
  const { id = '' } = useParams();
  const [params, setParams] = useSearchParams();
  const run = useRun(id);
  const base: ArtifactBase = { kind: 'run', id };
  const runJson = useRunJson(base);
  // the switchers offer only the views this run asked for (its spec's `render`)
  const drawn = drawnOf(run.data?.run.spec);
  const layer: DrawnLayer = pickLayer(drawn, params.get('layer'));
  const palette = pickPalette(drawn, params.get('palette'));
  const compare = params.get('with') ?? '';
  const otherRunId = compare.startsWith('run:') ? compare.slice(4) : null;
  const otherLayer = compare.startsWith('layer:') && (drawn.layers as readonly string[]).includes(compare.slice(6)) ? (compare.slice(6) as DrawnLayer) : null;
  const lock: Lock = params.get('lock') === 'rescaled' || (params.get('lock') === null && otherRunId) ? 'rescaled' : 'cells';
  const otherRun = useRun(otherRunId ?? '', false);
  const finished = useRuns({ status: 'finished', pageSize: 100 });

  const set = (patch: Record<string, string | null>) => {
    const next = new URLSearchParams(params);
    for (const [k, v] of Object.entries(patch)) {
      if (v === null || v === '') next.delete(k);
      else next.set(k, v);
    }
    // a new choice is a step Back can undo; panning only replaces the entry (useViewInAddress)
    setParams(next, { preventScrollReset: true });
  };
  const { opened, onViewChange } = useViewInAddress();

  // each run is rescaled by its own n^(1/d); the label names the unit when both share a dimension
  const dimOf = (shape: readonly number[] | undefined) => shape?.length ?? 2;
  const mine = dimOf(run.data?.run.stats?.shape);
  const theirs = otherRunId ? dimOf(otherRun.data?.run.stats?.shape) : mine;
  const rescaledUnit = mine === theirs ? scaleSymbol(mine) : 'n^(1/d)';

  const title = run.data?.run.title ?? 'Run';
  // until the spec says what was drawn, open nothing (rather than a default view the run may not have)
  const panes: PaneSpec[] = run.data || run.isError ? [{ base, layer, palette: paletteSegmentOf(drawn, layer, palette), label: title }] : [];
  if (otherLayer && panes.length) panes.push({ base, layer: otherLayer, palette: paletteSegmentOf(drawn, otherLayer, palette), label: title });
  if (otherRunId && panes.length) {
    const theirs = drawnOf(otherRun.data?.run.spec);
    panes.push({ base: { kind: 'run', id: otherRunId }, layer, palette: paletteSegmentOf(theirs, layer, palette), label: otherRun.data?.run.title ?? 'other run' });
  }

  const toolbar = (
    <>
      {/* below 1280 px the arrow alone (the panes name the run), leaving the row to the choices */}
      <Link to={`/runs/${id}`} className="min-w-0 max-w-64 shrink-0 truncate text-white/70 no-underline hover:text-white xl:shrink" title={title}>
        ← <span className="hidden xl:inline">{title}</span>
        <span className="sr-only xl:hidden">{title}</span>
      </Link>
      <DarkSelect label="Layer" value={layer} onChange={(e) => set({ layer: e.target.value })}>
        {drawn.layers.map((l) => (
          <option key={l} value={l}>
            {LAYER_LABELS[l]}
          </option>
        ))}
      </DarkSelect>
      <DarkSelect label="Palette" value={palette} onChange={(e) => set({ palette: e.target.value })}>
        {PALETTE_OPTIONS.filter((p) => (drawn.palettes as readonly string[]).includes(p.id)).map((p) => (
          <option key={p.id} value={p.id}>
            {p.name}
          </option>
        ))}
      </DarkSelect>
      <DarkSelect label="Beside it" shrink value={compare} onChange={(e) => set({ with: e.target.value, lock: null })}>
        <option value="">nothing</option>
        {drawn.layers.filter((l) => l !== layer).map((l) => (
          <option key={l} value={`layer:${l}`}>
            {LAYER_LABELS[l].toLowerCase()} of this run
          </option>
        ))}
        {(finished.data?.runs ?? [])
          .filter((r) => r.id !== id)
          .map((r) => (
            <option key={r.id} value={`run:${r.id}`}>
              run: {r.title}
            </option>
          ))}
      </DarkSelect>
      {panes.length > 1 ? (
        <DarkSelect label="Lock" value={lock} onChange={(e) => set({ lock: e.target.value })}>
          <option value="cells">same lattice cells</option>
          <option value="rescaled">same x/{rescaledUnit}</option>
        </DarkSelect>
      ) : null}
    </>
  );

  const r = run.data?.run;
  const meta = runJson.data;
  // the lab's figures tell whether a published figure gives this run a public link
  const labFigures = useLabFigures(r?.labId);
  const link = r && !labFigures.isPending ? runLink(r.id, labFigures.data?.figures ?? [], window.location.origin) : null;
  // the API hides other labs' runs behind a 404: say so as /runs/:id does, not that a view is missing
  if (run.isError && isRunMissing(run.error)) return <RunNotFoundPage />;

  return (
    // fits a phone as the run page it is opened from does (styles.css); outside the page frame, so it says so itself
    <div className="min-h-screen bg-night text-white" data-fits-phones="">
      <title>{`${title} · deep zoom · Toppleworks`}</title>
      {/* one pane on a phone leaves the downloads peeking below, so a finger finds the page's scroll beside the
          pile's pan; two stacked panes need the whole screen */}
      <PileViewer panes={panes} lock={lock} toolbar={toolbar} height={panes.length > 1 ? 'h-screen' : 'h-[72svh] sm:h-screen'} initialView={opened} onViewChange={onViewChange} />
      <section className="mx-auto grid max-w-6xl grid-cols-1 gap-10 px-8 py-10 text-sm max-sm:px-4 md:grid-cols-[minmax(0,1fr)_minmax(0,1.6fr)]">
        <div>
          <h2 className="mb-3 text-base font-semibold">Downloads</h2>
          <ul className="space-y-1.5">
            <li>
              <a className="text-sky-300" href={arrayUrl(base, 'heights.npy')} download>
                heights.npy
              </a>{' '}
              <span className="text-white/60">final heights{meta ? `, ${meta.heights.dtype}, ${meta.heights.shape.join(' × ')} cells` : ''}</span>
            </li>
            <li>
              <a className="text-sky-300" href={arrayUrl(base, 'odometer.npy')} download>
                odometer.npy
              </a>{' '}
              <span className="text-white/60">topplings per site{meta?.odometer ? `, ${meta.odometer.dtype}` : ''}</span>
            </li>
            <li>
              <a className="text-sky-300" href={arrayUrl(base, 'run.json')} download>
                run.json
              </a>{' '}
              <span className="text-white/60">specification, engine version, statistics, hashes</span>
            </li>
          </ul>
          {r ? <p className="mt-4 text-white/60" data-testid="viewer-grains">n = <Count n={r.spec.chips} unit="grains" dark /> · lattice coordinates are relative to the origin, y growing downward as in the array.</p> : null}
        </div>
        <div>
          <h2 className="mb-3 text-base font-semibold">Cite this run</h2>
          {r && meta && link ? (
            <>
              {link.public ? (
                <p className="mb-3 text-white/70" data-testid="run-link-public">
                  Public permanent link, through the published figure “{link.figure!.title}”:{' '}
                  <a className="break-all font-mono text-sky-300" href={link.url}>
                    {link.url}
                  </a>
                  . Anyone can open it, zoom into this run and check the heights against the hash below.
                </p>
              ) : (
                <p className="mb-3 text-amber-200" data-testid="run-link-private">
                  For lab members only: runs are private to their lab, so this link asks everyone else to sign in. To cite the run in a paper,{' '}
                  <Link className="text-sky-300" to={`/figures/new?run=${r.id}`}>
                    compose a figure of it
                  </Link>{' '}
                  and publish it; this entry then points at the figure’s public permanent link.
                </p>
              )}
              <CitationBlock
                dark
                testId="run-bibtex"
                text={runBibtex({
                  runId: r.id,
                  title: r.title,
                  authors: [r.author.name],
                  finishedAt: r.finishedAt,
                  engineVersion: meta.engineVersion,
                  heightsSha256: meta.heights.sha256,
                  permalink: link.url,
                  public: link.public,
                })}
              />
            </>
          ) : (
            <p className="text-white/60">{runJson.isError ? (runJson.error as Error).message : 'Reading run.json…'}</p>
          )}
        </div>
      </section>
    </div>
  );
}
