import { useState } from 'react';
import { useRunJson } from '../api/queries.js';
import { DarkSelect, LAYER_LABELS, PALETTE_OPTIONS, PileViewer, type DrawnLayer, type PaneSpec } from './PileViewer.js';
import { drawnOf, paletteSegmentOf, pickLayer, pickPalette } from './drawnViews.js';
import { arrayUrl, type ArtifactBase } from './runArtifacts.js';
import { useViewInAddress } from './useViewInAddress.js';

/**
 * The reader's deep zoom on a published figure's page: the same viewer as the lab's, served by the
 * figure's slug so no account is needed. Loaded lazily with OpenSeadragon.
 */
export function FigureZoom({ slug, title }: { slug: string; title: string }) {
  const base: ArtifactBase = { kind: 'figure', slug };
  // the run's own specification (run.json) says which views were drawn; the switchers list only those
  const runJson = useRunJson(base);
  const drawn = drawnOf(runJson.data?.spec);
  const [wantedLayer, setLayer] = useState<DrawnLayer>('heights');
  const [wantedPalette, setPalette] = useState<string>('');
  const [wantedBeside, setBeside] = useState<DrawnLayer | ''>('');
  const layer = pickLayer(drawn, wantedLayer);
  const palette = pickPalette(drawn, wantedPalette);
  // the place is kept in the address (`?at=`), so a reader's link opens where they were looking
  const { opened, onViewChange } = useViewInAddress();
  const beside = wantedBeside && wantedBeside !== layer && drawn.layers.includes(wantedBeside) ? wantedBeside : '';
  // until run.json says what was drawn, open nothing (rather than a default view the run may not have)
  const panes: PaneSpec[] = runJson.data || runJson.isError ? [{ base, layer, palette: paletteSegmentOf(drawn, layer, palette), label: title }] : [];
  if (beside && panes.length) panes.push({ base, layer: beside, palette: paletteSegmentOf(drawn, beside, palette), label: title });
  return (
    <PileViewer
      panes={panes}
      lock="cells"
      initialView={opened}
      onViewChange={onViewChange}
      height="h-[72vh]"
      toolbar={
        <>
          <DarkSelect label="Layer" value={layer} onChange={(e) => setLayer(e.target.value as DrawnLayer)}>
            {drawn.layers.map((l) => (
              <option key={l} value={l}>
                {LAYER_LABELS[l]}
              </option>
            ))}
          </DarkSelect>
          <DarkSelect label="Palette" value={palette} onChange={(e) => setPalette(e.target.value)}>
            {PALETTE_OPTIONS.filter((p) => (drawn.palettes as readonly string[]).includes(p.id)).map((p) => (
              <option key={p.id} value={p.id}>
                {p.name}
              </option>
            ))}
          </DarkSelect>
          <DarkSelect label="Beside it" shrink value={beside} onChange={(e) => setBeside(e.target.value as DrawnLayer | '')}>
            <option value="">nothing</option>
            {drawn.layers.filter((l) => l !== layer).map((l) => (
              <option key={l} value={l}>
                {LAYER_LABELS[l].toLowerCase()}
              </option>
            ))}
          </DarkSelect>
          <span className="whitespace-nowrap text-white/60">
            {/* the word gives way below 1280 px so the row keeps one line; the links say what they are */}
            <span className="sr-only xl:not-sr-only">Download </span>
            <a className="text-sky-300" href={arrayUrl(base, 'heights.npy')} download>
              heights.npy
            </a>{' '}
            ·{' '}
            <a className="text-sky-300" href={arrayUrl(base, 'odometer.npy')} download>
              odometer.npy
            </a>{' '}
            ·{' '}
            <a className="text-sky-300" href={arrayUrl(base, 'run.json')} download>
              run.json
            </a>
          </span>
        </>
      }
    />
  );
}
