import { CartesianGrid, Legend, ResponsiveContainer, Scatter, ScatterChart, Tooltip, XAxis, YAxis } from 'recharts';
import { formatCountText, superscriptDigits } from '../format.js';
import { INK } from './RunPlots.js';
import { naturalScale, scaleSymbol } from '../../../shared/natural-scale.js';
import { decadeTicks, naturalFit, seriesDimension, type RadiusPoint } from './plotData.js';

const tick = { fontSize: 11, fill: INK.soft };
/** 1000 → "10³": SVG tick text cannot hold <sup>, so the exponent is written in superscript digits. */
export const powerLabel = (v: number) => {
  const e = Math.round(Math.log10(v));
  return Math.abs(10 ** e - v) < 1e-9 * v ? `10${superscriptDigits(e)}` : v.toLocaleString('en-US');
};

/**
 * Radius of the toppled region against n on log-log axes, with the reference line c·n^(1/d) fitted
 * through the points, d the runs' lattice dimension. Runs of different dimensions follow different
 * laws, so they are plotted without a line and the plot says why.
 */
export function SeriesRadiusPlot({ points, dimensions }: { points: RadiusPoint[]; dimensions: readonly number[] }) {
  const dim = seriesDimension(dimensions);
  const c = dim?.kind === 'one' ? naturalFit(points, dim.dimension) : null;
  if (points.length === 0 || !dim || (dim.kind === 'one' && !c)) return <p className="text-sm text-ink-faint">The plot appears once runs of the series have finished.</p>;
  const ns = points.map((p) => p.n);
  const lo = Math.min(...ns) / 2;
  const hi = Math.max(...ns) * 2;
  const reference = c && dim.kind === 'one' ? Array.from({ length: 25 }, (_, i) => lo * (hi / lo) ** (i / 24)).map((n) => ({ n, radius: c * naturalScale(n, dim.dimension) })) : [];
  const rs = [...points.map((p) => p.radius), ...reference.map((p) => p.radius)];
  return (
    <figure aria-label="radius against n" data-testid="plot-series-radius">
      {dim.kind === 'mixed' ? (
        <figcaption className="mb-2 text-sm text-ink-soft" data-testid="series-mixed-dimensions">
          The runs are of {dim.dimensions.map((d) => `${d}-D`).join(' and ')} lattices, whose radii grow like {dim.dimensions.map((d) => scaleSymbol(d)).join(' and ')}: no single law is fitted.
        </figcaption>
      ) : null}
      <div className="h-72">
        <ResponsiveContainer width="100%" height="100%">
          <ScatterChart margin={{ top: 8, right: 16, bottom: 22, left: 12 }}>
            <CartesianGrid stroke={INK.rule} />
            <XAxis dataKey="n" type="number" scale="log" domain={[lo, hi]} ticks={decadeTicks(lo, hi).filter((t) => t >= lo && t <= hi)} tickFormatter={powerLabel} tick={tick} label={{ value: 'n (grains)', position: 'insideBottom', offset: -12, fontSize: 11 }} allowDataOverflow />
            <YAxis dataKey="radius" type="number" scale="log" domain={[Math.min(...rs) / 1.5, Math.max(...rs) * 1.5]} tickFormatter={(v: number) => Number(v.toPrecision(2)).toLocaleString('en-US')} tick={tick} width={52} label={{ value: 'radius (lattice spacings)', angle: -90, position: 'insideLeft', fontSize: 11, dy: 60 }} allowDataOverflow />
            <Tooltip formatter={(v, name) => [name === 'n' ? formatCountText(Number(v)) : Number(v).toFixed(2), name === 'n' ? 'n' : 'radius']} />
            <Legend verticalAlign="top" height={24} wrapperStyle={{ fontSize: 11 }} />
            {c && dim.kind === 'one' ? (
              <Scatter name={`${c.toFixed(3)} · ${scaleSymbol(dim.dimension)}`} data={reference} line={{ stroke: INK.soft, strokeDasharray: '4 3' }} shape={() => <g />} isAnimationActive={false} legendType="line" />
            ) : null}
            <Scatter name="runs (Euclidean radius)" data={points} fill={INK.stamp} isAnimationActive={false} />
          </ScatterChart>
        </ResponsiveContainer>
      </div>
    </figure>
  );
}
