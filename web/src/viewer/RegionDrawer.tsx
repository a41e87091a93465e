import { useCallback, useEffect, useRef, useState } from 'react';
import OpenSeadragon from 'openseadragon';
import type { Region } from '../../../shared/print-spec.js';
import { regionText } from '../../../shared/print-words.js';
import type { RenderSpec } from '../../../shared/run-spec.js';
import { Button } from '../ui/index.js';
import { pixelsPerCell, type RunGeometry } from './cells.js';
import { DeepZoom, type DeepZoomHandle } from './DeepZoom.js';
import { drawnOf, paletteSegmentOf, pickLayer, pickPalette } from './drawnViews.js';
import { imageRectOfRegion, regionOfImagePoints, regionSizeText } from './regionGeometry.js';
import { infoJsonUrl, type ArtifactBase } from './runArtifacts.js';

type Mode = 'draw' | 'move';
type Pt = { x: number; y: number };

interface Props {
  base: ArtifactBase;
  geometry: RunGeometry;
  /** the run's spec, for the views it drew */
  spec: { render?: RenderSpec };
  /** the panel's layer and palette; a view the run did not draw falls back to one it did */
  layer: string;
  palette: string;
  /** the region typed in the form (null: the whole run) */
  region: Region | null;
  onChange: (r: Region) => void;
}

/**
 * The run's deep-zoom view with the panel's region as a rectangle on it. In "draw" mode a drag over
 * the view marks a rectangle and every cell it touches becomes the region; the scroll wheel still
 * zooms. In "move" mode the view pans as usual. The rectangle follows the typed coordinates, so
 * typing moves it; the drawn region goes back to the form through `onChange`.
 */
export function RegionDrawer({ base, geometry, spec, layer, palette, region, onChange }: Props) {
  const drawn = drawnOf(spec);
  const shownLayer = pickLayer(drawn, layer);
  const view = { layer: shownLayer, palette: paletteSegmentOf(drawn, shownLayer, pickPalette(drawn, palette)) };
  const dims = geometry.shape.length;

  const [handle, setHandle] = useState<DeepZoomHandle | null>(null);
  const [, setTick] = useState(0);
  const [mode, setMode] = useState<Mode>('draw');
  const [drag, setDrag] = useState<{ a: Pt; b: Pt } | null>(null);
  const live = useRef({ mode, geometry, onChange });
  live.current = { mode, geometry, onChange };
  const dragRef = useRef<{ a: Pt; b: Pt; start: Pt; moved: boolean } | null>(null);

  const onReady = useCallback((h: DeepZoomHandle) => {
    const v = h.viewer;
    v.addHandler('canvas-press', (e) => {
      if (live.current.mode !== 'draw') return;
      const p = h.imagePoint(e.position.x, e.position.y);
      dragRef.current = { a: p, b: p, start: { x: e.position.x, y: e.position.y }, moved: false };
    });
    v.addHandler('canvas-drag', (e) => {
      const d = dragRef.current;
      if (live.current.mode !== 'draw' || !d) return;
      // drawing, not panning
      e.preventDefaultAction = true;
      d.b = h.imagePoint(e.position.x, e.position.y);
      d.moved ||= Math.hypot(e.position.x - d.start.x, e.position.y - d.start.y) >= 3;
      setDrag({ a: d.a, b: d.b });
    });
    v.addHandler('canvas-drag-end', (e) => {
      if (live.current.mode === 'draw') e.preventDefaultAction = true;
    });
    v.addHandler('canvas-release', (e) => {
      const d = dragRef.current;
      dragRef.current = null;
      setDrag(null);
      if (!d || !d.moved) return;
      const g = live.current.geometry;
      const b = h.imagePoint(e.position.x, e.position.y);
      const r = regionOfImagePoints(d.a, b, pixelsPerCell(h.imageWidth, g), g);
      if (r) live.current.onChange(r);
    });
    setHandle(h);
  }, []);
  // the view changed (pan, zoom, resize): the rectangle is redrawn at its new screen place
  const onView = useCallback(() => setTick((t) => t + 1), []);
  useEffect(() => setHandle(null), [view.layer, view.palette]);

  const k = handle ? pixelsPerCell(handle.imageWidth, geometry) : 0;
  const screenRect = (x0: number, y0: number, x1: number, y1: number) => {
    const a = handle!.elementPoint(x0, y0);
    const b = handle!.elementPoint(x1, y1);
    return { left: Math.min(a.x, b.x), top: Math.min(a.y, b.y), width: Math.abs(b.x - a.x), height: Math.abs(b.y - a.y) };
  };
  const shown = handle && region ? imageRectOfRegion(region, k, geometry) : null;
  const pending = handle && drag ? regionOfImagePoints(drag.a, drag.b, k, geometry) : null;
  const pendingRect = pending ? imageRectOfRegion(pending, k, geometry) : null;

  const fit = () => {
    if (!handle || !shown) return;
    const w = handle.imageWidth;
    // a little room around the region, in viewport units (image width = 1)
    const pad = Math.max(shown.width, shown.height) * 0.15;
    handle.viewer.viewport.fitBounds(new OpenSeadragon.Rect((shown.x - pad) / w, (shown.y - pad) / w, (shown.width + 2 * pad) / w, (shown.height + 2 * pad) / w));
  };

  return (
    <div className="flex flex-col gap-2" data-testid="region-drawer" data-ready={handle ? true : undefined}>
      <div className="flex flex-wrap items-center gap-2">
        <div role="group" aria-label="What a drag does" className="inline-flex gap-1">
          <Button size="sm" tone={mode === 'draw' ? 'primary' : 'quiet'} aria-pressed={mode === 'draw'} onClick={() => setMode('draw')}>
            Drag draws the region
          </Button>
          <Button size="sm" tone={mode === 'move' ? 'primary' : 'quiet'} aria-pressed={mode === 'move'} onClick={() => setMode('move')}>
            Drag moves the view
          </Button>
        </div>
        <Button size="sm" tone="quiet" disabled={!shown} onClick={fit}>
          Show the whole region
        </Button>
        <span className="text-xs text-ink-soft">The scroll wheel zooms; every cell the rectangle touches is in the region.</span>
      </div>
      <div className={`relative h-80 overflow-hidden rounded-md ${mode === 'draw' ? 'cursor-crosshair' : ''}`}>
        <DeepZoom key={`${view.layer}/${view.palette}`} infoUrl={infoJsonUrl(base, view.layer, view.palette)} label="deep-zoom view for drawing the region" onReady={onReady} onView={onView} className="absolute inset-0" />
        {shown && !pendingRect ? <RegionBox rect={screenRect(shown.x, shown.y, shown.x + shown.width, shown.y + shown.height)} testId="region-rect" /> : null}
        {pendingRect ? <RegionBox rect={screenRect(pendingRect.x, pendingRect.y, pendingRect.x + pendingRect.width, pendingRect.y + pendingRect.height)} testId="region-rect-pending" dashed /> : null}
      </div>
      <p className="font-mono text-xs text-ink-soft" data-testid="region-readout">
        {pending ? `drawing ${regionText(pending, dims)}` : region ? `${regionText(region, dims)} · ${regionSizeText(region, dims)}` : 'the whole run: drag over the view to choose a region'}
      </p>
    </div>
  );
}

function RegionBox({ rect, testId, dashed = false }: { rect: { left: number; top: number; width: number; height: number }; testId: string; dashed?: boolean }) {
  return (
    <div
      data-testid={testId}
      aria-hidden
      className={`pointer-events-none absolute border-[3px] ${dashed ? 'border-dashed' : ''} border-sheet shadow-[0_0_0_1px_var(--color-night),inset_0_0_0_1px_var(--color-night)]`}
      style={{ left: rect.left, top: rect.top, width: rect.width, height: rect.height }}
    />
  );
}
