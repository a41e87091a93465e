import { drawnPlaneSize } from '../../../../shared/drawn-plane.js';
import { useEffect, useMemo, useState } from 'react';
import { useQueries } from '@tanstack/react-query';
import { rgbaToHex, type LayerStats } from '../../../../shared/palettes.js';
import { figureTextMarks, WORK_SANS_ASCENT_EM, type Mark, type TextWidth } from '../../../../shared/print-marks.js';
import type { FigureSpec } from '../../../../shared/print-spec.js';
import type { FigureLayout } from '../../../../shared/print-layout.js';
import type { Run } from '../../api/contract.js';
import { keys } from '../../api/queries.js';
import { isZeroBackground } from '../../../../shared/run-spec.js';
import { drawnOf, paletteSegmentOf } from '../../viewer/drawnViews.js';
import { fetchViewLegend, type ArtifactBase } from '../../viewer/runArtifacts.js';
import { proofLegends } from './proofLegend.js';

/**
 * The proof: the page drawn to scale from the same `layoutFigure` the print engine uses, with each
 * panel cut from its run's whole-pile image (the largest whole-image size the deep-zoom pyramid
 * stores), and labels, scale-bar numbers, legend and caption from the same `figureTextMarks` the
 * print draws, measured with the page's Work Sans. Cells are shown with nearest-neighbour scaling;
 * the print itself draws every cell exactly.
 */

type Info = { width: number; height: number; sizes?: { width: number; height: number }[] };

const iiifBase = (runId: string, layer: string, palette: string, clear: boolean) =>
  `/api/runs/${encodeURIComponent(runId)}/views/${layer}/${palette}${clear ? '~clear' : ''}/iiif`;

/** Work Sans widths from the browser's own copy of the font (the one @fontsource bundles for the app). */
function useWorkSansWidths(): TextWidth {
  const [ready, setReady] = useState(() => typeof document === 'undefined' || document.fonts.check('700 12px "Work Sans"'));
  useEffect(() => {
    if (ready) return;
    let live = true;
    // measured before the font arrives, widths would be the fallback font's
    void Promise.all([document.fonts.load('400 12px "Work Sans"'), document.fonts.load('700 12px "Work Sans"')]).then(() => live && setReady(true));
    return () => {
      live = false;
    };
  }, [ready]);
  return useMemo(() => {
    const ctx = document.createElement('canvas').getContext('2d');
    const cache = new Map<string, number>();
    return (face, sizePt, text) => {
      const key = `${face}|${text}`;
      let per100 = cache.get(key);
      if (per100 === undefined) {
        if (!ctx) return text.length * 0.55 * sizePt;
        ctx.font = `${face === 'bold' ? 700 : 400} 100px "Work Sans"`;
        per100 = ctx.measureText(text).width;
        cache.set(key, per100);
      }
      return (per100 / 100) * sizePt;
    };
    // a fresh measurer (and cache) once the font has loaded
  }, [ready]);
}

export function ProofPreview({ spec, layout, runs }: { spec: FigureSpec; layout: FigureLayout; runs: readonly Run[] }) {
  const byId = useMemo(() => new Map(runs.map((r) => [r.id, r] as const)), [runs]);
  const views = spec.panels.map((p) => iiifBase(p.runId, p.layer, p.palette, p.untoppled === 'transparent'));
  const infos = useQueries({
    queries: views.map((base) => ({
      queryKey: ['proof-info', base],
      queryFn: async (): Promise<Info | null> => {
        const res = await fetch(`${base}/info.json`, { credentials: 'same-origin' });
        return res.ok ? ((await res.json()) as Info) : null;
      },
      staleTime: 5 * 60_000,
    })),
  });
  // one stored view per run is enough: every view of a run is drawn from the same statistics
  const runIds = [...new Set(spec.panels.map((p) => p.runId))];
  const stored = useQueries({
    queries: runIds.map((id) => {
      const base: ArtifactBase = { kind: 'run', id };
      const drawn = drawnOf(byId.get(id)?.spec);
      const layer = drawn.layers[0]!;
      const palette = paletteSegmentOf(drawn, layer, drawn.palettes[0]!);
      return { queryKey: keys.legend(base, layer, palette), queryFn: () => fetchViewLegend(base, layer, palette), staleTime: 60_000, enabled: spec.legend };
    }),
  });
  const statsOf = (runId: string): LayerStats | null | undefined => {
    const q = stored[runIds.indexOf(runId)];
    if (!q || q.isPending) return undefined;
    return q.data?.stats ?? null;
  };
  const widthOf = useWorkSansWidths();
  const found = layout.legend ? proofLegends(spec, layout, byId, statsOf) : null;
  const marks = figureTextMarks(layout, found && 'legends' in found ? found.legends : null, widthOf);

  const { widthPx: W, heightPx: H } = layout.page;
  const s = layout.dpi / 72; // page pixels per point
  const legendBox = layout.legend;
  const inLegend = (m: Mark) => legendBox !== null && m.y * s >= legendBox.y - 1 && m.y * s < legendBox.y + legendBox.height;
  return (
    <svg viewBox={`0 0 ${W} ${H}`} className="block h-auto w-full rounded-sm bg-white shadow-[0_2px_10px_rgba(0,0,0,0.12)]" role="img" aria-label="proof of the page" data-testid="proof">
      <rect x={layout.content.x} y={layout.content.y} width={layout.content.width} height={layout.content.height} fill="none" stroke="#d9d4c7" strokeDasharray={`${W / 120} ${W / 120}`} strokeWidth={W / 800} />
      {layout.panels.map((pl) => {
        const info = infos[pl.index]?.data ?? null;
        const shape = byId.get(pl.runId)?.stats?.shape;
        // the pyramid's plane: a line is drawn as its band (shared/drawn-plane.ts)
        const { width: arrayW, height: arrayH } = shape ? drawnPlaneSize(shape) : { width: 1, height: 1 };
        const size = info?.sizes?.length ? info.sizes[info.sizes.length - 1]! : null;
        const sx = size ? size.width / arrayW : 1;
        const sy = size ? size.height / arrayH : 1;
        return (
          <g key={pl.index}>
            {size ? (
              <svg
                x={pl.image.x}
                y={pl.image.y}
                width={pl.image.width}
                height={pl.image.height}
                viewBox={`${pl.window.x * sx} ${pl.window.y * sy} ${pl.window.width * sx} ${pl.window.height * sy}`}
                preserveAspectRatio="none"
              >
                <image href={`${views[pl.index]}/full/${size.width},${size.height}/0/default.png`} width={size.width} height={size.height} style={{ imageRendering: 'pixelated' }} />
              </svg>
            ) : (
              <g data-testid={`proof-placeholder-${pl.index}`}>
                <rect x={pl.image.x} y={pl.image.y} width={pl.image.width} height={pl.image.height} fill="#ece8de" />
                <BoxText box={pl.image} fontSize={layout.textPt * s} centred>
                  {infos[pl.index]?.isPending ? 'loading…' : placeholderText(spec.panels[pl.index]!, byId.get(pl.runId))}
                </BoxText>
              </g>
            )}
            {pl.scaleBar ? <rect x={pl.scaleBar.bar.x} y={pl.scaleBar.bar.y} width={pl.scaleBar.bar.width} height={pl.scaleBar.bar.height} fill="#000" /> : null}
          </g>
        );
      })}
      {legendBox && found && 'missing' in found ? (
        <g data-testid="proof-legend-missing">
          <rect x={legendBox.x} y={legendBox.y} width={legendBox.width} height={legendBox.height} fill="#f3f0e8" />
          <BoxText box={legendBox} fontSize={layout.textPt * s}>
            {found.missing}
          </BoxText>
        </g>
      ) : null}
      <g data-testid="proof-legend">{marks.filter(inLegend).map((m, i) => markElement(m, i, s))}</g>
      <g data-testid="proof-text">{marks.filter((m) => !inLegend(m)).map((m, i) => markElement(m, i, s))}</g>
    </svg>
  );
}

/** Why a panel has no proof image, in words: a layer the run cannot have, one it did not draw, or a palette. */
function placeholderText(panel: FigureSpec['panels'][number], run: Run | undefined): string {
  if (!run) return 'no proof image for this run';
  if (panel.layer === 'difference' && isZeroBackground(run.spec.background)) return 'not available for this run: its background is 0 everywhere, so it has no difference layer';
  if (!(drawnOf(run.spec).layers as readonly string[]).includes(panel.layer)) return `this run drew no ${panel.layer} view, so the proof has no image of it; the print draws it from the arrays`;
  return 'no proof image for this palette; the print draws it from the arrays';
}

/**
 * Words inside a box of the page: SVG text does not wrap, so long messages are laid out as HTML in a
 * foreignObject, wrapped and clipped to the box instead of running across the page.
 */
function BoxText({ box, fontSize, centred = false, children }: { box: { x: number; y: number; width: number; height: number }; fontSize: number; centred?: boolean; children: string }) {
  return (
    <foreignObject x={box.x} y={box.y} width={box.width} height={box.height}>
      <div
        style={{
          boxSizing: 'border-box',
          width: '100%',
          height: '100%',
          overflow: 'hidden',
          padding: fontSize * 0.5,
          display: 'flex',
          alignItems: centred ? 'center' : 'flex-start',
          justifyContent: centred ? 'center' : 'flex-start',
          textAlign: centred ? 'center' : 'left',
          fontFamily: '"Work Sans"',
          fontSize,
          lineHeight: 1.25,
          color: '#777',
          overflowWrap: 'anywhere',
        }}
      >
        {children}
      </div>
    </foreignObject>
  );
}

/** One mark in page pixels, drawn as the PDF draws it (text top = line box top, baseline one ascent below). */
function markElement(m: Mark, key: number, s: number) {
  if (m.kind === 'text') {
    return (
      <text key={key} x={m.x * s} y={(m.y + WORK_SANS_ASCENT_EM * m.sizePt) * s} fontFamily='"Work Sans"' fontWeight={m.face === 'bold' ? 700 : 400} fontSize={m.sizePt * s} fill="#000" style={{ fontKerning: 'normal', whiteSpace: 'pre' }}>
        {m.text}
      </text>
    );
  }
  const rect = { x: m.x * s, y: m.y * s, width: m.width * s, height: m.height * s };
  return m.kind === 'fill' ? <rect key={key} {...rect} fill={rgbaToHex(m.colour)} /> : <rect key={key} {...rect} fill="none" stroke={rgbaToHex(m.colour)} strokeWidth={Math.max(1, m.lineWidthPt * s)} />;
}
