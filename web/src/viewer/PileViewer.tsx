import { useCallback, useEffect, useMemo, useRef, useState, type ReactNode } from 'react';
import { PALETTES, paletteById } from '../../../shared/palettes.js';
import { DRAWN_LAYERS, LAYER_LABELS, type DrawnLayer } from '../labels.js';
import { useRunJson, useViewDrawn, useViewLegend } from '../api/queries.js';
import { cellAt, fromLatticeView, pixelOfLattice, pixelsPerCell, toLatticeView, type CellAt, type LatticeView, type RunGeometry } from './cells.js';
import { sliceText } from '../../../shared/drawn-plane.js';
import { DeepZoom, type DeepZoomHandle } from './DeepZoom.js';
import { LegendCard } from './LegendCard.js';
import { arrayUrl, infoJsonUrl, type ArtifactBase, type RunJson } from './runArtifacts.js';
import { useCellReadout } from './useCellReadout.js';
import { heightText, odometerText, readoutCoordinates } from './readoutText.js';
import { paletteOfSegment } from './drawnViews.js';


/** Screen pixels per cell of the origin close-up: large enough to see and check single cells. */
export const CLOSE_UP_PX_PER_CELL = 40;

export interface PaneSpec {
  base: ArtifactBase;
  layer: DrawnLayer;
  /** palette segment of the view's address: a palette id, `~clear` appended when untoppled cells are see-through */
  palette: string;
  /** shown in the pane's corner */
  label: string;
}

export type Lock = 'cells' | 'rescaled';

interface PaneState {
  handle: DeepZoomHandle;
  geometry: RunGeometry;
}

function geometryOf(run: RunJson): RunGeometry {
  return { shape: run.heights.shape, origin: run.heights.origin, grains: Number(run.stats.grainsIn) };
}

/**
 * One or two deep-zoom panes on a dark ground. With two panes, zoom and pan are locked together in
 * lattice units (the same cell under the same screen point) or rescaled by n^(1/d) (the same x/√n on
 * the plane), so a run can be compared with another layer of itself or with another run. The place
 * shown (centre and cells across, in lattice units of the first pane's run) outlives the panes: a pane
 * opened for another layer, palette or comparison opens where the last one was.
 */
export function PileViewer({
  panes,
  lock,
  toolbar,
  height = 'h-screen',
  initialView = null,
  onViewChange,
}: {
  panes: PaneSpec[];
  lock: Lock;
  toolbar?: ReactNode;
  height?: string;
  /** where the first pane opens (lattice units of its run); the whole pile when null */
  initialView?: LatticeView | null;
  /** every new place of the first pane, in the same units */
  onViewChange?: (v: LatticeView) => void;
}) {
  const states = useRef<(PaneState | null)[]>([]);
  const leader = useRef(0);
  const syncing = useRef(false);
  const place = useRef<LatticeView | null>(initialView);
  const reportView = useRef(onViewChange);
  reportView.current = onViewChange;

  const syncFrom = useCallback(
    (from: number) => {
      const a = states.current[from];
      if (!a || syncing.current) return;
      const v = a.handle.view();
      const lv = toLatticeView(v.centre, v.visibleWidth, pixelsPerCell(a.handle.imageWidth, a.geometry), a.geometry, lock === 'rescaled');
      syncing.current = true;
      try {
        states.current.forEach((b, i) => {
          if (!b || i === from) return;
          const t = fromLatticeView(lv, pixelsPerCell(b.handle.imageWidth, b.geometry), b.geometry, lock === 'rescaled');
          b.handle.show(t.centrePx, t.imageWidthVisible);
        });
      } finally {
        syncing.current = false;
      }
    },
    [lock],
  );
  const follow = useCallback((from: number) => {
    if (from === leader.current) syncFrom(from);
  }, [syncFrom]);

  /** Remember the first pane's place, so the next pane (or the address) shows the same. */
  const remember = () => {
    const a = states.current[0];
    if (!a) return;
    const v = a.handle.view();
    place.current = toLatticeView(v.centre, v.visibleWidth, pixelsPerCell(a.handle.imageWidth, a.geometry), a.geometry, false);
    reportView.current?.(place.current);
  };

  const opened = (i: number, s: PaneState | null) => {
    states.current[i] = s;
    if (!s) return;
    if (i === 0) {
      if (place.current) {
        const t = fromLatticeView(place.current, pixelsPerCell(s.handle.imageWidth, s.geometry), s.geometry, false);
        s.handle.show(t.centrePx, t.imageWidthVisible);
      }
      syncFrom(0);
      remember();
    } else {
      // a pane that opens late takes the first pane's view (or the leader's while the first is opening)
      const from = states.current[0] ? 0 : leader.current;
      if (from !== i) syncFrom(from);
    }
  };

  const closeUp = () => {
    for (const s of states.current) {
      if (!s) continue;
      const k = pixelsPerCell(s.handle.imageWidth, s.geometry);
      const { px, py } = pixelOfLattice(0, 0, k, s.geometry);
      const across = s.handle.viewer.container.clientWidth / CLOSE_UP_PX_PER_CELL;
      s.handle.show({ x: px, y: py }, across * k);
    }
  };
  const home = () => {
    states.current[leader.current]?.handle.viewer.viewport.goHome(true);
    follow(leader.current);
  };
  const zoomBy = (f: number) => {
    const s = states.current[leader.current];
    if (!s) return;
    const v = s.handle.view();
    s.handle.show(v.centre, v.visibleWidth / f);
    follow(leader.current);
  };

  const savePng = async () => {
    const s = states.current[leader.current];
    if (!s) return;
    const url = URL.createObjectURL(await s.handle.snapshot());
    const a = document.createElement('a');
    a.href = url;
    a.download = `${panes[leader.current]?.label ?? 'view'}-${panes[leader.current]?.layer ?? ''}.png`.replace(/[^\w.-]+/g, '-');
    a.click();
    setTimeout(() => URL.revokeObjectURL(url), 10_000);
  };

  return (
    // the panes take what the toolbar leaves of `height`, so a toolbar on two rows never pushes them out of view
    <div className={`flex flex-col bg-night text-white ${height}`}>
      {/* one row from 1024 px up (long titles and run names shrink first), two clean groups below */}
      <div className="flex flex-wrap items-center gap-x-4 gap-y-2 border-b border-white/10 px-4 py-2 text-xs lg:flex-nowrap">
        {toolbar ? <div className="flex min-w-0 flex-wrap items-center gap-x-3 gap-y-2 lg:flex-nowrap">{toolbar}</div> : null}
        <div className="ml-auto flex shrink-0 items-center gap-1.5">
          <DarkButton onClick={home}>Whole pile</DarkButton>
          {/* short visible words; the full name stays the button's accessible name and tooltip */}
          <DarkButton onClick={closeUp} title="Origin, single cells" aria-label="Origin, single cells">
            Origin
          </DarkButton>
          <DarkButton onClick={() => zoomBy(2)} aria-label="zoom in">
            +
          </DarkButton>
          <DarkButton onClick={() => zoomBy(0.5)} aria-label="zoom out">
            −
          </DarkButton>
          <DarkButton onClick={() => void savePng()} title="PNG of this view" aria-label="PNG of this view">
            PNG
          </DarkButton>
        </div>
      </div>
      {/* two panes side by side on a phone would each be a strip: there they sit one above the other */}
      <div className={`grid min-h-0 flex-1 ${panes.length > 1 ? 'grid-cols-2 max-sm:grid-cols-1 max-sm:grid-rows-2' : 'grid-cols-1'} gap-px bg-white/10`}>
        {panes.map((p, i) => (
          <Pane
            key={`${i}:${JSON.stringify(p.base)}:${p.layer}:${p.palette}`}
            spec={p}
            onState={(s) => opened(i, s)}
            onLead={() => (leader.current = i)}
            onView={() => {
              follow(i);
              if (i === 0) remember();
            }}
          />
        ))}
      </div>
    </div>
  );
}

function Pane({ spec, onState, onLead, onView }: { spec: PaneSpec; onState: (s: PaneState | null) => void; onLead: () => void; onView: () => void }) {
  const run = useRunJson(spec.base);
  const drawn = useViewDrawn(spec.base, spec.layer, spec.palette);
  const [hover, setHover] = useState<CellAt | null>(null);
  const [handle, setHandle] = useState<DeepZoomHandle | null>(null);
  // bumped on every view change, so the outline of the hovered cell follows pan and zoom
  const [, setViewTick] = useState(0);
  // a pane that goes away (another layer or run chosen) must not be followed any more
  const release = useRef(onState);
  release.current = onState;
  useEffect(() => () => release.current(null), []);
  const geometry = useMemo(() => (run.data ? geometryOf(run.data) : null), [run.data]);
  const readout = useCellReadout(spec.base, hover);
  // the legend the renderer wrote beside this very pyramid, so it names exactly the colours of the pixels
  const legend = useViewLegend(spec.base, spec.layer, spec.palette, drawn.data === true);
  const paletteName = paletteById(paletteOfSegment(spec.palette)).name;

  let body: ReactNode;
  if (run.isError) body = <Centred>{(run.error as Error).message}</Centred>;
  else if (drawn.data === false)
    body = (
      <Centred>
        The {LAYER_LABELS[spec.layer].toLowerCase()} view in {paletteName} has not been drawn for this run (not asked for, or not ready yet).
      </Centred>
    );
  else if (!geometry || drawn.isPending) body = <Centred>Opening…</Centred>;
  else
    body = (
      <DeepZoom
        className="absolute inset-0"
        infoUrl={infoJsonUrl(spec.base, spec.layer, spec.palette)}
        label={`${spec.label}: ${LAYER_LABELS[spec.layer]}`}
        onReady={(h) => {
          setHandle(h);
          onState({ handle: h, geometry });
        }}
        onView={() => {
          setViewTick((t) => t + 1);
          onView();
        }}
        onHover={(p, handle) => setHover(p ? cellAt(p.x, p.y, pixelsPerCell(handle.imageWidth, geometry), geometry) : null)}
      />
    );

  return (
    <div className="relative overflow-hidden bg-night" onPointerEnter={onLead} onPointerDown={onLead} onWheel={onLead} data-testid="viewer-pane">
      {body}
      <p className="pointer-events-none absolute left-3 top-2 rounded bg-black/50 px-2 py-0.5 text-[11px] text-white/80">
        {spec.label} · {LAYER_LABELS[spec.layer]} · {paletteName}
        {/* the pyramid of a 3-D run is the source's slice (shared/drawn-plane.ts): never let it pass for the whole pile */}
        {geometry?.shape.length === 3 ? <span data-testid="viewer-slice"> · {sliceText(0)}</span> : null}
      </p>
      <div className="pointer-events-none absolute bottom-3 left-3">
        {legend.data ? <LegendCard legend={legend.data.legend} /> : legend.isError ? <p className="rounded bg-black/55 px-2 py-1 text-[11px] text-white/70">legend: {(legend.error as Error).message}</p> : null}
      </div>
      {hover && handle && geometry ? <CellOutline cell={hover} handle={handle} geometry={geometry} /> : null}
      <Readout cell={hover} values={readout.values} error={readout.error} />
    </div>
  );
}

/** A thin frame around the cell under the cursor, once cells are large enough on screen to frame. */
function CellOutline({ cell, handle, geometry }: { cell: CellAt; handle: DeepZoomHandle; geometry: RunGeometry }) {
  const k = pixelsPerCell(handle.imageWidth, geometry);
  const a = handle.elementPoint(cell.column * k, cell.row * k);
  const b = handle.elementPoint((cell.column + 1) * k, (cell.row + 1) * k);
  if (b.x - a.x < 8) return null;
  return <div aria-hidden="true" className="pointer-events-none absolute outline outline-1 outline-white/80 ring-1 ring-black/60" style={{ left: a.x, top: a.y, width: b.x - a.x, height: b.y - a.y }} />;
}

/** Coordinates and values of the cell under the cursor; monospace so columns of digits stay put. */
function Readout({ cell, values, error }: { cell: CellAt | null; values: ReturnType<typeof useCellReadout>['values']; error: string | null }) {
  if (!cell) return null;
  const v = values && values.cell.index === cell.index ? values : null;
  const text = readoutCoordinates(cell.lattice, cell.rescaled);
  return (
    <dl
      aria-label="cell readout"
      data-testid="cell-readout"
      className="pointer-events-none absolute bottom-3 right-3 grid grid-cols-[auto_auto] gap-x-3 gap-y-0.5 rounded-md bg-black/60 px-3 py-2 text-[11px] text-white/90 backdrop-blur"
    >
      <dt className="text-white/60">{text.coordinatesLabel}</dt>
      <dd className="font-mono" data-testid="readout-lattice">
        {text.coordinates}
      </dd>
      <dt className="text-white/60">{text.rescaledLabel}</dt>
      <dd className="font-mono">{text.rescaled}</dd>
      <dt className="text-white/60">height</dt>
      <dd className="font-mono" data-testid="readout-height">
        {v && v.height !== null ? heightText(v.height) : error ? '?' : '…'}
      </dd>
      <dt className="text-white/60">odometer</dt>
      <dd className="font-mono" data-testid="readout-odometer">
        {v && v.odometer !== null ? odometerText(v.odometer) : error ? '?' : '…'}
      </dd>
      {error ? <dd className="col-span-2 text-amber-200">{error}</dd> : null}
    </dl>
  );
}

function Centred({ children }: { children: ReactNode }) {
  return <p className="absolute inset-x-8 top-1/3 text-center text-sm text-white/70">{children}</p>;
}

export function DarkButton({ children, className = '', ...rest }: React.ButtonHTMLAttributes<HTMLButtonElement>) {
  return (
    // a thumb's target on a phone; the mouse's smaller one from `sm` up
    <button type="button" className={`rounded border border-white/20 bg-white/5 px-2.5 py-1 text-xs text-white hover:bg-white/15 max-sm:min-w-9 max-sm:py-2 ${className}`} {...rest}>
      {children}
    </button>
  );
}

/** A labelled select of the dark toolbar; `shrink` lets it give up width first (long run names) when the row is full. */
export function DarkSelect({ label, children, shrink = false, ...rest }: React.SelectHTMLAttributes<HTMLSelectElement> & { label: string; shrink?: boolean }) {
  return (
    <label className={`flex items-center gap-1.5 whitespace-nowrap text-white/70 ${shrink ? 'min-w-0' : 'shrink-0'}`}>
      {label}
      <select className={`${shrink ? 'min-w-24' : ''} max-w-56 rounded border border-white/20 bg-night py-1 pl-2 pr-1 text-xs text-white`} {...rest}>
        {children}
      </select>
    </label>
  );
}

export const PALETTE_OPTIONS = PALETTES.map((p) => ({ id: p.id, name: p.name }));
export { DRAWN_LAYERS, LAYER_LABELS, arrayUrl, type DrawnLayer };
