import { Bar, BarChart, CartesianGrid, Line, LineChart, ResponsiveContainer, Tooltip, XAxis, YAxis } from 'recharts';
import { groupThousands } from '../format.js';
import { heightBars, meanHeightTicks, niceTicks, siteCountTicks, radialBinWidth, radialPoints, type RadialProfileLike } from './plotData.js';
import { scaleSymbol } from '../../../shared/natural-scale.js';

/** Chart ink from the paper-and-ink palette of web/src/styles.css. */
export const INK = { press: '#1e4a6e', stamp: '#a3361f', rule: '#ebe5d8', soft: '#5f594f' } as const;
const tick = { fontSize: 11, fill: INK.soft };

/** Count of toppled sites per final height. */
export function HeightBarsPlot({ heightCounts }: { heightCounts: readonly number[] }) {
  const ticks = siteCountTicks(heightCounts);
  return (
    <figure aria-label="toppled sites per height" data-testid="plot-heights">
      <div className="h-56">
        <ResponsiveContainer width="100%" height="100%">
          <BarChart data={heightBars(heightCounts)} margin={{ top: 8, right: 12, bottom: 18, left: 12 }}>
            <CartesianGrid stroke={INK.rule} vertical={false} />
            <XAxis dataKey="height" tick={tick} label={{ value: 'final height (grains)', position: 'insideBottom', offset: -10, fontSize: 11 }} />
            <YAxis tick={tick} domain={[0, ticks[ticks.length - 1]!]} ticks={ticks} tickFormatter={(v: number) => groupThousands(v)} width={64} label={{ value: 'sites', angle: -90, position: 'insideLeft', fontSize: 11 }} />
            <Tooltip formatter={(v) => [`${groupThousands(Number(v))} sites`, 'toppled']} labelFormatter={(h) => `height ${h}`} />
            <Bar dataKey="sites" fill={INK.press} isAnimationActive={false} />
          </BarChart>
        </ResponsiveContainer>
      </div>
    </figure>
  );
}

/** Mean final height of toppled sites against the rescaled distance |x|/n^(1/d), d the lattice's dimension. */
export function RadialProfilePlot({ profile, grains, dimension }: { profile: RadialProfileLike; grains: number; dimension: number }) {
  const points = radialPoints(profile, grains, dimension);
  const unit = `|x|/${scaleSymbol(dimension)}`;
  // evenly spaced round ticks up to the end of the pile (the last bin's outer edge)
  const halfBin = radialBinWidth(profile, grains, dimension) / 2;
  const end = points.length ? points[points.length - 1]!.r + halfBin : 1;
  const { ticks, decimals } = niceTicks(end);
  const heights = meanHeightTicks(points);
  return (
    <figure aria-label="radial profile" data-testid="plot-radial">
      <div className="h-56">
        <ResponsiveContainer width="100%" height="100%">
          <LineChart data={points} margin={{ top: 8, right: 12, bottom: 18, left: 12 }}>
            <CartesianGrid stroke={INK.rule} />
            <XAxis dataKey="r" type="number" domain={[0, ticks[ticks.length - 1]!]} ticks={ticks} tick={tick} tickFormatter={(v: number) => v.toFixed(decimals)} label={{ value: unit, position: 'insideBottom', offset: -10, fontSize: 11 }} />
            <YAxis tick={tick} width={48} domain={[0, heights.ticks[heights.ticks.length - 1]!]} ticks={heights.ticks} tickFormatter={(v: number) => v.toFixed(heights.decimals)} label={{ value: 'mean height', angle: -90, position: 'insideLeft', fontSize: 11 }} />
            <Tooltip formatter={(v) => [Number(v).toFixed(3), 'mean height']} labelFormatter={(r) => `${unit} ≈ ${Number(r).toPrecision(3)}`} />
            <Line dataKey="meanHeight" stroke={INK.stamp} dot={false} strokeWidth={1.5} isAnimationActive={false} />
          </LineChart>
        </ResponsiveContainer>
      </div>
    </figure>
  );
}
