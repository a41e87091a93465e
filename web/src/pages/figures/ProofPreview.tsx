import { useQueries } from '@tanstack/react-query';
import type { FigureLayout, FigureSpec } from '../../../../shared/print.js';

/**
 * The proof: the page drawn to scale from the same `layoutFigure` the print engine uses, with each
 * panel cut from its run's whole-pile image (the largest whole-image size the deep-zoom pyramid
 * stores), so margins, panel places, labels, scale bars, legend and caption sit where they will print.
 * Cells are shown with nearest-neighbour scaling; the print itself draws every cell exactly.
 */

type Info = { width: number; height: number; sizes?: { width: number; height: number }[] };

const iiifBase = (runId: string, layer: string, palette: string, clear: boolean) =>
  `/api/runs/${encodeURIComponent(runId)}/views/${layer}/${palette}${clear ? '~clear' : ''}/iiif`;

export function ProofPreview({ spec, layout, runShapes }: { spec: FigureSpec; layout: FigureLayout; runShapes: Map<string, readonly number[]> }) {
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
  const { widthPx: W, heightPx: H } = layout.page;
  const text = (pt: number) => (pt / 72) * layout.dpi;
  return (
    <svg viewBox={`0 0 ${W} ${H}`} className="block h-auto w-full rounded-sm bg-white shadow-[0_2px_10px_rgba(0,0,0,0.12)]" role="img" aria-label="proof of the page" data-testid="proof">
      <rect x={layout.content.x} y={layout.content.y} width={layout.content.width} height={layout.content.height} fill="none" stroke="#d9d4c7" strokeDasharray={`${W / 120} ${W / 120}`} strokeWidth={W / 800} />
      {layout.panels.map((pl) => {
        const info = infos[pl.index]?.data ?? null;
        const shape = runShapes.get(pl.runId);
        const arrayW = shape ? shape[shape.length - 1]! : 1;
        const arrayH = shape && shape.length >= 2 ? shape[shape.length - 2]! : 1;
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
              <g>
                <rect x={pl.image.x} y={pl.image.y} width={pl.image.width} height={pl.image.height} fill="#ece8de" />
                <text x={pl.image.x + pl.image.width / 2} y={pl.image.y + pl.image.height / 2} textAnchor="middle" fontSize={text(layout.textPt)} fill="#777">
                  {infos[pl.index]?.isPending ? 'loading…' : 'no proof image for this layer and palette'}
                </text>
              </g>
            )}
            {pl.label && pl.labelAt ? (
              <text x={pl.labelAt.x} y={pl.labelAt.y + text(layout.textPt)} fontSize={text(layout.textPt)} fontWeight={600} fill="#111">
                {pl.label}
              </text>
            ) : null}
            {pl.scaleBar ? (
              <g>
                <rect x={pl.scaleBar.bar.x} y={pl.scaleBar.bar.y} width={pl.scaleBar.bar.width} height={pl.scaleBar.bar.height} fill="#111" />
                <text x={pl.scaleBar.textAt.x} y={pl.scaleBar.textAt.y + text(layout.textPt)} fontSize={text(layout.textPt)} fill="#111">
                  {pl.scaleBar.text}
                </text>
              </g>
            ) : null}
          </g>
        );
      })}
      {layout.legend ? <rect x={layout.legend.x} y={layout.legend.y} width={layout.legend.width} height={layout.legend.height} fill="#f3f0e8" /> : null}
      {layout.legend ? (
        <text x={layout.legend.x + text(4)} y={layout.legend.y + text(layout.textPt) * 1.2} fontSize={text(layout.textPt)} fill="#777">
          colour legend
        </text>
      ) : null}
      {layout.caption ? (
        <foreignObject x={layout.caption.x} y={layout.caption.y} width={layout.caption.width} height={layout.caption.height}>
          <p style={{ margin: 0, fontSize: text(layout.caption.fontPt), lineHeight: 1.25, color: '#222' }}>{layout.caption.text}</p>
        </foreignObject>
      ) : null}
    </svg>
  );
}
