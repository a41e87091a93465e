import { Bar, BarChart, CartesianGrid, Line, LineChart, ResponsiveContainer, Tooltip, XAxis, YAxis } from 'recharts';
import { groupThousands } from '../format.js';
import { heightBars, radialPoints, type RadialProfileLike } from './plotData.js';

/** Chart ink from the paper-and-ink palette of web/src/styles.css. */
export const INK = { press: '#1e4a6e', stamp: '#a3361f', rule: '#ebe5d8', soft: '#5f594f' } as const;
const tick = { fontSize: 11, fill: INK.soft };

/** Count of toppled sites per final height. */
export function HeightBarsPlot({ heightCounts }: { heightCounts: readonly number[] }) {
  return (
    <figure aria-label="toppled sites per height" data-testid="plot-heights">
      <div className="h-56">
        <ResponsiveContainer width="100%" height="100%">
          <BarChart data={heightBars(heightCounts)} margin={{ top: 8, right: 12, bottom: 18, left: 12 }}>
            <CartesianGrid stroke={INK.rule} vertical={false} />
            <XAxis dataKey="height" tick={tick} label={{ value: 'final height (grains)', position: 'insideBottom', offset: -10, fontSize: 11 }} />
            <YAxis tick={tick} tickFormatter={(v: number) => groupThousands(v)} width={64} label={{ value: 'sites', angle: -90, position: 'insideLeft', fontSize: 11 }} />
            <Tooltip formatter={(v) => [`${groupThousands(Number(v))} sites`, 'toppled']} labelFormatter={(h) => `height ${h}`} />
            <Bar dataKey="sites" fill={INK.press} isAnimationActive={false} />
          </BarChart>
        </ResponsiveContainer>
      </div>
    </figure>
  );
}

/** Mean final height of toppled sites against the rescaled distance |x|/√n. */
export function RadialProfilePlot({ profile }: { profile: RadialProfileLike }) {
  const points = radialPoints(profile);
  // round ticks: steps of 0.05 or 0.1 of √n up to the end of the pile
  const end = points.length ? points[points.length - 1]!.r + profile.binWidth / 2 : 1;
  const step = end > 0.6 ? 0.1 : 0.05;
  const ticks = Array.from({ length: Math.ceil(end / step) + 1 }, (_, i) => Math.round(i * step * 100) / 100);
  return (
    <figure aria-label="radial profile" data-testid="plot-radial">
      <div className="h-56">
        <ResponsiveContainer width="100%" height="100%">
          <LineChart data={points} margin={{ top: 8, right: 12, bottom: 18, left: 12 }}>
            <CartesianGrid stroke={INK.rule} />
            <XAxis dataKey="r" type="number" domain={[0, ticks[ticks.length - 1]!]} ticks={ticks} tick={tick} tickFormatter={(v: number) => v.toFixed(2)} label={{ value: '|x| / √n', position: 'insideBottom', offset: -10, fontSize: 11 }} />
            <YAxis tick={tick} width={48} domain={[0, 'auto']} label={{ value: 'mean height', angle: -90, position: 'insideLeft', fontSize: 11 }} />
            <Tooltip formatter={(v) => [Number(v).toFixed(3), 'mean height']} labelFormatter={(r) => `|x|/√n ≈ ${Number(r).toFixed(3)}`} />
            <Line dataKey="meanHeight" stroke={INK.stamp} dot={false} strokeWidth={1.5} isAnimationActive={false} />
          </LineChart>
        </ResponsiveContainer>
      </div>
    </figure>
  );
}
