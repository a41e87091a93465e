import { Link, useParams } from 'react-router';
import { useQueries } from '@tanstack/react-query';
import { useSeries } from '../api/queries.js';
import { isAddressMissing } from '../api/ApiError.js';
import type { Run } from '../api/contract.js';
import { backgroundOfSpec, latticeOfSpec } from '../labels.js';
import { logLogSlope, seriesDimension, type RadiusPoint } from '../plots/plotData.js';
import { naturalScale, scaleSymbol } from '../../../shared/natural-scale.js';
import { latticeShape } from '../../../shared/stability.js';
import { sliceText } from '../../../shared/drawn-plane.js';
import { SeriesRadiusPlot } from '../plots/SeriesRadiusPlot.js';
import { infoJsonUrl } from '../viewer/runArtifacts.js';
import { drawnOf, paletteSegmentOf } from '../viewer/drawnViews.js';
import { NO_PICTURE, runPicture } from '../thumbnails.js';

import { Count, EmptyState, ErrorPanel, PageHeading, ProgressBar, Section, SkeletonBlock, StatusBadge } from '../ui/index.js';

/** Displayed width of the widest pile, in CSS pixels; every other pile is drawn at the same scale in units of n^(1/d). */
const STRIP_WIDTH = 220;

/** The view a series strip shows of a run: its first drawn layer in its first palette (heights in tidewater by default). */
function stripView(r: Run): { layer: string; palette: string } {
  const d = drawnOf(r.spec);
  return { layer: d.layers[0]!, palette: paletteSegmentOf(d, d.layers[0]!, d.palettes[0]!) };
}

/** The lattice dimension of a run: its array's rank once computed, else its lattice's (an unknown preset counts as planar). */
function dimensionOf(r: Run): number {
  if (r.stats) return r.stats.shape.length;
  try {
    return latticeShape(r.spec.lattice).dimension;
  } catch {
    return 2;
  }
}

interface InfoSizes {
  width: number;
  sizes?: { width: number; height: number }[];
}

/**
 * /series/:id — one specification at several n, side by side. Each pile is drawn at D/n^(1/d) screen
 * pixels per lattice spacing for one constant D (d the lattice's dimension: the pile's radius grows
 * like n^(1/d), shared/natural-scale.ts), so piles of every n appear at the same size and their
 * likeness (the scale invariance of the single-source pile) shows; below, the radius against n on
 * log-log axes with an n^(1/d) reference line, none when the runs' dimensions differ.
 */
export function SeriesPage() {
  const { id = '' } = useParams();
  const series = useSeries(id);
  const runs = series.data?.series.runs ?? [];
  const infos = useQueries({
    queries: runs.map((r) => ({
      queryKey: ['artifacts', { kind: 'run', id: r.id }, 'info', stripView(r).layer, stripView(r).palette],
      enabled: r.status === 'finished' && !r.artifactsExpiredAt,
      staleTime: Infinity,
      queryFn: async (): Promise<InfoSizes> => {
        const res = await fetch(infoJsonUrl({ kind: 'run', id: r.id }, stripView(r).layer, stripView(r).palette), { credentials: 'same-origin' });
        if (!res.ok) throw new Error(`info.json: ${res.status}`);
        return (await res.json()) as InfoSizes;
      },
    })),
  });

  if (series.isPending) return <SkeletonBlock lines={8} />;
  if (series.isError) {
    if (isAddressMissing(series.error)) return <EmptyState title="No series at this address" action={<Link to="/runs">Back to runs</Link>}>It may belong to another lab, or the link is mistyped.</EmptyState>;
    return <ErrorPanel error={series.error} />;
  }
  const s = series.data.series;
  const first = s.runs[0];
  // widest pile in units of its own n^(1/d) fixes D
  const widthOverRoot = (r: Run) => (r.stats ? r.stats.shape[r.stats.shape.length - 1]! / naturalScale(Math.max(1, Number(r.stats.grainsIn)), r.stats.shape.length) : 0);
  const maxRel = Math.max(0, ...s.runs.map(widthOverRoot));
  const measured = s.runs.filter((r) => r.stats && r.stats.radiusEuclidean > 0);
  const points: RadiusPoint[] = measured.map((r) => ({ n: Number(r.stats!.grainsIn), radius: r.stats!.radiusEuclidean }));
  const dim = seriesDimension(s.runs.map(dimensionOf));
  const slope = dim?.kind === 'one' ? logLogSlope(points) : null;
  const unit = dim?.kind === 'one' ? scaleSymbol(dim.dimension) : 'n^(1/d)';
  const law = dim?.kind === 'one' ? `the dashed line grows like ${unit}` : `the runs mix ${dim?.dimensions.map((d) => `${d}-D`).join(' and ')} lattices, each growing like its own n^(1/d), so no line is fitted`;

  return (
    <div className="space-y-8">
      <PageHeading
        overline={<Link to="/runs" className="text-ink-faint no-underline hover:text-press">← Runs</Link>}
        title={s.title}
        lede={first ? `${latticeOfSpec(first.spec.lattice)} · ${backgroundOfSpec(first.spec.background)} · ${s.runs.length} grain counts, by ${s.author.name}` : undefined}
      />
      <Section
        title={`Side by side, rescaled by ${unit}`}
        description={`Every pile is drawn at the same number of screen pixels per ${unit} lattice spacings${dim?.kind === 'mixed' ? ' (d each run’s own dimension)' : ''}, so a larger n shows as a finer picture of the same shape.${s.runs.some((r) => dimensionOf(r) === 3) ? ` Each strip shows the ${sliceText(0)}.` : ''}`}
      >
        <div className="flex flex-wrap items-end gap-6 rounded-lg bg-night p-6" data-testid="series-strip">
          {s.runs.map((r, i) => {
            const info = infos[i]?.data;
            const displayed = maxRel > 0 ? (widthOverRoot(r) / maxRel) * STRIP_WIDTH : STRIP_WIDTH;
            const size = info?.sizes?.slice().sort((a, b) => a.width - b.width).find((z) => z.width >= displayed) ?? info?.sizes?.at(-1);
            return (
              <Link key={r.id} to={`/runs/${r.id}`} className="flex flex-col items-center gap-2 text-white/80 no-underline hover:text-white" style={{ width: STRIP_WIDTH }}>
                <div className="flex items-center justify-center" style={{ width: STRIP_WIDTH, height: STRIP_WIDTH }}>
                  {r.status === 'finished' && size ? (
                    <img
                      loading="lazy"
                      alt={`${stripView(r).layer}, n = ${r.spec.chips}`}
                      src={`${infoJsonUrl({ kind: 'run', id: r.id }, stripView(r).layer, stripView(r).palette).replace(/info\.json$/, '')}full/${size.width},${size.height}/0/default.png`}
                      style={{ width: displayed, imageRendering: 'pixelated' }}
                    />
                  ) : r.status === 'finished' ? (
                    // the words the run list's picture box says: removed, not stored, or still on its way
                    <span className="text-xs text-white/50">{runPicture(r).src === null ? runPicture(r).note : infos[i]?.isError ? NO_PICTURE : 'drawing…'}</span>
                  ) : (
                    <div className="w-40">
                      <StatusBadge status={r.status} />
                      {r.status === 'computing' || r.status === 'rendering' ? <ProgressBar compact progress={r.progress} stage={r.stage} startedAt={r.startedAt} /> : null}
                    </div>
                  )}
                </div>
                <span className="text-xs">
                  n = <Count n={r.spec.chips} />
                </span>
              </Link>
            );
          })}
        </div>
      </Section>
      <Section
        title="Radius against n"
        description={slope === null || dim?.kind !== 'one' ? `Log-log axes; ${law}.` : `Log-log axes; ${law}. Fitted slope of the runs: ${slope.toFixed(3)} (1/${dim.dimension} for growth like ${unit}).`}
      >
        <SeriesRadiusPlot points={points} dimensions={s.runs.map(dimensionOf)} />
      </Section>
    </div>
  );
}
